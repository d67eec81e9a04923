/**
 * Contact time: the time each reaction needs against the time available (given, or the contact
 * volume ÷ flow). Iron(II) by oxygen from the Stumm & Lee (1961) rate law at the water's pH,
 * temperature and dissolved oxygen (src/water/kinetics.ts); other pairs from the typical ranges
 * of tables/kinetics-typical.json, marked "typical range from the literature".
 */
import type { Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import type { KineticsRow } from '../reference/kinetics-schema.js';
import type { ContaminantRow, OxidantRow } from '../reference/dosing-schemas.js';
import { contactTimeCheck, ironOxygenation, type ContactTimeStatus } from '../water/kinetics.js';
import type { PhysicalConstants } from '../water/constants.js';
import type { Flag } from './types.js';

export interface ContactEntry {
  readonly contaminant: string;
  readonly basis: 'rate-law' | 'typical range from the literature' | 'no data';
  readonly requiredMinutes: number | null;
  readonly requiredRange: { readonly minMinutes: number; readonly maxMinutes: number | null } | null;
  readonly availableMinutes: number | null;
  /** ok | marginal | too-slow | unknown (no data or no contact time) | outside-range (pH outside the rows' range). */
  readonly status: ContactTimeStatus | 'unknown' | 'outside-range';
  readonly tooSlow: boolean;
  readonly remedy: string | null;
  readonly message: string;
  readonly kineticsRow: string | null;
  readonly source: string | null;
  readonly detail: Readonly<Record<string, unknown>> | null;
}

export interface ContactResult {
  readonly availableMinutes: number | null;
  readonly availableFrom: 'given' | 'contact volume ÷ flow' | 'not given';
  readonly entries: readonly ContactEntry[];
}

export interface ContactDeps {
  readonly kinetics: readonly KineticsRow[];
  readonly constants: PhysicalConstants;
  readonly kwAt: (temperatureC: number) => number;
  readonly o2HenryAt: (temperatureC: number) => number;
  readonly o2MolarMass: number;
  /** DO at saturation in air at T, mg/L (tables/oxygen-saturation.json). */
  readonly o2SaturationAt: (temperatureC: number) => number;
}

export interface ContactInput {
  readonly oxidant: OxidantRow;
  readonly contaminants: readonly { readonly row: ContaminantRow; readonly mgPerL: DecT; readonly targetMgPerL: number | null; readonly targetSource: string | null }[];
  readonly pH: number;
  readonly temperatureC: number;
  readonly availableMinutes: number | null;
  readonly availableFrom: ContactResult['availableFrom'];
  /** Dissolved oxygen of the sample, mg/L, when measured. */
  readonly dissolvedOxygenMgPerL?: number | undefined;
  /** Where dissolvedOxygenMgPerL comes from, when not the sample as measured. */
  readonly dissolvedOxygenFrom?: string | undefined;
}

const num = (s: string | null): number | null => (s === null ? null : Number(s));

function inRange(row: KineticsRow, pH: number): boolean {
  const lo = num(row.pHMin);
  const hi = num(row.pHMax);
  return (lo === null || pH >= lo) && (hi === null || pH <= hi);
}

export function checkContact(input: ContactInput, deps: ContactDeps, flags: Flag[]): ContactResult {
  const entries: ContactEntry[] = [];
  for (const c of input.contaminants) {
    const rows = deps.kinetics.filter((r) => r.contaminant === c.row.id && r.products.includes(input.oxidant.id));
    const row = rows.find((r) => inRange(r, input.pH));
    if (!row) {
      if (rows.length > 0) {
        const r0 = rows[0]!;
        const lo = num(r0.pHMin);
        const below = lo !== null && input.pH < lo;
        const range = `pH ${r0.pHMin ?? '0'} to ${r0.pHMax ?? '14'}`;
        const message = below
          ? `At pH ${input.pH} the reaction is below the pH range (${range}) of the typical times in the literature and is likely slow. ${r0.remedy}`
          : `At pH ${input.pH} the reaction is outside the pH range (${range}) of the tabled typical times; no time is given. Confirm with a jar test.`;
        entries.push({ contaminant: c.row.id, basis: 'typical range from the literature', requiredMinutes: null, requiredRange: null, availableMinutes: input.availableMinutes, status: 'outside-range', tooSlow: below, remedy: below ? r0.remedy : null, message, kineticsRow: r0.id, source: r0.source, detail: null });
        flags.push({ code: below ? 'CONTACT_PH_TOO_LOW' : 'CONTACT_PH_OUTSIDE_RANGE', severity: below ? 'warning' : 'info', message: `${c.row.name} with ${input.oxidant.name}: ${message}`, source: r0.source });
      } else {
        entries.push({ contaminant: c.row.id, basis: 'no data', requiredMinutes: null, requiredRange: null, availableMinutes: input.availableMinutes, status: 'unknown', tooSlow: false, remedy: null, message: `No reaction time is tabled for ${input.oxidant.name} with ${lowerName(c.row.name)}; confirm with a jar test.`, kineticsRow: null, source: null, detail: null });
      }
      continue;
    }
    let requiredMinutes: number | null = null;
    let requiredRange: ContactEntry['requiredRange'] = null;
    let detail: Record<string, unknown> | null = null;
    let basis: ContactEntry['basis'];
    if (row.kind === 'rate-law') {
      basis = 'rate-law';
      const measured = input.dissolvedOxygenMgPerL;
      const doMgPerL = measured ?? deps.o2SaturationAt(input.temperatureC);
      const target = c.targetMgPerL ?? 0.3;
      const r = ironOxygenation({
        pH: input.pH,
        temperatureC: input.temperatureC,
        kw: deps.kwAt(input.temperatureC),
        rateConstant: {
          value: Number(row.rateConstant),
          temperatureC: Number(row.temperatureC),
          source: row.source,
          ...(row.activationEnergyKJPerMol !== null ? { activationEnergy: { kJPerMol: Number(row.activationEnergyKJPerMol), source: row.source } } : {}),
        },
        oxygen: { dissolvedO2MgPerL: doMgPerL, henryMolPerLAtm: deps.o2HenryAt(input.temperatureC), o2MolarMassGPerMol: deps.o2MolarMass },
        initialFe: c.mgPerL.toNumber(),
        targetFe: target,
        constants: deps.constants,
      });
      requiredMinutes = r.timeToTargetMin;
      detail = {
        law: row.law,
        rateConstant: r.rateConstantAtT,
        pseudoFirstOrderPerMin: r.pseudoFirstOrderPerMin,
        halfLifeMin: r.halfLifeMin,
        pO2Atm: r.pO2Atm,
        dissolvedOxygenMgPerL: doMgPerL,
        dissolvedOxygenFrom: measured !== undefined ? (input.dissolvedOxygenFrom ?? 'sample') : 'saturation in air at the water temperature (tables/oxygen-saturation.json)',
        targetMgPerL: target,
        targetFrom: c.targetSource ?? 'default 0.3 mg/L',
        notes: r.notes,
      };
    } else {
      basis = 'typical range from the literature';
      requiredRange = { minMinutes: Number(row.minMinutes), maxMinutes: num(row.maxMinutes) };
    }
    if (input.availableMinutes === null) {
      entries.push({
        contaminant: c.row.id, basis, requiredMinutes, requiredRange, availableMinutes: null, status: 'unknown', tooSlow: false, remedy: row.remedy,
        message: 'No contact time was given (give contactTime, or contactVolume with the flow); the time needed is shown.',
        kineticsRow: row.id, source: row.source, detail,
      });
      continue;
    }
    const chk = contactTimeCheck({
      ...(requiredMinutes !== null ? { requiredMinutes } : {}),
      ...(requiredRange !== null ? { requiredRange } : {}),
      availableMinutes: input.availableMinutes,
      remedy: row.remedy,
    });
    const tooSlow = chk.status === 'too-slow';
    entries.push({ contaminant: c.row.id, basis, requiredMinutes, requiredRange, availableMinutes: input.availableMinutes, status: chk.status, tooSlow, remedy: chk.remedy, message: chk.message, kineticsRow: row.id, source: row.source, detail });
    if (tooSlow) {
      flags.push({ code: 'CONTACT_TOO_SHORT', severity: 'warning', message: `${c.row.name} with ${input.oxidant.name}: ${chk.message}`, source: row.source });
    } else if (chk.status === 'marginal') {
      flags.push({ code: 'CONTACT_MARGINAL', severity: 'info', message: `${c.row.name} with ${input.oxidant.name} (typical range from the literature): ${chk.message}`, source: row.source });
    }
  }
  return { availableMinutes: input.availableMinutes, availableFrom: input.availableFrom, entries };
}
