/**
 * Daily dose from lab readings. `buildDosingContext` prepares, once, everything that does not
 * change between requests (tables indexed, every oxidant × contaminant × product × medium
 * reaction balanced and its ratio derived, product conversion factors, equilibrium constants,
 * memos for potentials and cells); `computeDose` turns a request into the dose, its terms, the
 * feed, feasibility, contact check, side effects, flags and cautions, with the source of every
 * number. Pure: tables come in as arguments, nothing is read from disk.
 */
import { Dec, ROUNDING_RULE, type Dec as DecT } from '../core/decimal.js';
import { lowerName } from '../core/text.js';
import { DomainError } from '../core/errors.js';
import { toBaseDec, temperatureToC, cToF, UNIT_FACTORS } from '../core/quantity.js';
import { molarMass, parseEquation, parseFormula, speciesKey } from '../chemistry/formula/index.js';
import { mediumForPH, type Medium } from '../chemistry/balance/index.js';
import { buildLedger, type Ledger } from '../chemistry/thermo/ledger.js';
import type { PotentialResult } from '../chemistry/thermo/derive.js';
import type { ReferenceTables, SourceRow } from '../reference/schemas.js';
import type { CautionRow, ContaminantRow, LimitRow, OxidantRow } from '../reference/dosing-schemas.js';
import type { KineticsRow } from '../reference/kinetics-schema.js';
import { equilibriumSpecFromRow, log10KAt, type EquilibriumSpec } from '../water/speciation.js';
import type { PhysicalConstants } from '../water/constants.js';
import { daviesA, IONIC_STRENGTH_FROM_TDS } from '../water/activity.js';
import { caco3EquivalentWeightMgPerMeq, type AcidAdditionResult, type CarbonateConstants } from '../water/carbonate.js';
import { conversionFactor, productPerBasis, species, stoichiometricRatio, type RatioResult } from './ratio.js';
import { backgroundDemand, contaminantDemands, mgPerL, type DemandEntry, type DemandWork } from './demand.js';
import { roundSigNumber } from './round.js';
import { totalDose, type DoseTerm } from './dose.js';
import { computeFeed, type FeedConversion, type FeedResult } from './feed.js';
import { checkPotentialOverrides, evaluateFeasibility, unusedPotentialOverrides, type FeasibilityDeps, type FeasibilityEntry } from './feasibility.js';
import { checkContact, type ContactDeps, type ContactResult } from './contact.js';
import { sideEffects, type SideEffects } from './side-effects.js';
import { inputFlags, rawWaterFlags, residualFlags, sortFlags, LOCAL_RULES_GOVERN } from './flags.js';
import { mergePlantIntoRequest, type PlantMergeOxidant, type PlantProfile, type PlantResidual } from './plant.js';
import { checkDoseRequest, type DoseRequest } from './request.js';
import { checkStrengthLimits, defaultStrengthLimits, oxidantFedAsGas, strengthLimitFlags, type StrengthLimit } from './strength-limits.js';
import { REPORT_SIG_FIGS, reported, type Flag, type Reported } from './types.js';
import { demandResidualFlags } from './bounds.js';

export type { DoseRequest } from './request.js';
export { DoseRequestSchema, parseDoseRequest, checkDoseRequest, OXIDANT_IDS, CONTAMINANT_FIELDS } from './request.js';
export { PlantProfileSchema, parsePlantProfile, mergePlantIntoRequest, plantProfileWarnings, plantResidualFor, type PlantProfile } from './plant.js';
export type { Flag, Reported, Severity } from './types.js';
export { stoichiometricRatio, type RatioResult } from './ratio.js';
export { computeFeed, type FeedResult } from './feed.js';
export { DoseResultSchema } from './response.js';
export { defaultStrengthLimits, strengthLimitProblem, type StrengthLimit } from './strength-limits.js';

/**
 * What the process does with two demands that a ratio alone misrepresents:
 * - ammonia with free chlorine: chloramines form first, and only past breakpoint is there free
 *   chlorine (for manganese, and for a free residual); the theoretical ratio is the minimum;
 * - sulfide with oxygen: the uncatalysed oxidation is slow, and aeration removes hydrogen sulfide
 *   mainly by stripping, which takes only the un-ionised H2S (its share from the H2S pKa at T).
 */
function processFlags(demands: readonly DemandWork[], ox: OxidantRow, pH: number, temperatureC: number, context: DosingContext): Flag[] {
  const flags: Flag[] = [];
  const find = (id: string) => demands.find((d) => d.entry.contaminant === id);
  const ammonia = find('ammonia');
  if (ammonia && ox.doseBasis === 'Cl2') {
    const ct = context.contaminants.find((c) => c.id === 'ammonia');
    const practical = ct?.ratioOptions?.practical;
    const ratio = ammonia.entry.ratioKind === 'practical'
      ? `the practical ${ammonia.entry.ratioRounded} mg Cl2 per mg N counted here is common practice`
      : `the ${ammonia.entry.ratioRounded} mg Cl2 per mg N counted here is the stoichiometric minimum; ${practical ? `plants usually need ${practical.rangeText} (common practice; options.ammoniaRatio: "practical")` : 'plants usually need more (common practice)'}`;
    flags.push({
      code: 'BREAKPOINT_CHLORAMINES',
      severity: 'warning',
      message:
        `Ammonia-N ${ammonia.entry.concentration.rounded} mg/L: chlorine first forms chloramines (combined chlorine), and a free residual appears only past breakpoint; ${ratio}. ` +
        `A residual read before breakpoint is combined chlorine, and manganese is oxidised by free chlorine only once breakpoint is passed${find('manganese') ? ' (this sample has manganese)' : ''}. Confirm the dose with a breakpoint curve on the plant's water.`,
      source: practical?.source ?? ammonia.entry.source,
    });
  }
  const sulfide = find('sulfide');
  if (sulfide && ox.id === 'oxygen') {
    // the H2S/HS- equilibrium the sulfide row names (its id is checked against the tables at load)
    const eq = sulfide.contaminantRow.speciation?.equilibrium;
    let share = '';
    if (eq !== undefined) {
      const pKa = context.pKaAt(eq, temperatureC);
      share = `; at pH ${pH} and ${temperatureC} °C about ${roundSigNumber(100 / (1 + Math.pow(10, pH - pKa)), 2)} % of the sulfide is H2S (pKa ${pKa.toFixed(2)}, ${eq}), the rest HS-, which does not strip`;
    }
    flags.push({
      code: 'AERATION_SULFIDE_SLOW',
      severity: 'warning',
      message:
        `Oxygen oxidises sulfide slowly without a catalyst (hours to days; chen-morris-1972, from memory), so the ${sulfide.entry.demand.rounded} mg/L O2 shown is stoichiometric, not what aeration achieves in the contact time. ` +
        `Aeration removes hydrogen sulfide mainly by stripping, which takes only the un-ionised H2S${share}. Lower the pH before stripping, or use a stronger oxidant, and confirm removal with a test.`,
      source: 'chen-morris-1972',
    });
  }
  return flags;
}

/** The tables computeDose needs (the loaded reference tables satisfy this). */
export type DosingTables = Pick<
  ReferenceTables,
  'oxidants' | 'contaminants' | 'limits' | 'cautions' | 'oxygenSaturation' | 'kineticsTypical' | 'sources' | 'atomicWeights' | 'constants' | 'equilibria' | 'potentials'
> &
  Partial<Pick<ReferenceTables, 'strengthLimits'>>;

export interface DosingDeps {
  /** The thermodynamic ledger (src/chemistry/thermo/ledger.ts); built from the tables when omitted. */
  readonly ledger?: Ledger;
  /** Equilibria rows the context uses, by role (defaults: the ids of tables/equilibria.json). */
  readonly equilibriumIds?: Partial<Record<'kw' | 'k1' | 'k2' | 'o2Henry', string>>;
  /** Entries kept in the cell memo (feasibility at the same inputs); default 512. */
  readonly cellMemoSize?: number;
  /**
   * Entries kept in the result memo: computeDose is a pure function of (request, plant) for a
   * given context, so an identical request is answered from the memo (the same frozen object).
   * Default 256; 0 turns it off.
   */
  readonly resultMemoSize?: number;
}

export interface DosingContext {
  readonly oxidants: ReadonlyMap<string, OxidantRow>;
  /** The product strength limits of the loaded tables (tables/strength-limits.json of the tables folder). */
  readonly strengthLimits: readonly StrengthLimit[];
  readonly contaminants: readonly ContaminantRow[];
  readonly limits: readonly LimitRow[];
  readonly cautions: ReadonlyMap<string, CautionRow>;
  readonly sources: ReadonlyMap<string, SourceRow>;
  readonly atomicWeights: ReadonlyMap<string, string>;
  readonly atomicWeightSource: string;
  readonly constants: PhysicalConstants;
  readonly ledger: Ledger;
  /** Derived once: `${oxidant}|${contaminant}|${product}|${medium}` → ratio (or the error balancing gave). */
  readonly ratios: ReadonlyMap<string, RatioResult | DomainError>;
  readonly conversions: ReadonlyMap<string, FeedConversion>;
  readonly feasibilityDeps: FeasibilityDeps;
  readonly contactDeps: ContactDeps;
  /** Internal helpers, precomputed per oxidant. */
  readonly perOxidant: ReadonlyMap<string, { basisMolarMass: DecT; activePerBasis: number; hydrolysisH: number; solidReduced: { formula: string; mol: number } | null }>;
  readonly caco3MgPerMeq: number;
  readonly molarMassOf: (formula: string) => DecT;
  readonly carbonateConstantsAt: (temperatureC: number) => CarbonateConstants;
  readonly pKaAt: (equilibriumId: string, temperatureC: number) => number;
  readonly o2SaturationAt: (temperatureC: number) => number;
  /** The warmest temperature of tables/oxygen-saturation.json's points (°C); above it the saturation comes from Henry's law less the water vapour pressure (an extrapolation, flagged TEMPERATURE_BEYOND_CORRELATION). */
  readonly o2SaturationTableMaxC: number;
  /**
   * For Kw and the given equilibria at this temperature: a note for each whose temperature expression
   * is fitted for a narrower range (an extrapolation), e.g. Harned & Owen's Kw above 60 °C.
   */
  readonly temperatureRangeNotes: (equilibriumIds: readonly string[], temperatureC: number, usesOxygen: boolean) => readonly { readonly text: string; readonly source: string }[];
  /** Source id → full citation text. */
  readonly citations: ReadonlyMap<string, string>;
  /** Per oxidant: caution texts and rows (its own, the standing note, its storage note). */
  readonly cautionsByOxidant: ReadonlyMap<string, { readonly texts: readonly string[]; readonly details: DoseResult['cautionDetails'] }>;
  /** Per oxidant: its dose basis and whether it is fed as a gas, for merging a plant profile. */
  readonly plantMergeOxidants: ReadonlyMap<string, PlantMergeOxidant>;
  readonly carbonateMemo: Map<string, AcidAdditionResult>;
  readonly resultMemo: Map<string, DoseResult>;
  readonly resultMemoSize: number;
}

const ratioKey = (o: string, c: string, p: string, m: Medium): string => `${o}|${c}|${p}|${m}`;
const MGD_M3 = Number(UNIT_FACTORS.flow.MGD);
const GPM_M3_PER_D = Number(UNIT_FACTORS.flow.gpm);

function constantsFrom(tables: Pick<ReferenceTables, 'constants'>): PhysicalConstants {
  const get = (id: string) => {
    const row = tables.constants.find((r) => r.id === id);
    if (!row) throw new DomainError('TABLE_ROW_NOT_FOUND', { detail: `tables/constants.json has no row "${id}"; add it with its source.`, params: { table: 'constants', id } });
    return { value: Number(row.value), source: row.source };
  };
  return { gasConstant: get('R'), faraday: get('F'), zeroCelsiusK: get('T0') };
}

/** Small bounded memo of a function of the temperature. */
function memoT<T>(f: (t: number) => T, limit = 256): (t: number) => T {
  const m = new Map<number, T>();
  return (t: number) => {
    let v = m.get(t);
    if (v === undefined) {
      v = f(t);
      if (m.size >= limit) m.delete(m.keys().next().value as number);
      m.set(t, v);
    }
    return v;
  };
}

/** Build once from the tables; reuse for every request. */
export function buildDosingContext(tables: DosingTables, deps: DosingDeps = {}): DosingContext {
  const atomicWeights = new Map(tables.atomicWeights.map((r) => [r.symbol, r.atomicWeight]));
  const atomicWeightSource = tables.atomicWeights[0]?.source ?? 'atomic-weights';
  const constants = constantsFrom(tables);
  const ledger = deps.ledger ?? buildLedger(tables);
  const oxidants = new Map(tables.oxidants.map((o) => [o.id, o]));
  // the strongest solution of each product (tables/strength-limits.json) against the tables it cites
  const strengthLimits = tables.strengthLimits ?? defaultStrengthLimits();
  const limitProblems = checkStrengthLimits({ oxidants: tables.oxidants, sourceIds: new Set(tables.sources.map((s) => s.id)), limits: strengthLimits });
  if (limitProblems.length > 0) {
    throw new DomainError('TABLE_INVALID', {
      detail: `The product strength limits disagree with the tables: ${limitProblems.join('; ')}. Fix tables/strength-limits.json or the other table's row, with its source.`,
      params: { file: 'tables/strength-limits.json', problems: limitProblems },
    });
  }
  const molarMemo = new Map<string, DecT>();
  const molarMassOf = (formula: string): DecT => {
    let m = molarMemo.get(formula);
    if (!m) {
      m = molarMass(species(formula), atomicWeights);
      molarMemo.set(formula, m);
    }
    return m;
  };

  // every pair, balanced and derived once
  const ratios = new Map<string, RatioResult | DomainError>();
  for (const ox of tables.oxidants) {
    for (const ct of tables.contaminants) {
      for (const p of ct.products) {
        for (const medium of ['acid', 'base'] as const) {
          try {
            ratios.set(ratioKey(ox.id, ct.id, p.id, medium), stoichiometricRatio({ oxidant: ox, contaminant: ct, productId: p.id, medium, atomicWeights, atomicWeightSource }));
          } catch (e) {
            if (e instanceof DomainError) ratios.set(ratioKey(ox.id, ct.id, p.id, medium), e);
            else throw e;
          }
        }
      }
    }
  }
  const conversions = new Map<string, FeedConversion>();
  const perOxidant = new Map<string, { basisMolarMass: DecT; activePerBasis: number; hydrolysisH: number; solidReduced: { formula: string; mol: number } | null }>();
  for (const ox of tables.oxidants) {
    const c = productPerBasis(ox, atomicWeights);
    conversions.set(ox.id, { basisFormula: ox.doseBasis, productFormula: ox.productFormula, productPerBasis: c.factor, derivation: c.derivation });
    const active = species(ox.activeSpecies);
    const reduced = species(ox.reducedProduct);
    const basisPerActive = conversionFactor(ox.basisRule, active, reduced, species(ox.doseBasis), 'acid', `oxidants.json row ${ox.id}`);
    let hydrolysisH = 0;
    if (ox.hydrolysis) {
      const eq = parseEquation(ox.hydrolysis.equation);
      const hKey = speciesKey(species('H+'));
      const aKey = speciesKey(active);
      let h = 0;
      let a = 0;
      for (const t of eq.products) if (speciesKey(t.species) === hKey) h += t.coefficient.toNumber();
      for (const t of eq.reactants) if (speciesKey(t.species) === hKey) h -= t.coefficient.toNumber();
      for (const t of eq.reactants) if (speciesKey(t.species) === aKey) a += t.coefficient.toNumber();
      hydrolysisH = a > 0 ? h / a : 0;
    }
    let solidReduced: { formula: string; mol: number } | null = null;
    if (reduced.phase === 's' && ox.basisRule.kind === 'element') {
      const el = ox.basisRule.element;
      solidReduced = { formula: ox.reducedProduct, mol: (active.composition[el] ?? 0) / (reduced.composition[el] ?? 1) };
    }
    perOxidant.set(ox.id, { basisMolarMass: molarMassOf(ox.doseBasis), activePerBasis: 1 / basisPerActive.toNumber(), hydrolysisH, solidReduced });
  }

  // equilibrium constants at temperature
  const eqRows = new Map(tables.equilibria.map((r) => [r.id, r]));
  const ids = { kw: 'harned-owen-kw', k1: 'pb-co2-k1', k2: 'pb-co2-k2', o2Henry: 'phreeqc-o2-henry', ...(deps.equilibriumIds ?? {}) };
  const specs = new Map<string, EquilibriumSpec>();
  const specOf = (id: string): EquilibriumSpec => {
    let s = specs.get(id);
    if (!s) {
      const row = eqRows.get(id);
      if (!row) throw new DomainError('TABLE_ROW_NOT_FOUND', { detail: `tables/equilibria.json has no row "${id}", which the dosing context needs.`, params: { table: 'equilibria', id } });
      s = equilibriumSpecFromRow(row);
      specs.set(id, s);
    }
    return s;
  };
  const hKey = speciesKey(species('H+'));
  const acidSign = new Map<string, number>();
  const pKaMemo = new Map<string, number>();
  const pKaAt = (id: string, t: number): number => {
    const k = `${id}|${t}`;
    let v = pKaMemo.get(k);
    if (v === undefined) {
      let sign = acidSign.get(id);
      if (sign === undefined) {
        const eq = parseEquation(eqRows.get(id)?.reaction ?? '');
        sign = eq.products.some((x) => speciesKey(x.species) === hKey) ? -1 : 1;
        acidSign.set(id, sign);
      }
      v = sign * log10KAt(t, specOf(id), constants).log10K;
      if (pKaMemo.size > 4096) pKaMemo.clear();
      pKaMemo.set(k, v);
    }
    return v;
  };
  const kwAt = memoT((t) => log10KAt(t, specOf(ids.kw), constants).K);
  const o2HenryAt = memoT((t) => log10KAt(t, specOf(ids.o2Henry), constants).K);
  const carbonateConstantsAt = memoT((t) => ({ K1: log10KAt(t, specOf(ids.k1), constants).K, K2: log10KAt(t, specOf(ids.k2), constants).K, Kw: kwAt(t) }));
  const satPoints = tables.oxygenSaturation
    .filter((r): r is Extract<typeof r, { kind: 'point' }> => r.kind === 'point')
    .map((r) => ({ t: Number(r.temperatureC), c: Number(r.valueText) }))
    .sort((a, b) => a.t - b.t);
  const satTableMaxC = satPoints.length > 0 ? satPoints[satPoints.length - 1]!.t : Number.NaN;
  // Above the table: Henry's law with air's O2 (20.946 % of dry air, ISO 2533 / US Standard Atmosphere, from
  // memory) at 1 atm less the water vapour pressure, which takes the saturation to zero at the boiling point
  // (the Benson–Krause fit, made for 0–40 °C, does not); scaled to meet the table at its warmest point.
  const vapour = tables.oxygenSaturation.find((r): r is Extract<typeof r, { kind: 'vapour-pressure' }> => r.kind === 'vapour-pressure');
  if (!vapour) throw new DomainError('TABLE_INVALID', { detail: 'tables/oxygen-saturation.json has no vapour-pressure row for the saturation above its points.' });
  const O2_IN_DRY_AIR = 0.20946;
  const o2Molar = molarMassOf('O2').toNumber();
  const henrySaturation = (t: number): number => {
    const [A, B, C] = vapour.coefficients.map(Number) as [number, number, number];
    const pw = 10 ** (A - B / (C + t)) / 760; // atm
    return o2HenryAt(t) * O2_IN_DRY_AIR * Math.max(0, 1 - pw) * o2Molar * 1000;
  };
  const warmest = satPoints[satPoints.length - 1];
  const henryAtWarmest = warmest ? henrySaturation(warmest.t) : 0;
  const o2SaturationAt = (t: number): number => {
    if (satPoints.length === 0) throw new DomainError('TABLE_INVALID', { detail: 'tables/oxygen-saturation.json has no points.' });
    if (t <= satPoints[0]!.t) return satPoints[0]!.c;
    for (let i = 1; i < satPoints.length; i++) {
      const a = satPoints[i - 1]!;
      const b = satPoints[i]!;
      if (t <= b.t) return a.c + ((b.c - a.c) * (t - a.t)) / (b.t - a.t);
    }
    return henryAtWarmest > 0 ? (henrySaturation(t) * warmest!.c) / henryAtWarmest : 0;
  };
  const temperatureRangeNotes = (equilibriumIds: readonly string[], t: number): { text: string; source: string }[] => {
    const notes: { text: string; source: string }[] = [];
    for (const id of new Set(equilibriumIds)) {
      const spec = specOf(id);
      const r = log10KAt(t, spec, constants);
      if (r.extrapolated && spec.validRangeC) {
        notes.push({ text: `${eqRows.get(id)?.reaction ?? id} (${id}) is fitted for ${spec.validRangeC.min}–${spec.validRangeC.max} °C`, source: spec.source });
      }
    }
    return notes;
  };
  const pO2AirAtm = memoT((t) => o2SaturationAt(t) / 1000 / o2Molar / o2HenryAt(t));
  const daviesAAt = memoT((t) => daviesA(t, constants).A);

  const feasibilityDeps: FeasibilityDeps = {
    ledger,
    constants,
    pKaAt,
    kwAt,
    pO2AirAtm,
    daviesAAt,
    molarMass: molarMassOf,
    potentialMemo: new Map<string, PotentialResult>(),
    cellMemo: new Map<string, FeasibilityEntry>(),
    cellMemoLimit: deps.cellMemoSize ?? 512,
  };
  const contactDeps: ContactDeps = {
    kinetics: tables.kineticsTypical as readonly KineticsRow[],
    constants,
    kwAt,
    o2HenryAt,
    o2MolarMass: o2Molar,
    o2SaturationAt,
  };
  const cautionMap = new Map(tables.cautions.map((c) => [c.id, c]));
  const cautionsByOxidant = new Map<string, { texts: string[]; details: DoseResult['cautionDetails'] }>();
  for (const ox of tables.oxidants) {
    const rows = [...ox.cautions.map((id) => cautionMap.get(id)).filter((c): c is CautionRow => c !== undefined), ...tables.cautions.filter((c) => c.standing)];
    // a row whose note or source says its content is recalled from memory is marked so (the signed sheet prints it)
    const memorySource = (id: string) => tables.sources.find((x) => x.id === id)?.access === 'memory';
    const recalled = (note: string | undefined, source: string) => memorySource(source) || /from memory/i.test(note ?? '');
    const details: DoseResult['cautionDetails'][number][] = rows.map((c) => ({ id: c.id, category: c.category, text: c.text, source: c.source, recalledFromMemory: recalled(c.note, c.source) }));
    if (ox.storage) details.push({ id: `${ox.id}-storage`, category: 'hazard', text: ox.storage.text, source: ox.storage.source, recalledFromMemory: recalled(undefined, ox.storage.source) });
    cautionsByOxidant.set(ox.id, { texts: details.map((d) => d.text), details });
  }
  return {
    strengthLimits,
    citations: new Map(tables.sources.map((s) => [s.id, citation(s)])),
    carbonateMemo: new Map<string, AcidAdditionResult>(),
    resultMemo: new Map<string, DoseResult>(),
    resultMemoSize: deps.resultMemoSize ?? 256,
    cautionsByOxidant,
    plantMergeOxidants: new Map(tables.oxidants.map((o) => [o.id, { doseBasis: o.doseBasis, fedAsGas: oxidantFedAsGas(o) }])),
    oxidants,
    contaminants: tables.contaminants,
    limits: tables.limits,
    cautions: cautionMap,
    sources: new Map(tables.sources.map((s) => [s.id, s])),
    atomicWeights,
    atomicWeightSource,
    constants,
    ledger,
    ratios,
    conversions,
    feasibilityDeps,
    contactDeps,
    perOxidant,
    caco3MgPerMeq: caco3EquivalentWeightMgPerMeq(atomicWeights).value,
    molarMassOf,
    carbonateConstantsAt,
    pKaAt,
    o2SaturationAt,
    o2SaturationTableMaxC: satTableMaxC,
    temperatureRangeNotes: (equilibriumIds, t, usesOxygen) => temperatureRangeNotes([ids.kw, ...equilibriumIds, ...(usesOxygen ? [ids.o2Henry] : [])], t),
  };
}

/** computeFeed, with a problem about a value the plant profile supplied saying so. */
function computeFeedNamingPlant(name: (e: unknown) => unknown, input: Parameters<typeof computeFeed>[0]): FeedResult {
  try {
    return computeFeed(input);
  } catch (e) {
    throw name(e);
  }
}

/** The derived ratio for a pair from the context's memo (throws what balancing threw). */
export function ratioFor(context: DosingContext, oxidantId: string, contaminantId: string, productId: string, medium: Medium): RatioResult {
  const r = context.ratios.get(ratioKey(oxidantId, contaminantId, productId, medium));
  if (r === undefined) {
    throw new DomainError('CONTAMINANT_UNKNOWN', { detail: `No reaction is known for ${oxidantId} with ${contaminantId} → ${productId}.`, fields: [{ pointer: '/oxidant', message: 'no reaction for this pair' }] });
  }
  if (r instanceof DomainError) throw r;
  return r;
}

// ---------------------------------------------------------------- result

export interface TraceItem {
  readonly quantity: string;
  readonly value: string;
  readonly how: string;
  readonly sources: readonly string[];
}

/** The full answer of computeDose (POST /api/v1/doses). */
export interface DoseResult {
  readonly oxidant: { readonly id: string; readonly name: string; readonly form: OxidantRow['form']; readonly basis: string; readonly productFormula: string; readonly activeSpecies: string; readonly reducedProduct: string; readonly source: string };
  readonly plant: { readonly id: string; readonly name: string; readonly invented: boolean; readonly preferredUnits: 'SI' | 'US'; readonly fromPlant: readonly string[] } | null;
  readonly dose: Reported & { readonly basis: string };
  readonly terms: readonly DoseTerm[];
  readonly demand: readonly DemandEntry[];
  readonly feed: FeedResult | null;
  readonly feasibility: readonly FeasibilityEntry[];
  readonly contact: ContactResult;
  readonly sideEffects: SideEffects;
  readonly flags: readonly Flag[];
  readonly cautions: readonly string[];
  readonly cautionDetails: readonly { readonly id: string; readonly category: CautionRow['category']; readonly text: string; readonly source: string; readonly recalledFromMemory: boolean }[];
  readonly conditions: { readonly pH: number; readonly temperatureC: number; readonly temperatureF: number; readonly medium: Medium; readonly mediumReason: string; readonly ionicStrengthMolPerL: number; readonly ionicStrengthFrom: string };
  readonly units: {
    readonly preferred: 'SI' | 'US';
    readonly flow: { readonly si: Reported; readonly siHourly: Reported; readonly us: Reported; readonly usGpm: Reported } | null;
    readonly temperature: { readonly si: Reported; readonly us: Reported };
    readonly dose: { readonly si: Reported; readonly us: Reported };
    readonly massRate: { readonly si: Reported; readonly us: Reported } | null;
    readonly solutionRate: { readonly si: Reported; readonly us: Reported; readonly mLPerMin: Reported } | null;
  };
  readonly rounding: { readonly rule: string; readonly significantFigures: number; readonly note: string };
  readonly traceability: readonly TraceItem[];
  readonly sources: readonly { readonly id: string; readonly citation: string }[];
  readonly notes: readonly string[];
}

/**
 * A limit published "as X" (a formula) in a reading's basis "as E" (an element X holds): the value times
 * n·M(E)/M(X), e.g. WHO's nitrite 3 mg/L as NO2- is 3 × 14.007/46.005 = 0.913 mg/L as N. Null when
 * either basis is not of that form or X holds no E.
 */
function limitInBasis(limit: LimitRow, readingBasis: string, molarMassOf: (formula: string) => DecT): number | null {
  const from = /^as (\S+)$/.exec(limit.basis)?.[1];
  const to = /^as ([A-Z][a-z]?)$/.exec(readingBasis)?.[1];
  if (from === undefined || to === undefined) return null;
  let n: number;
  try {
    n = parseFormula(from).composition[to] ?? 0;
  } catch {
    return null;
  }
  if (n === 0) return null;
  return new Dec(limit.valueText).times(n).times(molarMassOf(to)).dividedBy(molarMassOf(from)).toNumber();
}

function citation(s: SourceRow): string {
  return `${s.author} (${s.year}). ${s.title}. ${s.publication}${s.edition ? `, ${s.edition}` : ''}. ${s.tableOrEquation}.${s.access === 'memory' ? ' [values recalled from memory; verify]' : ''}`;
}

export interface ComputeDoseOptions {
  /** The stored profile named by request.plantId (the caller looks it up). */
  readonly plant?: PlantProfile;
}

function deepFreeze<T>(x: T): T {
  if (x !== null && typeof x === 'object' && !Object.isFrozen(x)) {
    Object.freeze(x);
    for (const v of Object.values(x as Record<string, unknown>)) deepFreeze(v);
  }
  return x;
}

/**
 * Turn a (validated) dose request into the full answer. Throws DomainError with pointers into
 * the request. The answer is frozen; an identical (request, plant) is answered from the
 * context's result memo.
 */
export function computeDose(request: DoseRequest, context: DosingContext, options: ComputeDoseOptions = {}): DoseResult {
  if (context.resultMemoSize <= 0) return computeDoseUncached(request, context, options);
  const key = options.plant ? JSON.stringify([request, options.plant]) : JSON.stringify(request);
  const memo = context.resultMemo;
  const hit = memo.get(key);
  if (hit) {
    // keep recently used entries at the end (LRU)
    memo.delete(key);
    memo.set(key, hit);
    return hit;
  }
  const result = deepFreeze(computeDoseUncached(request, context, options));
  if (memo.size >= context.resultMemoSize) memo.delete(memo.keys().next().value as string);
  memo.set(key, result);
  return result;
}

/** computeDose without the result memo (every step computed; the pair, potential and cell memos still apply). */
export function computeDoseUncached(request: DoseRequest, context: DosingContext, options: ComputeDoseOptions = {}): DoseResult {
  let req = request;
  let plantInfo: DoseResult['plant'] = null;
  let plantResidual: PlantResidual | null = null;
  if (req.plantId !== undefined) {
    if (!options.plant || options.plant.id !== req.plantId) {
      throw new DomainError('PLANT_NOT_FOUND', {
        detail: `No plant profile "${req.plantId}"; list the stored profiles with GET /api/v1/plants or send flow and product in the request.`,
        fields: [{ pointer: '/plantId', message: `no plant profile "${req.plantId}"` }],
        params: { plantId: req.plantId },
      });
    }
    const m = mergePlantIntoRequest(req, options.plant, context.plantMergeOxidants);
    req = m.request;
    plantInfo = { ...m.plant, fromPlant: m.fromPlant };
    plantResidual = m.residual;
  }
  const fromPlant = plantInfo?.fromPlant ?? [];
  /** A field problem about a value the plant profile supplied says so (the pointer is the request field it filled). */
  const namePlantFields = (e: unknown): unknown =>
    e instanceof DomainError && plantInfo
      ? e.withFields((fs) => fs.map((f) => (fromPlant.includes(f.pointer.split('/')[1] ?? '') ? { pointer: f.pointer, message: `${f.message} (value from plant profile "${plantInfo!.id}")` } : f)))
      : e;
  try {
    checkDoseRequest(req, context.strengthLimits);
  } catch (e) {
    throw namePlantFields(e);
  }
  const ox = context.oxidants.get(req.oxidant);
  if (!ox) {
    throw new DomainError('OXIDANT_UNKNOWN', {
      detail: `Unknown oxidant "${req.oxidant}"; accepted: ${[...context.oxidants.keys()].join(', ')}.`,
      fields: [{ pointer: '/oxidant', message: `accepted: ${[...context.oxidants.keys()].join(', ')}` }],
    });
  }
  // a gas (or an oxidant generated and transferred as a gas) has no product strength, pump or batch
  if (oxidantFedAsGas(ox)) {
    const how = ox.form === 'gas' ? 'is fed as a gas' : 'is generated on site and transferred to the water as a gas';
    const name = ox.name.replace(/\s*\([^)]*\)$/, '');
    const feeder = `feed.massRate${ox.form === 'generated' ? ', and the generator output in feed.generator' : ''}`;
    const refuse = (pointer: string, why: string, what: string) =>
      namePlantFields(
        new DomainError('VALIDATION_FAILED', {
          detail: `${name} ${how}: ${why}. Remove ${pointer.split('/')[1]}; the feeder is set by the mass rate (${feeder}).`,
          fields: [{ pointer, message: `${name} ${how}; ${what} does not apply: remove ${pointer.split('/')[1]}` }],
        }),
      );
    if (req.product) {
      throw refuse('/product/strength', 'it has no product strength, density or solution rate, so product does not apply', `a product ${req.product.strength ? `strength (${req.product.strength.value} ${req.product.strength.unit})` : 'entry'}`);
    }
    if (req.pump) throw refuse('/pump', 'it has no solution rate, so a metering pump does not apply', 'a metering pump');
    if (req.batch) throw refuse('/batch', 'there is no batch solution to make up, so batch does not apply', 'a batch solution');
  }
  const per = context.perOxidant.get(ox.id)!;
  const flags: Flag[] = [];
  if (req.product?.purity && ox.form !== 'solid') {
    // the strength of a solution already states its active content: a purity on top would be a second
    // factor; it is not used, and said so (the strength is what sets the feed)
    flags.push({
      code: 'PURITY_NOT_APPLICABLE',
      severity: 'warning',
      message: `${ox.name} is supplied as a solution: its strength${req.product.strength ? ` (${req.product.strength.value} ${req.product.strength.unit})` : ''} already states the active content, so the purity given (${req.product.purity.value} %) was not used. Give the measured strength of the stock instead${fromPlant.includes('product') ? `, and remove the purity from the plant profile "${plantInfo?.id}"` : ''}.`,
      source: 'input',
    });
  }
  const notes: string[] = [];
  const s = req.sample;
  const pH = s.pH;
  const temperatureC = s.temperatureC ?? temperatureToC(s.temperature!, '/sample/temperature');
  if (ox.id === 'oxygen' && context.o2SaturationAt(temperatureC) <= 0) {
    // at the boiling point the water vapour alone is 1 atm: water under air holds no oxygen to dose
    const pointer = s.temperatureC !== undefined ? '/sample/temperatureC' : '/sample/temperature/value';
    const message = `at ${temperatureC} °C water in contact with air holds no dissolved oxygen (its vapour pressure reaches 1 atm): aeration cannot supply any; check the temperature, or choose another oxidant`;
    throw new DomainError('CONDITIONS_OUT_OF_RANGE', { detail: `${pointer}: ${message}.`, fields: [{ pointer, message }] });
  }
  // a possible but unusual strength (the impossible ones were refused by checkDoseRequest): above the strongest grade, or dissolving only in a warm tank
  if (req.product?.strength) {
    const tankC = req.batch?.temperatureC ?? temperatureC;
    const tankFrom = req.batch?.temperatureC !== undefined ? 'batch.temperatureC' : "the sample temperature (give batch.temperatureC for the tank's)";
    // with a batch and a flow, the feed's batch check (BATCH_ABOVE_SOLUBILITY) covers the solubility
    flags.push(...strengthLimitFlags(ox, { ...req.product, strength: req.product.strength }, tankC, tankFrom, !(req.batch && req.flow), context.strengthLimits));
  }
  const medium: Medium = req.options?.medium ?? mediumForPH(pH);
  checkPotentialOverrides(req.options?.potentialOverrides);
  const mediumReason = req.options?.medium ? `medium ${medium} chosen by the request` : `medium from the pH: ${medium === 'base' ? 'basic (OH-)' : 'acidic (H+)'} because pH ${pH} ${medium === 'base' ? '>' : '≤'} 7`;

  // demand
  const demands: DemandWork[] = contaminantDemands({
    oxidant: ox,
    sample: s,
    contaminants: context.contaminants,
    medium,
    options: req.options,
    ratio: (o, c, p, m) => ratioFor(context, o, c, p, m),
    flags,
  });
  flags.push(...processFlags(demands, ox, pH, temperatureC, context));
  const bg = backgroundDemand({ background: req.backgroundDemand, sample: s, oxidant: ox, flags });
  let residual = new Dec(0);
  let residualReason = 'No target residual given: 0 mg/L.';
  let residualSource = 'input';
  if (req.targetResidual) {
    residual = mgPerL(req.targetResidual, '/targetResidual');
    residualReason = `Target residual ${residual.toString()} mg/L as ${ox.doseBasis} after contact${plantResidual?.used ? ` (from the plant profile: ${plantResidual.used.entry}, ${plantResidual.used.reason})` : ''}.`;
    residualSource = plantInfo?.fromPlant.includes('targetResidual') ? 'plant profile' : 'input';
  } else if (plantResidual?.forOtherOxidant) {
    // a warning: the profile holds a residual target the operator may expect in this dose, and it is not in it
    flags.push({ code: 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT', severity: 'warning', message: plantResidual.forOtherOxidant, source: 'input' });
  } else if (ox.doseBasis === 'Cl2' || ox.doseBasis === 'ClO2') {
    flags.push({ code: 'NO_TARGET_RESIDUAL', severity: 'info', message: `No target residual was given, so the dose only meets the demand; give targetResidual (mg/L as ${ox.doseBasis}) if a residual must remain after contact.`, source: 'input' });
  }
  const total = totalDose({ oxidant: ox, demands, background: bg, residualMgPerL: residual, residualReason, residualSource });
  flags.push(...demandResidualFlags({ backgroundMgPerL: total.backgroundMgPerL.toNumber(), residualMgPerL: residual.toNumber(), oxidantId: ox.id, basis: ox.doseBasis }));
  if (total.doseMgPerL.isZero()) {
    const skipped = flags.some((f) => f.code === 'AMMONIA_BREAKPOINT_NOT_APPLICABLE' || f.code === 'CONTAMINANT_NOT_APPLICABLE');
    flags.push({
      code: 'DOSE_ZERO',
      severity: 'info',
      message: skipped
        ? `The dose is zero: the contaminants given are not ones ${ox.name} is counted against (see the flags above), and no background demand or residual was given.`
        : 'The dose is zero: no contaminant, background demand or residual was given.',
      source: 'input',
    });
  }

  // conditions
  let ionicStrength = 0;
  let ionicStrengthFrom = 'no TDS given: activity coefficients taken as 1';
  if (s.tds) {
    const tds = mgPerL(s.tds, '/sample/tds').toNumber();
    ionicStrength = Number(IONIC_STRENGTH_FROM_TDS.coefficients['k']) * tds;
    ionicStrengthFrom = `${IONIC_STRENGTH_FROM_TDS.equation} with TDS ${tds} mg/L (${IONIC_STRENGTH_FROM_TDS.citation})`;
  }

  // flags on the inputs and limits
  const ironQ = s.iron ? mgPerL(s.iron, '/sample/iron') : null;
  flags.push(...inputFlags({ pH, sample: s, temperatureC }));
  const readings: { parameter: string; name: string; mgPerL: DecT; basis?: string }[] = [];
  if (ironQ) readings.push({ parameter: 'iron', name: 'iron', mgPerL: ironQ });
  if (s.manganese) readings.push({ parameter: 'manganese', name: 'manganese', mgPerL: mgPerL(s.manganese, '/sample/manganese') });
  if (s.arsenite) readings.push({ parameter: 'arsenic', name: 'arsenic(III)', mgPerL: mgPerL(s.arsenite, '/sample/arsenite') });
  if (s.nitrite) readings.push({ parameter: 'nitrite', name: 'nitrite', basis: 'as N', mgPerL: mgPerL(s.nitrite, '/sample/nitrite') });
  flags.push(...rawWaterFlags({ readings, limits: context.limits, inBasis: (l, basis) => limitInBasis(l, basis, context.molarMassOf) }));
  flags.push(...residualFlags({ oxidant: ox, residualMgPerL: residual, limits: context.limits }));

  // feed
  let feed: FeedResult | null = null;
  let flowM3PerD: DecT | null = null;
  if (req.flow) {
    flowM3PerD = toBaseDec('flow', req.flow, '/flow');
    feed = computeFeedNamingPlant(namePlantFields, {
      oxidant: ox,
      doseMgPerL: total.doseMgPerL,
      flowM3PerD,
      conversion: context.conversions.get(ox.id)!,
      product: req.product,
      pump: req.pump,
      stock: req.stock,
      batch: req.batch,
      temperatureC,
      productFromPlant: fromPlant.includes('product') ? plantInfo?.id : undefined,
    });
    flags.push(...feed.flags);
  } else {
    flags.push({ code: 'FLOW_NOT_GIVEN', severity: 'info', message: 'No flow was given, so no feed rate: give flow {value, unit} or a plantId.', source: 'input' });
  }

  // feasibility
  const feasibility: FeasibilityEntry[] = [];
  if (total.doseMgPerL.greaterThan(0)) {
    const oxidantMolPerL = total.doseMgPerL.dividedBy(per.basisMolarMass).toNumber() / 1000 * per.activePerBasis;
    for (const d of demands) {
      const ct = d.contaminantRow;
      const sp = species(ct.species);
      const count = sp.composition[ct.elementBasis] ?? 1;
      const contaminantMolPerL = d.concentrationMgPerL.dividedBy(context.molarMassOf(ct.elementBasis)).toNumber() / 1000 / count;
      try {
        feasibility.push(
          evaluateFeasibility(
            {
              oxidant: ox,
              contaminant: ct,
              productFormula: d.entry.product.formula,
              reaction: d.entry.reaction,
              medium,
              pH,
              temperatureC,
              oxidantMolPerL,
              contaminantMolPerL,
              ionicStrengthMolPerL: ionicStrength,
              ionicStrengthFrom,
              overrides: req.options?.potentialOverrides,
            },
            context.feasibilityDeps,
            flags,
          ),
        );
      } catch (e) {
        if (!(e instanceof DomainError)) throw e;
        // a site value that reads as the other form of its couple is the caller's to settle, not a gap in the tables
        if (e.code === 'SITE_VALUE_MEDIUM_UNCLEAR') throw e;
        notes.push(`Feasibility of ${ox.name} with ${lowerName(ct.name)} not evaluated: ${e.detail}`);
        flags.push({ code: 'FEASIBILITY_NOT_EVALUATED', severity: 'info', message: `Feasibility of ${ox.name} with ${lowerName(ct.name)} could not be evaluated: ${e.detail}`, source: ox.source });
      }
    }
  }

  for (const u of unusedPotentialOverrides(
    req.options?.potentialOverrides,
    total.doseMgPerL.greaterThan(0) ? demands.map((d) => ({ oxidant: ox, productFormula: d.entry.product.formula, contaminantSpecies: d.contaminantRow.species, medium })) : [],
  )) {
    flags.push({
      code: 'POTENTIAL_OVERRIDE_NOT_USED',
      severity: 'warning',
      message: `The site value for ${u.override.from}/${u.override.to} (options.potentialOverrides/${u.index}) was not used: no reaction of this dose at pH ${pH} (${medium} medium) uses that couple${u.couples.length ? `; the couples used are ${u.couples.join(', ')}` : ''}.`,
      source: u.override.source,
    });
  }

  // contact
  let availableMinutes: number | null = null;
  let availableFrom: ContactResult['availableFrom'] = 'not given';
  if (req.contactTime) {
    availableMinutes = toBaseDec('time', req.contactTime, '/contactTime').toNumber();
    availableFrom = 'given';
    // the plant's contact volume when the request gave a time instead (the merge keeps the request's time)
    const volume = req.contactVolume ?? (plantInfo !== null ? options.plant?.contactVolume : undefined);
    if (volume && flowM3PerD) {
      // both given: the contact time wins (it may already allow for short-circuiting, a baffle factor or T10);
      // what the volume would give is said, so a mismatch is seen
      const fromVolume = toBaseDec('volume', volume, '/contactVolume').dividedBy(1000).dividedBy(flowM3PerD).times(1440).toNumber();
      if (Number.isFinite(fromVolume)) {
        const where = (k: string) =>
          fromPlant.includes(k) || (k === 'contactVolume' && !req.contactVolume) ? ` (from plant profile "${plantInfo!.id}")` : '';
        notes.push(
          `Contact: the contact time given${where('contactTime')}, ${req.contactTime.value} ${req.contactTime.unit}, was used; the contact volume${where('contactVolume')} ÷ flow would give ${roundSigNumber(fromVolume, 3)} min at this flow, which was not used.`,
        );
      }
    }
  } else if (req.contactVolume && flowM3PerD) {
    const m3 = toBaseDec('volume', req.contactVolume, '/contactVolume').dividedBy(1000);
    availableMinutes = m3.dividedBy(flowM3PerD).times(1440).toNumber();
    availableFrom = 'contact volume ÷ flow';
  }
  if (availableMinutes !== null && !Number.isFinite(availableMinutes)) {
    // checkDoseRequest bounds both, so this is a guard: the problem names the request's fields, never the derived figure
    const fields = availableFrom === 'given' ? ['/contactTime/value'] : ['/contactVolume/value', '/flow/value'];
    const message = availableFrom === 'given' ? 'the contact time is beyond any number' : 'contact volume ÷ flow is beyond any number of minutes: check both values and their units';
    throw namePlantFields(new DomainError('QUANTITY_OUT_OF_RANGE', { detail: `${fields.join(' and ')}: ${message}.`, fields: fields.map((pointer) => ({ pointer, message })) }));
  }
  const limitById = (id: string | undefined) => (id === undefined ? undefined : context.limits.find((l) => l.id === id));
  const doMeasured = s.dissolvedOxygen;
  const contact = checkContact(
    {
      oxidant: ox,
      contaminants: demands.map((d) => {
        const l = limitById(d.contaminantRow.finishedTarget);
        return { row: d.contaminantRow, mgPerL: d.concentrationMgPerL, targetMgPerL: l ? Number(l.valueText) : null, targetSource: l ? `${l.citation} ${l.kind}` : null };
      }),
      pH,
      temperatureC,
      availableMinutes,
      availableFrom,
      // With oxygen as the oxidant the rate law runs on the water after aeration, not the raw water:
      // the measured DO plus the dose when a DO residual is targeted, else air saturation at the
      // water temperature (what an aerator approaches).
      dissolvedOxygenMgPerL:
        ox.id === 'oxygen'
          ? doMeasured && req.targetResidual
            ? toBaseDec('concentration', doMeasured, '/sample/dissolvedOxygen').toNumber() + residual.toNumber()
            : undefined
          : doMeasured
            ? toBaseDec('concentration', doMeasured, '/sample/dissolvedOxygen').toNumber()
            : undefined,
      ...(ox.id === 'oxygen' && doMeasured && req.targetResidual
        ? { dissolvedOxygenFrom: "the sample's DO plus the oxygen dose less what the contaminants and the background demand consume, that is the sample's DO plus the target residual (the DO left after the reactions, the cautious figure for the rate)" }
        : {}),
    },
    context.contactDeps,
    flags,
  );

  // side effects
  const fx = sideEffects({
    oxidant: ox,
    demands,
    doseMgPerL: total.doseMgPerL,
    residualMgPerL: residual,
    backgroundMgPerL: total.backgroundMgPerL,
    pH,
    temperatureC,
    alkalinityMgPerLAsCaCO3: s.alkalinity ? mgPerL(s.alkalinity, '/sample/alkalinity').toNumber() : null,
    bromideMgPerL: s.bromide ? mgPerL(s.bromide, '/sample/bromide').toNumber() : null,
    tocMgPerL: s.toc ? mgPerL(s.toc, '/sample/toc').toNumber() : null,
    chloriteFraction: req.options?.chloriteFraction ?? null,
    limits: context.limits,
    deps: {
      caco3MgPerMeq: context.caco3MgPerMeq,
      basisMolarMass: (o) => context.perOxidant.get(o.id)!.basisMolarMass,
      molarMass: context.molarMassOf,
      activePerBasis: (o) => context.perOxidant.get(o.id)!.activePerBasis,
      hydrolysisHPerMol: (o) => context.perOxidant.get(o.id)!.hydrolysisH,
      hoclFraction: (o, ph, t) => (o.speciation ? 1 / (1 + Math.pow(10, ph - context.pKaAt(o.speciation.equilibrium, t))) : null),
      solidReducedPerActive: (o) => context.perOxidant.get(o.id)!.solidReduced,
      carbonateConstantsAt: context.carbonateConstantsAt,
      carbonateMemo: context.carbonateMemo,
    },
    flags,
  });

  // a DO reading above air saturation at the sample's temperature: supersaturated water (algae, pure
  // oxygen) or a reading to check; the request is not refused (the plausibility band warns above 20 mg/L)
  if (doMeasured) {
    const measured = toBaseDec('concentration', doMeasured, '/sample/dissolvedOxygen').toNumber();
    const sat = context.o2SaturationAt(temperatureC);
    if (measured > sat * 1.05) {
      flags.push({
        code: 'DISSOLVED_OXYGEN_ABOVE_SATURATION',
        severity: 'info',
        message: `The dissolved oxygen reading, ${roundSigNumber(measured, 3)} mg/L, is ${roundSigNumber((measured / sat) * 100, 3)} % of air saturation at ${temperatureC} °C (${roundSigNumber(sat, 3)} mg/L, tables/oxygen-saturation.json): the water is supersaturated (algae, pure-oxygen aeration, a pressure drop) or the reading needs checking (meter calibration, sample handling).`,
        source: 'std-methods-4500-o',
      });
    }
  }
  // the oxygen the raw water already holds, against what the reactions and the residual need
  if (ox.id === 'oxygen' && doMeasured && total.doseMgPerL.greaterThan(0)) {
    const have = toBaseDec('concentration', doMeasured, '/sample/dissolvedOxygen').toNumber();
    const need = total.doseMgPerL.toNumber();
    const r3 = (x: number) => roundSigNumber(x, 3);
    flags.push({
      code: 'DISSOLVED_OXYGEN_IN_SAMPLE',
      severity: 'info',
      message:
        have >= need
          ? `The sample already holds ${r3(have)} mg/L dissolved oxygen, at least the ${r3(need)} mg/L the reactions${residual.greaterThan(0) ? ' and the residual' : ''} need: the dose above is the oxygen they use, not what aeration must add. Aeration may still be wanted to strip CO2 or H2S or to speed the reaction.`
          : `The sample already holds ${r3(have)} mg/L dissolved oxygen of the ${r3(need)} mg/L the reactions${residual.greaterThan(0) ? ' and the residual' : ''} need: aeration must add about ${r3(need - have)} mg/L beyond what the water holds.`,
      source: 'input',
    });
  }
  // aeration cannot exceed saturation
  if (ox.id === 'oxygen' && total.doseMgPerL.greaterThan(0)) {
    const sat = context.o2SaturationAt(temperatureC);
    if (total.doseMgPerL.greaterThan(sat)) {
      flags.push({
        code: 'OXYGEN_ABOVE_SATURATION',
        severity: 'danger',
        message: `The oxygen needed, ${total.doseMgPerL.toSignificantDigits(3).toString()} mg/L, is more than air-saturated water holds at ${temperatureC} °C (${sat.toFixed(2)} mg/L): aeration alone cannot supply it in one pass. Use a chemical oxidant or pure oxygen.`,
        source: 'std-methods-4500-o',
      });
    }
  }

  // constants and tables used beyond the temperatures they were fitted for: the figures built on them are estimates
  {
    const usesOxygen = ox.id === 'oxygen' || doMeasured !== undefined;
    const equilibria = [ox.speciation?.equilibrium, ...demands.map((d) => d.contaminantRow.speciation?.equilibrium)].filter((x): x is string => x !== undefined);
    const beyond = [...context.temperatureRangeNotes(equilibria, temperatureC, usesOxygen)];
    if (usesOxygen && temperatureC > context.o2SaturationTableMaxC) {
      beyond.push({
        text: `the dissolved oxygen at saturation (tables/oxygen-saturation.json ends at ${context.o2SaturationTableMaxC} °C; beyond it Henry's law with the water vapour pressure gives ${roundSigNumber(context.o2SaturationAt(temperatureC), 3)} mg/L at ${temperatureC} °C, scaled to meet the table at ${context.o2SaturationTableMaxC} °C)`,
        source: 'benson-krause-1984',
      });
    }
    if (beyond.length > 0) {
      flags.push({
        code: 'TEMPERATURE_BEYOND_CORRELATION',
        severity: 'info',
        message: `At ${temperatureC} °C the water is outside the range some of the relations used here were fitted for: ${beyond.map((b) => b.text).join('; ')}. The potentials, contact time and saturation figures that rest on them are extrapolations; confirm with a jar test and measurements at the plant's temperature.`,
        source: beyond[0]!.source,
      });
    }
  }

  // cautions (prepared per oxidant in the context)
  const pc = context.cautionsByOxidant.get(ox.id)!;
  const cautions = pc.texts;
  const cautionDetails = pc.details;

  // units echo
  const preferred = req.options?.units ?? 'SI';
  const flowNum = flowM3PerD ? flowM3PerD.toNumber() : null;
  const doseNum = total.dose.value;
  const units: DoseResult['units'] = {
    preferred,
    flow:
      flowNum !== null
        ? {
            si: reported(flowNum, 'm3/d'),
            siHourly: reported(flowNum / 24, 'm3/h'),
            us: reported(flowNum / MGD_M3, 'MGD'),
            usGpm: reported(flowNum / GPM_M3_PER_D, 'gpm'),
          }
        : null,
    temperature: { si: reported(temperatureC, '°C'), us: reported(cToF(temperatureC), '°F') },
    dose: { si: reported(doseNum, `mg/L as ${ox.doseBasis}`), us: reported(doseNum, `ppm (mg/L) as ${ox.doseBasis}`) },
    massRate: feed ? { si: feed.massRate, us: feed.massRateUS } : null,
    solutionRate: feed?.solutionRate && feed.solutionRateGalPerD && feed.solutionRateMLPerMin ? { si: feed.solutionRate, us: feed.solutionRateGalPerD, mLPerMin: feed.solutionRateMLPerMin } : null,
  };

  // traceability
  const trace: TraceItem[] = [];
  trace.push({ quantity: 'dose', value: `${total.dose.rounded} mg/L as ${ox.doseBasis}`, how: 'Σ contaminant demand + background demand + target residual (see terms)', sources: [...new Set(total.terms.map((t) => t.source))] });
  for (const d of demands) {
    trace.push({ quantity: `ratio ${d.entry.contaminant}`, value: `${d.entry.ratioRounded} ${d.entry.ratioUnit}`, how: d.entry.provenance.join(' '), sources: [context.atomicWeightSource, d.entry.source] });
  }
  if (feed) {
    trace.push({ quantity: 'feed.massRate', value: `${feed.massRate.rounded} kg/d ${feed.massRate.basis}`, how: 'dose (mg/L = g/m³) × flow (m³/d) ÷ 1000; lb/d from the exact pound 0.45359237 kg', sources: ['nist-sp811-2008'] });
    trace.push({ quantity: 'feed.compoundMassRate', value: `${feed.compoundMassRate.rounded} kg/d ${feed.compoundMassRate.formula}`, how: feed.compoundMassRate.derivation, sources: [context.atomicWeightSource] });
    if (feed.solutionRate && feed.strength) trace.push({ quantity: 'feed.solutionRate', value: `${feed.solutionRate.rounded} L/h`, how: `mass rate ÷ strength (${feed.strength.text}) ÷ 24 h/d${feed.strength.density ? `; density ${feed.strength.density.value} kg/L (${feed.strength.density.note})` : ''}`, sources: [ox.source] });
  }
  trace.push({ quantity: 'sideEffects.alkalinityConsumed', value: `${fx.alkalinityConsumed.rounded} mg/L as CaCO3`, how: fx.alkalinityTerms.map((t) => `${t.what}: ${t.meqPerL.toPrecision(3)} meq/L (${t.how})`).join('; ') + ` × ${context.caco3MgPerMeq.toFixed(3)} mg CaCO3/meq`, sources: [context.atomicWeightSource] });
  for (const f of feasibility) {
    trace.push({ quantity: `feasibility ${f.contaminant}`, value: `${f.cellPotentialV.toFixed(3)} V`, how: `E(${f.oxidantCouple.halfReaction}) − E(${f.contaminantCouple.halfReaction}) by Nernst at pH ${pH}, ${temperatureC} °C`, sources: [...new Set([...f.oxidantCouple.derivation, ...f.contaminantCouple.derivation].map((x) => x.source))] });
  }

  // sources cited anywhere in the answer
  const ids = new Set<string>();
  const addId = (x: string | null | undefined) => {
    if (x && context.sources.has(x)) ids.add(x);
  };
  addId(ox.source);
  addId(context.atomicWeightSource);
  for (const f of flags) addId(f.source);
  for (const t of total.terms) addId(t.source);
  for (const t of trace) t.sources.forEach(addId);
  for (const c of cautionDetails) addId(c.source);
  for (const c of contact.entries) addId(c.source);
  for (const b of fx.byproducts) addId(b.source);
  const sources = [...ids].map((id) => ({ id, citation: context.citations.get(id)! }));

  notes.push(LOCAL_RULES_GOVERN);
  return {
    oxidant: { id: ox.id, name: ox.name, form: ox.form, basis: `as ${ox.doseBasis}`, productFormula: ox.productFormula, activeSpecies: ox.activeSpecies, reducedProduct: ox.reducedProduct, source: ox.source },
    plant: plantInfo,
    dose: total.dose,
    terms: total.terms,
    demand: demands.map((d) => d.entry),
    feed,
    feasibility,
    contact,
    sideEffects: fx,
    flags: sortFlags(flags),
    cautions,
    cautionDetails,
    conditions: { pH, temperatureC, temperatureF: cToF(temperatureC), medium, mediumReason, ionicStrengthMolPerL: ionicStrength, ionicStrengthFrom },
    units,
    rounding: { rule: ROUNDING_RULE, significantFigures: REPORT_SIG_FIGS, note: `Each reported number has "value" (full, unrounded) and "rounded" (${REPORT_SIG_FIGS} significant figures, round half to even).` },
    traceability: trace,
    sources,
    notes,
  };
}
