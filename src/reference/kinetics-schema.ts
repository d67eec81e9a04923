/**
 * zod row schema of tables/kinetics-typical.json: how long an oxidant takes to react with a
 * contaminant. Two kinds of row:
 *   'typical'  — a reaction-time range from the literature or common practice, used where no
 *                rate law is (minMinutes–maxMinutes; maxMinutes null when no upper bound is known);
 *   'rate-law' — a published rate law with its rate constant (iron(II) by oxygen, Stumm & Lee 1961),
 *                evaluated by src/water/kinetics.ts.
 * `oxidant` names the active chemistry ("free-chlorine", "permanganate"); `products` lists the
 * oxidant product ids of tables/oxidants.json it covers; `contaminant` is an id of
 * tables/contaminants.json. Values are published text; every row names its source.
 */
import { z } from 'zod';

const DecimalText = z.string().regex(/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/, { error: 'must be a decimal number written as text, e.g. "0.5"' });
const Id = z.string().regex(/^[a-z0-9]+(-[a-z0-9]+)*$/, { error: 'must be lower-case words joined by "-"' });

const common = {
  id: Id,
  oxidant: Id,
  products: z.array(Id).min(1),
  contaminant: Id,
  /** pH range the row applies to (null: open end). */
  pHMin: DecimalText.nullable(),
  pHMax: DecimalText.nullable(),
  conditions: z.string().min(1),
  /** What the trade does when the reaction is too slow for the contact time available. */
  remedy: z.string().min(1),
  source: z.string().min(1),
  note: z.string().min(1),
};

export const KineticsTypicalRowSchema = z
  .strictObject({
    kind: z.literal('typical'),
    ...common,
    minMinutes: DecimalText,
    maxMinutes: DecimalText.nullable(),
  })
  .superRefine((row, ctx) => {
    if (row.maxMinutes !== null && Number(row.maxMinutes) < Number(row.minMinutes)) {
      ctx.addIssue({ code: 'custom', path: ['maxMinutes'], message: 'maxMinutes must not be below minMinutes' });
    }
    if (row.pHMin !== null && row.pHMax !== null && Number(row.pHMax) < Number(row.pHMin)) {
      ctx.addIssue({ code: 'custom', path: ['pHMax'], message: 'pHMax must not be below pHMin' });
    }
  });

export const KineticsRateLawRowSchema = z.strictObject({
  kind: z.literal('rate-law'),
  ...common,
  /** The rate law as text. */
  law: z.string().min(1),
  rateConstant: DecimalText,
  rateConstantUncertainty: DecimalText.nullable(),
  rateConstantUnit: z.string().min(1),
  temperatureC: DecimalText,
  /** Activation energy of k at constant [OH-], kJ/mol, with its source; null when none is used. */
  activationEnergyKJPerMol: DecimalText.nullable(),
});

export const KineticsRowSchema = z.union([KineticsTypicalRowSchema, KineticsRateLawRowSchema]);
export type KineticsTypicalRow = z.infer<typeof KineticsTypicalRowSchema>;
export type KineticsRateLawRow = z.infer<typeof KineticsRateLawRowSchema>;
export type KineticsRow = z.infer<typeof KineticsRowSchema>;
