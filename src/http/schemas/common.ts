import { z } from 'zod';
import { unitsOf, type QuantityKind } from '../../core/quantity.js';

/** A formula as text, e.g. "MnO4-", "Fe(OH)3(s)", "SO4^2-". The notation is in the README. */
export const Formula = z.string().min(1).max(120).describe('Chemical formula, e.g. "MnO4-", "Fe2+", "Fe(OH)3(s)", "SO4^2-"');

export const CoupleSchema = z.strictObject({
  from: Formula,
  to: Formula,
});

export const Medium = z.enum(['acid', 'base']);
/** Which form of a couple a site value of E° is for. */
export const SiteValueMedium = Medium.optional().describe(
  'The form of the couple the value is for: acid (default; written with H+, or with neither H+ nor OH-) or base (written with OH-). It is carried to the form the pH calls for through the ionisation of water.',
);

export const PH = z.number().min(0).max(14).describe('pH (0–14)');
/** Liquid water at about 1 atm. */
export const TemperatureC = z.number().min(0).max(100).describe('Temperature in °C (0–100, liquid water)');

/** {value, unit} with the closed unit list of one quantity kind. */
export function quantity(kind: QuantityKind, opts: { min?: number; exclusiveMin?: number; description?: string } = {}) {
  let value = z.number();
  if (opts.exclusiveMin !== undefined) value = value.gt(opts.exclusiveMin);
  if (opts.min !== undefined) value = value.min(opts.min);
  const units = unitsOf(kind) as [string, ...string[]];
  const s = z.strictObject({ value, unit: z.enum(units) });
  return opts.description ? s.describe(opts.description) : s;
}

export const QuantityOut = z.object({ value: z.number(), unit: z.string() });

export const SourceRef = z.object({
  id: z.string(),
  citation: z.string().optional(),
});
