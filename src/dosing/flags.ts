/**
 * Flags about the water and the targets: raw-water readings against limits (which limit, its
 * source, and that local regulations govern), residual targets against the maximum residual
 * disinfectant levels, and legal-but-unusual inputs for drinking water.
 */
import type { Dec as DecT } from '../core/decimal.js';
import type { LimitRow, OxidantRow } from '../reference/dosing-schemas.js';
import type { Flag, Severity } from './types.js';
import { roundSigNumber } from './round.js';
import { readingBound, readingFlags } from './bounds.js';

/** Iron above which a drinking-water source is unusual (common practice; the band of every reading is in bounds.ts). */
export const IRON_UNUSUAL_MG_PER_L = readingBound('iron').warnAbove;
/** pH below which a drinking-water source is unusual (common practice). */
export const PH_UNUSUAL_LOW = 5;
/** pH above which a drinking-water source is unusual (common practice). */
export const PH_UNUSUAL_HIGH = 10;

const GOVERN = 'Local regulations, permits and licensed operator practice govern.';

const SEVERITY_ORDER: Record<Severity, number> = { danger: 0, warning: 1, info: 2 };

/** Danger first, then warning, then info; stable within a severity; the same flag twice is kept once. */
export function sortFlags(flags: readonly Flag[]): Flag[] {
  const seen = new Set<string>();
  return flags
    .filter((f) => {
      const k = `${f.code}|${f.message}`;
      if (seen.has(k)) return false;
      seen.add(k);
      return true;
    })
    .map((f, i) => ({ f, i }))
    .sort((a, b) => SEVERITY_ORDER[a.f.severity] - SEVERITY_ORDER[b.f.severity] || a.i - b.i)
    .map((x) => x.f);
}

function limitText(l: LimitRow): string {
  return `${l.authority} ${l.kind === 'guideline' ? 'guideline value' : l.kind} ${l.valueText} mg/L ${l.basis} (${l.citation}${l.edition && !l.citation.includes(l.edition) ? `, ${l.edition}` : ''})`;
}

/** Unusual but legal readings: a warning, not an error (readings above their refusal bound never get here: checkDoseRequest refuses them). */
export function inputFlags(input: { readonly pH: number; readonly sample: Parameters<typeof readingFlags>[0]; readonly temperatureC: number }): Flag[] {
  const flags: Flag[] = readingFlags(input.sample);
  if (input.pH < PH_UNUSUAL_LOW) {
    flags.push({
      code: 'PH_UNUSUALLY_LOW',
      severity: 'warning',
      message: `pH ${input.pH} is below ${PH_UNUSUAL_LOW}, unusual for drinking water (common practice): check the reading; iron and manganese oxidation are slow at low pH.`,
      source: 'operator-practice',
    });
  } else if (input.pH > PH_UNUSUAL_HIGH) {
    flags.push({
      code: 'PH_UNUSUALLY_HIGH',
      severity: 'warning',
      message: `pH ${input.pH} is above ${PH_UNUSUAL_HIGH}, unusual for drinking water outside lime softening (common practice): check the reading.`,
      source: 'operator-practice',
    });
  }
  return flags;
}

/** Raw-water readings against the finished-water limits they will have to meet. */
export function rawWaterFlags(input: {
  readonly readings: readonly { readonly parameter: string; readonly name: string; readonly mgPerL: DecT; readonly basis?: string }[];
  readonly limits: readonly LimitRow[];
  /**
   * A limit's value in the reading's basis (mg/L), for a limit published on another basis (WHO's nitrite
   * "as NO2-" against a reading "as N"); null when it cannot be converted (the limit is then not used).
   */
  readonly inBasis?: (limit: LimitRow, readingBasis: string) => number | null;
}): Flag[] {
  const flags: Flag[] = [];
  for (const r of input.readings) {
    const v = r.mgPerL.toNumber();
    const valued = input.limits
      .filter((l) => l.parameter === r.parameter)
      .map((l) => {
        if (r.basis === undefined || l.basis === r.basis) return { l, value: Number(l.valueText), converted: false };
        const value = input.inBasis?.(l, r.basis) ?? null;
        return value === null ? null : { l, value, converted: true };
      })
      .filter((x): x is { l: LimitRow; value: number; converted: boolean } => x !== null);
    const over = valued.filter((x) => v > x.value);
    if (over.length === 0) continue;
    const what =
      r.parameter === 'arsenic'
        ? 'Oxidation turns arsenite into arsenate but removes no arsenic: a removal step (coagulation, adsorption) must follow to meet the limit in the finished water.'
        : r.parameter === 'nitrite'
          ? 'Oxidation (chlorine, ozone, permanganate) turns nitrite into nitrate, which has its own limit (10 mg/L as N, 40 CFR 141.62(b)): measure nitrite and nitrate in the finished water.'
          : 'Oxidation and solids removal (settling, filtration) must bring it below the limit in the finished water.';
    const text = (x: { l: LimitRow; value: number; converted: boolean }) =>
      x.converted ? limitText(x.l).replace(`${x.l.valueText} mg/L ${x.l.basis}`, `${x.l.valueText} mg/L ${x.l.basis} (${roundSigNumber(x.value)} mg/L ${r.basis})`) : limitText(x.l);
    flags.push({
      code: `RAW_${r.parameter.toUpperCase()}_ABOVE_LIMIT`,
      severity: r.parameter === 'arsenic' || r.parameter === 'nitrite' ? 'warning' : 'info',
      message: `Raw ${r.name} ${roundSigNumber(v)} mg/L${r.basis ? ` ${r.basis}` : ''} is above ${over.map(text).join(' and ')}. ${what} ${GOVERN}`,
      source: over[0]!.l.source,
    });
  }
  return flags;
}

/** The target residual against the maximum residual levels for this oxidant. */
export function residualFlags(input: { readonly oxidant: OxidantRow; readonly residualMgPerL: DecT; readonly limits: readonly LimitRow[] }): Flag[] {
  const flags: Flag[] = [];
  const ox = input.oxidant;
  const parameter = ox.doseBasis === 'Cl2' ? 'chlorine' : ox.doseBasis === 'ClO2' ? 'chlorine-dioxide' : null;
  if (parameter === null) return flags;
  for (const l of input.limits.filter((x) => x.parameter === parameter)) {
    if (input.residualMgPerL.toNumber() > Number(l.valueText)) {
      flags.push({
        code: l.kind === 'MRDL' ? 'RESIDUAL_ABOVE_MRDL' : 'RESIDUAL_ABOVE_GUIDELINE',
        severity: l.kind === 'MRDL' ? 'danger' : 'warning',
        message: `The target residual ${input.residualMgPerL.toString()} mg/L ${l.basis} is above the ${limitText(l)}. Lower the target. ${GOVERN}`,
        source: l.source,
      });
    }
  }
  return flags;
}

export { GOVERN as LOCAL_RULES_GOVERN };
