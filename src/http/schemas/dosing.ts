import { z } from 'zod';
import { DoseRequestSchema, DoseResultSchema, PlantProfileSchema } from '../../dosing/index.js';

export const DoseBody = DoseRequestSchema;
export const DoseResponse = DoseResultSchema;
export const PlantBody = PlantProfileSchema;

export const PlantSummary = z.object({
  id: z.string(),
  name: z.string(),
  invented: z.boolean(),
  version: z.number().int(),
  savedAt: z.string(),
  sha256: z.string(),
  altered: z.boolean().describe('The stored profile no longer hashes to sha256 (changed in the archive file): it is not served or used; GET /api/v1/plants/:id answers 409'),
});

export const PlantOut = z.object({
  id: z.string(),
  version: z.number().int(),
  savedAt: z.string(),
  savedBy: z.string().nullable(),
  sha256: z.string(),
  profile: PlantProfileSchema,
  warnings: z
    .array(z.object({ code: z.string(), message: z.string(), pointer: z.string() }))
    .optional()
    .describe('When a profile is stored: what its doses will warn about (a product density unlike the table or below water)'),
});

export const OxidantOut = z.looseObject({
  id: z.string(),
  name: z.string(),
  source: z.string(),
});
