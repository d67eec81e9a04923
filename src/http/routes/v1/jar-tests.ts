/**
 * Jar-test routes (issue 5): plan the bench work (JSON or the bench sheet PDF), check a plan
 * someone wrote, and evaluate bench results into a signed, archived evaluation sheet.
 *
 * The stoichiometric estimate is computeDose's contaminant demand for the sample with the oxidant
 * (Σ of the `demand` entries, each from its balanced reaction); the background demand and the
 * target residual are not in it. A plan's planned dose is estimate + background + target residual,
 * the dose POST /api/v1/doses computes for the same oxidant, sample, backgroundDemand and
 * targetResidual (the residual may come from the plant profile named by plantId). The domain
 * (src/jar-tests) takes plain mg/L, L, g/L and mL; this
 * shell converts the {value, unit} quantities of the request and maps the domain's field pointers
 * back onto the request body.
 */
import type { FastifyInstance } from 'fastify';
import { DomainError, type FieldProblem } from '../../../core/errors.js';
import { roundSig } from '../../../core/decimal.js';
import { toBaseDec, type Quantity } from '../../../core/quantity.js';
import { computeDose, CONTAMINANT_FIELDS, plantResidualFor, strengthLimitProblem, type DoseRequest, type PlantProfile } from '../../../dosing/index.js';
import { strengthLimitFlags, strengthLimitFor } from '../../../dosing/strength-limits.js';
import type { BackgroundDemandInput, ConcentrationInput, SampleInput } from '../../../dosing/request.js';
import {
  aerationNotPlanned,
  checkJarPlan,
  evaluateJarTest,
  jarProductFacts,
  planJarTest,
  residualPlotData,
  residualPlotSvg,
  secondaryLimitTargets,
  type EvaluateJarTestInput,
  type JarProblem,
  type JarProductFacts,
  type JarProductOptions,
  type JarTestEvaluation,
  type JarTestPlan,
} from '../../../jar-tests/index.js';
import { jarTestEvaluationDocument, jarTestPlanDocument, type JarSheetContext } from '../../../sheets/jar-test-sheets.js';
import { renderSheet } from '../../../sheets/pdf.js';
import { renderSignedSheet } from '../../../sheets/sign.js';
import { safetyBoxFromCautions } from '../../../sheets/safety.js';
import type { SafetyBox } from '../../../sheets/model.js';
import { canonicalJson, newSheetId, sha256Hex, sheetContentSha256, type SheetRecord, type SheetSummary, type User } from '../../../archive/index.js';
import { findPlant } from './dosing.js';
import { correctionWarnings } from '../../issue-sheet.js';
import { INTEGRITY_HEADER, integrityHeader, integrityOut } from './sheets.js';
import {
  CheckOut,
  EvaluationCreatedOut,
  EvaluationId,
  EvaluationRecordOut,
  JarCheckBody,
  JarEvaluationBody,
  JarPlanBody,
  PlanOut,
  type JarCheckBodyT,
  type JarEvaluationBodyT,
  type JarPlanBodyT,
} from '../../schemas/jar-tests.js';
import { defineRoute } from '../../route.js';
import { requireRole } from '../../auth.js';
import type { Services } from '../../services.js';

const BASE = '/api/v1/jar-tests';
const MG_PER_L = 'mg/L';

// ---------------------------------------------------------------------------------------------
// units and pointers

const rep = (value: number, unit: string) => ({ value, unit, rounded: roundSig(value, 3) });
const repB = (value: number, unit: string, basis: string) => ({ ...rep(value, unit), basis });
const mgPerL = (q: Quantity, pointer: string): number => toBaseDec('concentration', q, pointer).toNumber();
const litres = (q: Quantity, pointer: string): number => toBaseDec('volume', q, pointer).toNumber();
/** A finite number, else null (what the archive can store). */
const lowerFirst = (s: string) => s.charAt(0).toLowerCase() + s.slice(1);
const num = (x: number | null | undefined): number | null => (typeof x === 'number' && Number.isFinite(x) ? x : null);

/** Stock strength in g/L on the dose basis: g/L and mg/mL as they are, % w/v × 10. */
export function stockGPerL(q: { value: number; unit: 'g/L' | 'mg/mL' | '% w/v' }, pointer: string): number {
  if (q.unit === '% w/v') {
    if (q.value > 100) {
      throw new DomainError('QUANTITY_OUT_OF_RANGE', {
        detail: `A stock of ${q.value} % w/v is more than 100 g per 100 mL; give at most 100 % w/v, or the strength in g/L.`,
        fields: [{ pointer: `${pointer}/value`, message: 'a strength in % w/v must be at most 100' }],
      });
    }
    return q.value * 10;
  }
  return q.value;
}

/** The domain's input names in its sentences, in the request's words. */
export function requestWords(text: string): string {
  return text
    .replace(/ or estimateMgPerL\b/g, '')
    .replace(/\bestimateMgPerL\b/g, 'the sample readings')
    .replace(/\bstockStrengthGPerL\b/g, 'stockStrength')
    .replace(/\b(residualOxidant|iron|manganese|dose)MgPerL\b/g, '$1');
}

/** Run a domain call; a DomainError's field pointers (and the same pointers in its detail) are mapped onto the request. */
function mapped<T>(fn: () => T, map: (pointer: string) => string): T {
  try {
    return fn();
  } catch (e) {
    if (!(e instanceof DomainError) || e.fields.length === 0) throw e;
    const fields: FieldProblem[] = e.fields.map((f) => ({ pointer: map(f.pointer), message: requestWords(f.message) }));
    let detail = e.detail;
    const pairs = e.fields.map((f) => [f.pointer, map(f.pointer)] as const).filter(([a, b]) => a !== b && a.length > 1);
    for (const [from, to] of [...pairs].sort((a, b) => b[0].length - a[0].length)) detail = detail.split(`${from} `).join(`${to} `);
    throw new DomainError(e.code, { detail: requestWords(detail), params: e.params, fields });
  }
}

function commonPointer(p: string): string | null {
  if (p === '/estimateMgPerL') return '/sample';
  if (p === '/backgroundMgPerL') return '/backgroundDemand';
  if (p === '/targetResidualMgPerL') return '/targetResidual/value';
  if (p === '/jarVolumeL') return '/jarVolume/value';
  if (p === '/productPerBasis' || p.startsWith('/solubility')) return '/oxidant';
  return null;
}

const planPointer = (body: JarPlanBodyT) => (p: string): string => {
  const c = commonPointer(p);
  if (c !== null) return c;
  if (p === '/stockStrengthGPerL') return body.stockStrength ? '/stockStrength/value' : '/stockStrength';
  const dose = /^\/doses\/(\d+)$/.exec(p);
  if (dose) return `/doses/${dose[1]}/value`;
  if (p === '/purityPercent' || p === '/product/stock/purityFraction') return body.product?.purity ? '/product/purity/value' : '/oxidant';
  if (p === '/product/stock/tradeStrengthGPerL') return body.product?.strength ? '/product/strength/value' : '/oxidant';
  if (p.startsWith('/product')) return body.product ? p.replace(/^\/product\/stock.*/, '/product') : '/oxidant';
  if (p === '/ladderToFraction' || p === '/ladderFromFraction') return '/doses';
  return p;
};

const checkPointer = (p: string): string => {
  const c = commonPointer(p);
  if (c !== null) return c;
  if (p === '/stockStrengthGPerL') return '/stockStrength/value';
  const dose = /^\/jars\/(\d+)\/doseMgPerL$/.exec(p);
  if (dose) return `/jars/${dose[1]}/dose/value`;
  return p;
};

const evaluationPointer = (p: string): string => {
  const c = commonPointer(p);
  if (c !== null) return c;
  const dose = /^\/jars\/(\d+)\/doseMgPerL$/.exec(p);
  if (dose) return `/jars/${dose[1]}/dose/value`;
  const r = /^\/jars\/(\d+)\/results\/(\d+)\/(residualOxidant|iron|manganese)MgPerL$/.exec(p);
  if (r) return `/jars/${r[1]}/results/${r[2]}/${r[3]}/value`;
  const t = /^\/targets\/(iron|manganese|residualOxidant|residualOxidantMax)MgPerL$/.exec(p);
  if (t) return `/targets/${t[1]}/value`;
  if (p === '/detectionLimitMgPerL') return '/detectionLimit/value';
  if (p.startsWith('/margin')) return '/marginPercent';
  if (p.startsWith('/limits')) return '/targets';
  return p;
};

// ---------------------------------------------------------------------------------------------
// the estimate, the product, the safety box

export interface JarEstimate {
  readonly value: number;
  readonly unit: string;
  readonly rounded: string;
  readonly basis: string;
  readonly includes: string;
  readonly terms: {
    contaminant: string;
    field: string;
    name: string;
    concentration: { value: number; unit: string; rounded: string };
    ratio: number;
    ratioUnit: string;
    demand: { value: number; unit: string; rounded: string };
    reaction: string;
    source: string;
  }[];
}

/**
 * The stoichiometric estimate (Σ contaminant demand terms of computeDose), the background term and, when a
 * target residual is given, the residual term and the dose route's flags about it (e.g. above the MRDL).
 */
export function jarEstimate(services: Services, oxidant: DoseRequest['oxidant'], sample: SampleInput, backgroundDemand?: BackgroundDemandInput, targetResidual?: ConcentrationInput) {
  const request: DoseRequest = {
    oxidant,
    sample,
    ...(backgroundDemand !== undefined ? { backgroundDemand } : {}),
    ...(targetResidual !== undefined ? { targetResidual } : {}),
  };
  const result = computeDose(request, services.dosing);
  const ox = services.dosing.oxidants.get(oxidant)!;
  const terms = result.demand.map((d) => ({
    contaminant: d.contaminant,
    field: d.field,
    name: d.name,
    concentration: { value: d.concentration.value, unit: d.concentration.unit, rounded: d.concentration.rounded },
    ratio: d.ratio,
    ratioUnit: d.ratioUnit,
    demand: { value: d.demand.value, unit: d.demand.unit, rounded: d.demand.rounded },
    reaction: d.reaction,
    source: d.source,
  }));
  const value = terms.reduce((s, t) => s + t.demand.value, 0);
  const includes =
    terms.length > 0
      ? `Σ of the stoichiometric demands of ${terms.map((t) => lowerFirst(t.name)).join(' and ')} in the sample, each from its balanced reaction with ${lowerFirst(ox.name)} (terms); background demand and residual are not included.`
      : `No reading in the sample reacts with ${lowerFirst(ox.name)} in the tables, so the stoichiometric estimate is 0 mg/L; background demand is not included.`;
  const estimate: JarEstimate = { ...repB(value, MG_PER_L, `as ${ox.doseBasis}`), includes, terms };
  const bgTerm = result.terms.find((t) => t.term === 'background');
  const background = {
    mgPerL: backgroundDemand !== undefined && bgTerm ? bgTerm.value.value : 0,
    method: backgroundDemand === undefined ? 'not given: 0 mg/L' : bgTerm?.reason ?? 'as given',
  };
  const resTerm = result.terms.find((t) => t.term === 'residual');
  const residual = { mgPerL: targetResidual !== undefined && resTerm ? resTerm.value.value : 0, reason: resTerm?.reason ?? 'No target residual given: 0 mg/L.' };
  // Flags of the dose route about the residual itself (e.g. a target above the MRDL), passed on to the plan.
  const residualFlags = targetResidual !== undefined ? result.flags.filter((f) => f.code.startsWith('RESIDUAL_')) : [];
  return { estimate, background, residual, residualFlags, oxidant: ox };
}

/** The latest stored version of the plant profile a plan names, or null; a missing one is a 404 naming /plantId. */
function planPlant(services: Services, plantId: string | undefined, instead = 'or give targetResidual and product in the request instead'): { profile: PlantProfile; version: number } | null {
  if (plantId === undefined) return null;
  const stored = findPlant(services, plantId);
  if (!stored) {
    throw new DomainError('PLANT_NOT_FOUND', {
      detail: `No plant profile "${plantId}"; GET /api/v1/plants lists the stored ones, ${instead}.`,
      fields: [{ pointer: '/plantId', message: 'no stored plant profile with this id' }],
    });
  }
  return { profile: stored.profile as PlantProfile, version: stored.version };
}

function productFacts(services: Services, oxidant: string, product: JarPlanBodyT['product']): JarProductFacts {
  const row = services.dosing.oxidants.get(oxidant)!;
  const conv = services.dosing.conversions.get(oxidant);
  const st = product?.strength;
  if (st && st.unit !== 'g/L' && st.value > 100) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `A strength of ${st.value} ${st.unit} is more than 100 %; give at most 100, or the strength in g/L.`,
      fields: [{ pointer: '/product/strength/value', message: `a strength in ${st.unit} must be at most 100` }],
    });
  }
  // a product strength no solution can have is refused as POST /api/v1/doses refuses it (tables/strength-limits.json)
  if (st) {
    const limit = strengthLimitProblem(oxidant, { strength: st, ...(product?.density ? { density: product.density } : {}) }, '/product', services.dosing.strengthLimits);
    if (limit) throw new DomainError('QUANTITY_OUT_OF_RANGE', { detail: `${limit.message}.`, fields: [{ pointer: limit.pointer, message: limit.message }], params: { strengthLimit: limit.params } });
  }
  const sl = strengthLimitFor(oxidant, services.dosing.strengthLimits);
  const options: JarProductOptions = {
    ...(sl?.kind === 'solubility' && !sl.fromSolubilityTable
      ? { solubilityLimit: { gramsPer100gWater: Number(sl.gramsPer100gWater), temperatureC: Number(sl.temperatureC), source: sl.source, of: sl.of, fromMemory: sl.fromMemory } }
      : {}),
    ...(conv ? { productPerBasis: conv.productPerBasis.toNumber() } : {}),
    ...(product?.purity ? { purityPercent: product.purity.value } : {}),
    ...(st
      ? { tradeStrength: { value: st.value, unit: st.unit, ...(product?.density ? { densityKgPerL: product.density.value } : {}), ...(product?.strengthMeasured !== undefined ? { measured: product.strengthMeasured } : {}) } }
      : {}),
  };
  return jarProductFacts(row, options);
}

function safetyFor(services: Services, oxidant: string): SafetyBox {
  const ox = services.dosing.oxidants.get(oxidant)!;
  const cautions = services.dosing.cautionsByOxidant.get(oxidant)?.details ?? [];
  const sources = [...new Set(cautions.map((c) => c.source))].map((id) => ({ id, citation: services.dosing.citations.get(id) ?? id }));
  return safetyBoxFromCautions({
    productName: ox.name,
    productDescription: `${ox.name}, ${ox.productFormula}; jar doses and stock strength as ${ox.doseBasis}. Read the product's safety data sheet before handling.`,
    cautions,
    sources,
  });
}

const problemsOut = (list: readonly JarProblem[]) => list.map((p) => ({ code: p.code, severity: p.severity, message: requestWords(p.message), ...(p.jar !== undefined ? { jar: p.jar } : {}) }));

// ---------------------------------------------------------------------------------------------
// Accept

/** 'pdf' when the Accept header prefers application/pdf to JSON, 'json' otherwise; null when it accepts neither. */
export function preferredRepresentation(accept: string | undefined): 'json' | 'pdf' | null {
  if (accept === undefined || accept.trim() === '') return 'json';
  const ranges = accept.split(',').map((part) => {
    const [type, ...params] = part.trim().toLowerCase().split(';');
    const q = params.map((p) => /^\s*q\s*=\s*([0-9.]+)\s*$/.exec(p)).find((m) => m !== null);
    return { type: (type ?? '').trim(), q: q ? Number(q[1]) : 1 };
  });
  const qOf = (mime: string): number => {
    const [major] = mime.split('/');
    const exact = ranges.find((r) => r.type === mime);
    if (exact) return exact.q;
    const partial = ranges.find((r) => r.type === `${major}/*`);
    if (partial) return partial.q;
    return ranges.find((r) => r.type === '*/*')?.q ?? 0;
  };
  const pdf = qOf('application/pdf');
  const json = qOf('application/json');
  if (pdf > json) return 'pdf';
  if (json > 0) return 'json';
  return pdf > 0 ? 'pdf' : null;
}

// ---------------------------------------------------------------------------------------------
// plan

export function makeJarPlan(services: Services, body: JarPlanBodyT) {
  // A plant profile fills what the request leaves out, as for POST /api/v1/doses: the target residual
  // (per oxidant, else the plant's) and the product on hand (strength, density, purity).
  const plant = planPlant(services, body.plantId);
  const fromPlant: string[] = [];
  let targetResidual = body.targetResidual;
  let productBody = body.product;
  let plantResidualNote: string | null = null;
  if (plant !== null) {
    // the same rule as a dose: a residual belongs to its oxidant or its basis, never another's
    const merge = services.dosing.plantMergeOxidants;
    const r = plantResidualFor(plant.profile, body.oxidant, (id) => merge.get(id)?.doseBasis ?? id);
    if (targetResidual === undefined && r.value !== undefined) {
      targetResidual = r.value;
      fromPlant.push('targetResidual');
      plantResidualNote = r.residual.used ? `from the plant profile: ${r.residual.used.entry}, ${r.residual.used.reason}` : null;
    } else if (targetResidual === undefined) {
      plantResidualNote = r.residual.forOtherOxidant;
    }
    const onHand = merge.get(body.oxidant)?.fedAsGas ? undefined : plant.profile.products.find((p) => p.oxidant === body.oxidant);
    if (productBody === undefined && onHand !== undefined) {
      productBody = { strength: onHand.strength, ...(onHand.density ? { density: onHand.density } : {}), ...(onHand.purity ? { purity: onHand.purity } : {}) };
      fromPlant.push('product');
    }
  }
  const { estimate, background, residual, residualFlags, oxidant: ox } = jarEstimate(services, body.oxidant, body.sample, body.backgroundDemand, targetResidual);
  const product = mapped(() => productFacts(services, body.oxidant, productBody), planPointer(body));
  const jarVolumeL = litres(body.jarVolume, '/jarVolume');
  const doses = body.doses?.map((d, i) => mgPerL(d, `/doses/${i}`));
  const stock = body.stockStrength ? stockGPerL(body.stockStrength, '/stockStrength') : undefined;
  const plan = mapped(
    () =>
      planJarTest({
        oxidant: body.oxidant,
        product,
        estimateMgPerL: estimate.value,
        backgroundMgPerL: background.mgPerL,
        ...(targetResidual !== undefined ? { targetResidualMgPerL: residual.mgPerL } : {}),
        jarVolumeL,
        ...(body.jars !== undefined ? { jars: body.jars } : {}),
        ...(doses !== undefined ? { doses } : {}),
        ...(stock !== undefined ? { stockStrengthGPerL: stock } : {}),
        ...(body.pipetteResolutionMl !== undefined ? { pipetteResolutionMl: body.pipetteResolutionMl } : {}),
        ...(body.contactTimesMin !== undefined ? { contactTimesMin: body.contactTimesMin } : {}),
      }),
    planPointer(body),
  );
  const flagWarnings: JarProblem[] = residualFlags.map((f) => ({ code: f.code, severity: f.severity === 'danger' || f.severity === 'warning' ? 'warning' : 'info', message: f.message }));
  if (plantResidualNote !== null && !fromPlant.includes('targetResidual')) flagWarnings.push({ code: 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT', severity: 'warning', message: plantResidualNote });
  const withFlags: JarTestPlan = flagWarnings.length > 0 ? { ...plan, warnings: [...plan.warnings, ...flagWarnings] } : plan;
  const residualSource: 'request' | 'plant profile' | 'not given' = fromPlant.includes('targetResidual') ? 'plant profile' : targetResidual !== undefined ? 'request' : 'not given';
  const plantInfo = plant === null ? null : { id: plant.profile.id, name: plant.profile.name, version: plant.version, invented: plant.profile.invented, preferredUnits: plant.profile.preferredUnits, fromPlant };
  const residualReason = fromPlant.includes('targetResidual') && plantResidualNote !== null ? `${residual.reason.replace(/\.$/, '')} (${plantResidualNote}).` : residual.reason;
  const residualFrom = fromPlant.includes('targetResidual') ? plantResidualNote : null;
  return { plan: withFlags, estimate, background, residual: { ...residual, reason: residualReason, source: residualSource }, residualFrom, plant: plantInfo, oxidant: ox };
}

/** What the planned dose is made of, in words (the plan's "includes"). */
function plannedDoseIncludes(plan: JarTestPlan, residualSource: 'request' | 'plant profile' | 'not given'): string {
  const e = plan.estimate;
  const r = residualSource === 'not given' ? 'target residual not given (0 mg/L)' : `target residual ${roundSig(e.targetResidualMgPerL, 3)} mg/L${residualSource === 'plant profile' ? ' (from the plant profile)' : ''}`;
  return (
    `stoichiometric estimate ${roundSig(e.doseMgPerL, 3)} + background demand ${roundSig(e.backgroundMgPerL, 3)} + ${r}: the dose POST /api/v1/doses computes for the same oxidant, sample, backgroundDemand and targetResidual. ` +
    (plan.ladder.source === 'default'
      ? `The ladder runs from ${Number(((plan.ladder.fromFraction ?? 0) * 100).toPrecision(3))} % of the expected demand (estimate + background) to ${Number(((plan.ladder.toFraction ?? 0) * 100).toPrecision(3))} % of this planned dose.`
      : 'The doses were given by the caller.')
  );
}

function planOut(m: ReturnType<typeof makeJarPlan>) {
  const { plan, estimate, background, residual, plant, oxidant: ox } = m;
  const basis = `as ${plan.basis}`;
  const st = plan.stock;
  const prep = st.preparation;
  const preparation =
    prep.kind === 'weigh'
      ? { kind: prep.kind, productMass: rep(prep.productMassG, 'g'), purityPercent: prep.purityFraction * 100, purityAssumed: prep.purityAssumed }
      : prep.kind === 'dilute'
        ? { kind: prep.kind, tradeVolume: rep(prep.tradeVolumeMl, 'mL'), tradeStrength: rep(prep.tradeStrengthGPerL, 'g/L'), tradeStrengthMustBeMeasured: prep.tradeStrengthMustBeMeasured }
        : { kind: prep.kind, measureBy: prep.measureBy, stockSolution: prep.stock, make: prep.make };
  return {
    oxidant: { id: ox.id, name: ox.name, basis },
    plant,
    estimate,
    backgroundDemand: { ...repB(plan.estimate.backgroundMgPerL, MG_PER_L, basis), method: background.method },
    expectedDemand: { ...repB(plan.estimate.expectedDemandMgPerL, MG_PER_L, basis), how: 'stoichiometric estimate + background demand: the demand the ladder brackets' },
    targetResidual: { ...repB(plan.estimate.targetResidualMgPerL, MG_PER_L, basis), source: residual.source, reason: residual.reason },
    plannedDose: { ...repB(plan.estimate.plannedDoseMgPerL, MG_PER_L, basis), includes: plannedDoseIncludes(plan, residual.source) },
    ladder: plan.ladder,
    jarVolume: { value: plan.jarVolumeL, unit: 'L' },
    pipetteResolutionMl: plan.pipetteResolutionMl,
    minAliquotMl: plan.minAliquotMl,
    maxAliquotMl: plan.maxAliquotMl,
    dilutionCorrected: plan.dilutionCorrected,
    stock: {
      strength: repB(st.strengthGPerL, 'g/L', basis),
      strengthChoice: st.strengthChoice,
      productMass: st.productMassG === null ? null : rep(st.productMassG, 'g'),
      flaskVolume: { value: st.flaskVolumeMl, unit: 'mL' },
      preparation,
      stockUsed: rep(st.stockUsedMl, 'mL'),
      stockWanted: rep(st.stockWantedMl, 'mL'),
      solubility: st.solubilityGPerL === null ? null : { value: st.solubilityGPerL, unit: 'g/L' },
      instructions: [...st.instructions],
    },
    jars: plan.jars.map((j) => ({
      jar: j.jar,
      dose: rep(j.targetDoseMgPerL, MG_PER_L),
      aliquotMl: j.aliquotMl,
      aliquotExactMl: j.aliquotExactMl,
      actualDose: rep(j.actualDoseMgPerL, MG_PER_L),
      aliquotPercentOfJar: j.aliquotFractionOfJar * 100,
      expectedResidual: rep(j.expectedResidualMgPerL, MG_PER_L),
    })),
    schedule: plan.schedule,
    warnings: problemsOut(plan.warnings),
    assumptions: [...plan.assumptions],
    pdf: `POST ${BASE}/plans with "Accept: application/pdf" returns the bench sheet (unsigned; plans are not archived).`,
  };
}

/**
 * Bench sheet ids are not archive ids: JTP-<UTC day>-<first 10 hex of the request's SHA-256>; with a plant
 * profile, of the request and the profile version used, so a new profile version gives a new id.
 */
function planSheetId(body: JarPlanBodyT, now: Date, plant: { id: string; version: number } | null): string {
  const hashed = plant === null ? body : { request: body, plant: { id: plant.id, version: plant.version } };
  return `JTP-${now.toISOString().slice(0, 10).replace(/-/g, '')}-${sha256Hex(canonicalJson(hashed)).slice(0, 10).toUpperCase()}`;
}

export async function renderJarPlanPdf(
  services: Services,
  body: JarPlanBodyT,
  plan: JarTestPlan,
  now = new Date(),
  plant: { id: string; name: string; version: number; preferredUnits?: 'SI' | 'US' } | null = null,
  residualFrom: string | null = null,
): Promise<{ id: string; pdf: Buffer }> {
  const ox = services.dosing.oxidants.get(body.oxidant)!;
  const id = planSheetId(body, now, plant);
  const ctx: JarSheetContext = {
    id,
    issuedAt: now.toISOString(),
    preparedBy: { name: 'oxidant-dosing service', role: 'computed bench plan, not signed' },
    productName: ox.name,
    safety: safetyFor(services, body.oxidant),
    ...(plant !== null ? { plantName: `${plant.name} (profile ${plant.id}, version ${plant.version})` } : {}),
    ...(residualFrom !== null ? { residualFrom } : {}),
    ...(body.sampleLabel ? { sampleLabel: body.sampleLabel } : {}),
    ...(body.samplingPoint ? { samplingPoint: body.samplingPoint } : {}),
    ...(body.sampledAt ? { sampledAt: body.sampledAt } : {}),
    // paper as for dose sheets: the request's pageSize, else Letter for a plant that works in US units
    pageSize: body.pageSize ?? (plant?.preferredUnits === 'US' ? 'LETTER' : 'A4'),
  };
  return { id, pdf: await renderSheet(jarTestPlanDocument(plan, ctx)) };
}

// ---------------------------------------------------------------------------------------------
// check

function checkOut(services: Services, body: JarCheckBodyT) {
  const ox = services.dosing.oxidants.get(body.oxidant)!;
  const basis = `as ${ox.doseBasis}`;
  const est = body.sample ? jarEstimate(services, body.oxidant, body.sample, body.backgroundDemand) : null;
  if (!body.sample && body.backgroundDemand) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: 'A background demand only counts with the sample readings it adds to; give sample too, or leave backgroundDemand out.',
      fields: [{ pointer: '/sample', message: 'needed when backgroundDemand is given' }],
    });
  }
  const facts = mapped(() => productFacts(services, body.oxidant, undefined), checkPointer);
  if (facts.stock.kind === 'aeration') throw aerationNotPlanned(facts);
  const solubility = facts.stock.kind === 'solid' || facts.stock.kind === 'generated' ? facts.stock.solubility : undefined;
  const jarVolumeL = litres(body.jarVolume, '/jarVolume');
  const C = stockGPerL(body.stockStrength, '/stockStrength');
  // A stock diluted from a liquid concentrate is no stronger than the concentrate: the limits POST /api/v1/doses
  // puts on a product strength (tables/strength-limits.json) hold for it too.
  let strengthLimit: { severity: 'error' | 'warning'; message: string } | undefined;
  if (facts.stock.kind === 'trade-solution') {
    // The limits are stated on the product's strength formula (NaMnO4 for sodium permanganate); the stock
    // strength is on the dose basis (as KMnO4): converted by the molar masses first, as the plan does.
    const sl = strengthLimitFor(body.oxidant, services.dosing.strengthLimits);
    const conv = services.dosing.conversions.get(body.oxidant);
    const onProduct = sl !== undefined && sl.kind !== 'none' && sl.strengthOf === ox.productFormula && ox.productFormula !== ox.doseBasis && conv !== undefined;
    const factor = onProduct ? conv.productPerBasis.toNumber() : 1;
    const P = C * factor;
    const asProduct = { strength: { value: P, unit: 'g/L' } };
    const stockText = onProduct
      ? `The stock, ${Number(C.toPrecision(6))} g/L as ${ox.doseBasis}, is ${roundSig(P, 4)} g/L ${ox.productFormula} (× ${roundSig(factor, 4)} g ${ox.productFormula} per g ${ox.doseBasis}, from the molar masses)`
      : null;
    // the converted figure as the limit's message prints it, to 4 significant figures
    const shown = (m: string) => (onProduct ? m.split(String(P)).join(roundSig(P, 4)) : m);
    const refused = strengthLimitProblem(body.oxidant, asProduct, '/product', services.dosing.strengthLimits);
    if (refused) strengthLimit = { severity: 'error', message: `${stockText === null ? 'The stock:' : `${stockText}:`} ${shown(refused.message)}.` };
    else {
      const above = strengthLimitFlags(ox, asProduct, 20, 'not used', false, services.dosing.strengthLimits);
      if (above[0]) {
        const m = shown(above[0].message)
          .replace(/^The product strength, (.+?), is above /, stockText === null ? 'A stock of $1 is above ' : `${stockText}, above `)
          .replace(/ Check the strength on the certificate[^]*$/, ' Check the stock strength and its unit: a jar stock is diluted from the trade product, never stronger than it.');
        strengthLimit = { severity: 'warning', message: m };
      }
    }
  }
  const check = mapped(
    () =>
      checkJarPlan({
        oxidant: body.oxidant,
        ...(est ? { estimateMgPerL: est.estimate.value, backgroundMgPerL: est.background.mgPerL } : {}),
        jarVolumeL,
        stockStrengthGPerL: C,
        jars: body.jars.map((j, i) => ({
          ...(j.dose ? { doseMgPerL: mgPerL(j.dose, `/jars/${i}/dose`) } : {}),
          ...(j.aliquotMl !== undefined ? { aliquotMl: j.aliquotMl } : {}),
        })),
        ...(body.contactTimesMin !== undefined ? { contactTimesMin: body.contactTimesMin } : {}),
        ...(body.pipetteResolutionMl !== undefined ? { pipetteResolutionMl: body.pipetteResolutionMl } : {}),
        ...(solubility !== undefined ? { solubility } : {}),
        ...(strengthLimit !== undefined ? { strengthLimit } : {}),
      }),
    checkPointer,
  );
  const orNull = (x: number | null) => (x === null ? null : rep(x, MG_PER_L));
  return {
    oxidant: { id: ox.id, name: ox.name, basis },
    jarVolume: { value: check.jarVolumeL, unit: 'L' },
    stockStrength: repB(check.stockStrengthGPerL, 'g/L', basis),
    pipetteResolutionMl: check.pipetteResolutionMl,
    estimate: est ? est.estimate : null,
    expectedDemand: orNull(check.expectedDemandMgPerL),
    solubility: solubility ? { value: solubility.gPerL, unit: 'g/L', temperatureC: solubility.temperatureC ?? null, source: solubility.source ?? null } : null,
    jars: check.jars.map((j) => ({
      jar: j.jar,
      dose: orNull(j.doseMgPerL),
      aliquotMl: j.aliquotMl,
      recomputedDose: orNull(j.recomputedDoseMgPerL),
      recomputedAliquotMl: j.recomputedAliquotMl,
      nominalDose: orNull(j.nominalDoseMgPerL),
      problems: problemsOut(j.problems),
    })),
    problems: problemsOut(check.problems),
    ok: check.ok,
    toleranceRule: check.toleranceRule,
  };
}

// ---------------------------------------------------------------------------------------------
// evaluation

/** What the archive stores as the evaluation's result (covered by the content hash and the PDF footer). */
export interface StoredEvaluation {
  readonly format: 'oxd-jar-test-evaluation/1';
  readonly oxidant: { id: string; name: string; basis: string };
  readonly estimate: JarEstimate;
  /** The domain evaluation, with non-finite numbers stored as null. */
  readonly evaluation: JarTestEvaluation;
  /** The contact time the recommendation and the reported lowest dose refer to. */
  readonly benchContactTimeMin: number;
  readonly sampledAtGiven: boolean;
  /** The residual plot exactly as drawn when the sheet was made (served by plot.svg). */
  readonly plotSvg: string;
}

/** Deep copy with NaN and ±Infinity as null (canonical JSON refuses them). */
function jsonSafe<T>(x: T): T {
  return JSON.parse(JSON.stringify(x, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v))) as T;
}

/** The bench contact time the recommendation uses: the longest not beyond the plant's, else the first; the longest when not given. */
function benchTime(times: readonly number[], plantContactTimeMin: number | undefined): number {
  if (plantContactTimeMin === undefined) return times[times.length - 1]!;
  const within = times.filter((t) => t <= plantContactTimeMin);
  return within.length > 0 ? within[within.length - 1]! : times[0]!;
}

export function evaluationInput(services: Services, body: JarEvaluationBodyT, estimateMgPerL: number, basis: string): EvaluateJarTestInput {
  const t = body.targets;
  const q = (x: Quantity | undefined, pointer: string) => (x === undefined ? undefined : mgPerL(x, pointer));
  const targets = t
    ? {
        ...(t.iron ? { ironMgPerL: q(t.iron, '/targets/iron') } : {}),
        ...(t.manganese ? { manganeseMgPerL: q(t.manganese, '/targets/manganese') } : {}),
        ...(t.residualOxidant ? { residualOxidantMgPerL: q(t.residualOxidant, '/targets/residualOxidant') } : {}),
        ...(t.residualOxidantMax ? { residualOxidantMaxMgPerL: q(t.residualOxidantMax, '/targets/residualOxidantMax') } : {}),
      }
    : undefined;
  return {
    oxidant: body.oxidant,
    basis,
    estimateMgPerL,
    jarVolumeL: litres(body.jarVolume, '/jarVolume'),
    jars: body.jars.map((j, i) => ({
      doseMgPerL: mgPerL(j.dose, `/jars/${i}/dose`),
      results: j.results.map((r, k) => {
        const at = `/jars/${i}/results/${k}`;
        return {
          contactTimeMin: r.contactTimeMin,
          ...(r.residualOxidant ? { residualOxidantMgPerL: mgPerL(r.residualOxidant, `${at}/residualOxidant`) } : {}),
          ...(r.iron ? { ironMgPerL: mgPerL(r.iron, `${at}/iron`) } : {}),
          ...(r.manganese ? { manganeseMgPerL: mgPerL(r.manganese, `${at}/manganese`) } : {}),
          ...(r.turbidityNTU !== undefined ? { turbidityNTU: r.turbidityNTU } : {}),
          ...(r.note !== undefined ? { note: r.note } : {}),
        };
      }),
    })),
    ...(targets ? { targets } : {}),
    limits: secondaryLimitTargets(services.dosing.limits),
    ...(body.detectionLimit ? { detectionLimitMgPerL: mgPerL(body.detectionLimit, '/detectionLimit') } : {}),
    ...(body.fitContactTimeMin !== undefined ? { fitContactTimeMin: body.fitContactTimeMin } : {}),
    ...(body.plantContactTimeMin !== undefined ? { plantContactTimeMin: body.plantContactTimeMin } : {}),
    ...(body.marginPercent !== undefined ? { margin: { kind: 'relative' as const, fraction: body.marginPercent / 100 } } : {}),
  };
}

/**
 * The daily dose route's checks at the recommended dose: the residual against the MRDL and guideline
 * values, chlorite, bromate, disinfection by-products, chlorate, alkalinity and pH. The dose is
 * recomputed for the same oxidant and sample with the expected residual as its target and the rest
 * of the recommendation above the stoichiometric estimate as background demand, so that it adds up
 * to the recommended dose; the flags come back as the evaluation's problems (danger as error).
 */
const CHECKS_AT_RECOMMENDATION = new Set([
  'RESIDUAL_ABOVE_MRDL', 'RESIDUAL_ABOVE_GUIDELINE', 'CHLORITE_ABOVE_MCL', 'CHLORITE_ABOVE_WHO', 'BROMATE_RISK', 'BROMIDE_NOT_GIVEN',
  'DBP_CAUTION', 'CHLORATE_CHECK', 'ALKALINITY_EXHAUSTED', 'PH_DROP_LARGE', 'BREAKPOINT_CHLORAMINES',
]);
export function checksAtRecommendation(services: Services, body: JarEvaluationBodyT, evaluation: JarTestEvaluation, estimateMgPerL: number): JarTestEvaluation['problems'] {
  const rec = evaluation.recommendedDose;
  if (rec === null || !(rec.doseMgPerL > 0)) return [];
  // Reported figures, not float noise, go into the dose route's messages.
  const dose = Number(rec.doseMgPerL.toPrecision(6));
  const residual = Number((rec.expectedResidualMgPerL ?? 0).toPrecision(6));
  // The dose route's dose is estimate + background + residual: the expected residual as the target and
  // the rest above the stoichiometric estimate as background, so that it adds up to the recommendation.
  // When the jars used less oxidant than the readings imply (the recommendation is below estimate +
  // residual), the readings' reactions are not counted: what the jars consumed stands as the demand.
  const belowReadings = dose - residual < estimateMgPerL - 1e-9 * Math.max(1, estimateMgPerL);
  const sample = belowReadings ? Object.fromEntries(Object.entries(body.sample).filter(([k]) => !(CONTAMINANT_FIELDS as readonly string[]).includes(k))) : body.sample;
  const background = belowReadings ? dose - residual : dose - estimateMgPerL - residual;
  let result;
  try {
    result = computeDose(
      { oxidant: body.oxidant, sample: sample as DoseRequest['sample'], backgroundDemand: { value: Math.max(0, background), unit: 'mg/L' }, targetResidual: { value: residual, unit: 'mg/L' } },
      services.dosing,
    );
  } catch (e) {
    if (!(e instanceof DomainError)) throw e;
    return [{ code: 'DOSE_CHECKS_NOT_RUN', severity: 'warning', message: `The daily dose checks (residual limits, by-products, alkalinity) could not be run at the recommended ${roundSig(dose, 3)} mg/L: ${e.detail} Check the recommendation with POST /api/v1/doses.` }];
  }
  const residualText =
    rec.expectedResidualMgPerL !== null ? ` (expected residual ${roundSig(residual, 3)} mg/L)` : ' (no residual is predicted without a residual line, so the residual limits are not judged)';
  const how = belowReadings
    ? `, with the ${roundSig(dose - residual, 3)} mg/L the jars consumed as its demand (less than the ${roundSig(estimateMgPerL, 3)} mg/L the readings imply, so their reactions are not counted)`
    : '';
  const at = `At the recommended ${roundSig(dose, 3)} mg/L${residualText}${how}, as POST /api/v1/doses judges it: `;
  return result.flags
    .filter((f) => CHECKS_AT_RECOMMENDATION.has(f.code))
    .map((f) => ({ code: f.code, severity: f.severity === 'danger' ? ('error' as const) : f.severity, message: `${at}${f.message}` }));
}

const urls = (id: string) => ({
  plotUrl: `${BASE}/evaluations/${id}/plot.svg`,
  pdfUrl: `${BASE}/evaluations/${id}/pdf`,
  verificationUrl: `/api/v1/sheets/${id}/verification`,
});

/** The answer of POST and GET, built from the stored result only (so both say the same). */
export function evaluationView(id: string, stored: StoredEvaluation) {
  const ev = stored.evaluation;
  const basis = `as ${ev.basis}`;
  const ap = ev.apparentDemand;
  const bg = ev.backgroundDemand;
  const rec = ev.recommendedDose;
  const q = (x: number | null) => (x === null ? null : { value: x, unit: MG_PER_L });
  const lowest = ev.lowestDoseMeetingTargets.find((l) => l.contactTimeMin === stored.benchContactTimeMin);
  return {
    id,
    oxidant: stored.oxidant,
    jarVolume: { value: ev.jarVolumeL, unit: 'L' },
    estimate: stored.estimate,
    apparentDemand: ap
      ? { ...repB(ap.doseMgPerL, MG_PER_L, basis), stdError: num(ap.stdError), ci95: ap.ci95.map((x) => num(x)), method: ap.method }
      : null,
    backgroundDemand: bg ? { ...repB(bg.doseMgPerL, MG_PER_L, basis), stdError: num(bg.stdError), how: 'apparent demand − stoichiometric estimate' } : null,
    lowestDoseMeetingTargets:
      lowest && lowest.doseMgPerL !== null && lowest.jar !== null
        ? { ...repB(lowest.doseMgPerL, MG_PER_L, basis), contactTimeMin: lowest.contactTimeMin, jar: lowest.jar, note: lowest.note }
        : null,
    lowestDoseByContactTime: ev.lowestDoseMeetingTargets.map((l) => ({
      contactTimeMin: l.contactTimeMin,
      dose: l.doseMgPerL === null ? null : rep(l.doseMgPerL, MG_PER_L),
      jar: l.jar,
      jarsMeeting: [...l.jarsMeeting],
      higherDosesFailing: [...l.higherDosesFailing],
      note: l.note,
    })),
    recommendedDose: rec
      ? {
          ...repB(rec.doseMgPerL, MG_PER_L, basis),
          baseDose: rep(rec.baseDoseMgPerL, MG_PER_L),
          from: rec.basis,
          contactTimeMin: rec.contactTimeMin,
          margin: { kind: rec.margin.kind, ...(rec.margin.kind === 'relative' ? { fraction: rec.margin.fraction } : {}), dose: rep(rec.margin.mgPerL, MG_PER_L), basis: rec.margin.basis },
          expectedResidual: rec.expectedResidualMgPerL === null ? null : rep(rec.expectedResidualMgPerL, MG_PER_L),
          reason: rec.reason,
        }
      : null,
    fit: ((fit) => fit === null ? null : {
      slope: fit.slope,
      intercept: fit.intercept,
      r2: num(fit.r2),
      interceptUnit: MG_PER_L,
      n: fit.n,
      contactTimeMin: fit.contactTimeMin,
      contactTimeChoice: fit.contactTimeChoice,
      jarsUsed: [...fit.jarsUsed],
      jarsExcluded: fit.jarsExcluded.map((x) => ({ ...x })),
      slopeStdError: num(fit.slopeStdError),
      interceptStdError: num(fit.interceptStdError),
      residualStdError: num(fit.residualStdError),
      degreesOfFreedom: fit.degreesOfFreedom,
      demandLine: { slope: fit.demandLine.slope, intercept: fit.demandLine.intercept, r2: num(fit.demandLine.r2) },
      what: `least-squares line of residual oxidant (mg/L ${basis}) against applied dose over the jars that kept a residual above the detection limit at ${fit.contactTimeMin} min; the apparent demand is where it crosses zero residual (−intercept/slope)`,
    })(ev.fit),
    detectionLimit: { value: ev.detectionLimitMgPerL, unit: MG_PER_L },
    contactTimesMin: [...ev.contactTimesMin],
    targets: ev.targets.map((t) => ({
      analyte: t.analyte,
      limit: { value: t.limitMgPerL, unit: MG_PER_L },
      comparison: t.comparison,
      origin: t.origin,
      ...(t.source !== undefined ? { source: t.source } : {}),
      ...(t.name !== undefined ? { name: t.name } : {}),
    })),
    jars: ev.jars.map((j) => ({
      jar: j.jar,
      dose: rep(j.doseMgPerL, MG_PER_L),
      results: j.results.map((r) => ({
        contactTimeMin: r.contactTimeMin,
        residualOxidant: q(r.residualOxidantMgPerL),
        residualBelowDetection: r.residualBelowDetection,
        consumed: q(r.consumedMgPerL),
        iron: q(r.ironMgPerL),
        manganese: q(r.manganeseMgPerL),
        turbidityNTU: num(r.turbidityNTU),
        note: r.note,
        meetsTargets: r.meetsTargets,
        failures: [...r.failures],
      })),
    })),
    problems: problemsOut(ev.problems),
    notes: [...ev.notes],
    ...urls(id),
  };
}

function archiveInfo(s: SheetSummary) {
  return {
    seq: s.seq,
    sha256: s.pdfSha256,
    contentSha256: s.contentSha256,
    recordHash: s.recordHash,
    prevHash: s.prevHash,
    createdAt: s.createdAt,
    createdBy: s.createdBy,
    sampledAt: s.sampledAt,
    signer: { name: s.signer.name, role: s.signer.role, subject: s.signer.subject },
    supersedes: s.supersedes,
    supersededBy: s.supersededBy,
    // recomputed on every read, as for dosing sheets: an altered record is never shown as current
    status: s.status,
    integrity: integrityOut(s),
  };
}

/** Evaluate, render, sign with the user's signer and append to the archive. */
export async function issueJarTestEvaluation(services: Services, user: User, body: JarEvaluationBodyT) {
  // a correction says why, as a dose sheet's does; the reason is stored in the hashed request
  const warnings = correctionWarnings(body.supersedes, body.correctionReason, 'evaluation');
  if (body.supersedes !== undefined) {
    let kind: string | null = null;
    try {
      kind = services.archive.getSheet(body.supersedes).kind;
    } catch (e) {
      if (!(e instanceof DomainError)) throw e;
    }
    if (kind !== 'jar-test-evaluation') {
      throw new DomainError('SHEET_SUPERSEDES_UNKNOWN', {
        detail: `${body.supersedes} is not a jar-test evaluation in the archive; a correction must name an existing evaluation.`,
        fields: [{ pointer: '/supersedes', message: 'no such jar-test evaluation' }],
      });
    }
  }
  // The plant the test was run for, as a plan names it: it must be stored (404 naming /plantId otherwise).
  const plant = planPlant(services, body.plantId, 'or leave plantId out');
  const { estimate, oxidant: ox } = jarEstimate(services, body.oxidant, body.sample);
  const input = evaluationInput(services, body, estimate.value, ox.doseBasis);
  const evaluated = mapped(() => evaluateJarTest(input), evaluationPointer);
  const evaluation: JarTestEvaluation = { ...evaluated, problems: [...evaluated.problems, ...checksAtRecommendation(services, body, evaluated, estimate.value)] };
  const plot = residualPlotData(evaluation);
  const now = new Date();
  const id = newSheetId('jar-test-evaluation', now);
  const result: StoredEvaluation = {
    format: 'oxd-jar-test-evaluation/1',
    oxidant: { id: ox.id, name: ox.name, basis: `as ${ox.doseBasis}` },
    estimate,
    evaluation: jsonSafe(evaluation),
    benchContactTimeMin: benchTime(evaluation.contactTimesMin, body.plantContactTimeMin),
    sampledAtGiven: body.sampledAt !== undefined,
    plotSvg: residualPlotSvg(evaluation),
  };
  const sampledAt = body.sampledAt ?? now.toISOString();
  // filed under the plant and the profile version in force, as dose sheets are (src/http/issue-sheet.ts)
  const content = {
    id,
    kind: 'jar-test-evaluation' as const,
    plantId: plant?.profile.id ?? null,
    plantVersion: plant?.version ?? null,
    sampledAt,
    supersedes: body.supersedes ?? null,
    request: body,
    result,
  };
  const contentSha256 = sheetContentSha256(content);
  const { stored, signer } = services.signerFor(user.id);
  const ctx: JarSheetContext = {
    id,
    issuedAt: now.toISOString(),
    preparedBy: { name: user.name, role: user.role },
    productName: ox.name,
    safety: safetyFor(services, body.oxidant),
    ...(plant !== null ? { plantName: `${plant.profile.name} (profile ${plant.profile.id}, version ${plant.version})` } : {}),
    ...(body.sampleLabel ? { sampleLabel: body.sampleLabel } : {}),
    ...(body.samplingPoint ? { samplingPoint: body.samplingPoint } : {}),
    ...(body.sampledAt ? { sampledAt: body.sampledAt } : {}),
    ...(body.supersedes ? { supersedes: body.supersedes } : {}),
    ...(body.supersedes && body.correctionReason ? { correctionReason: body.correctionReason } : {}),
    pageSize: body.pageSize ?? (plant?.profile.preferredUnits === 'US' ? 'LETTER' : 'A4'),
  };
  const { pdf } = await renderSignedSheet(jarTestEvaluationDocument(evaluation, ctx, plot), signer, { signingTime: now, contentSha256 });
  const saved = services.archive.appendSheet({ ...content, createdBy: user.id, signerId: stored.id, signedAs: { name: stored.name, role: stored.role }, pdf, contentSha256 });
  return { ...evaluationView(id, result), archive: archiveInfo(saved), warnings };
}

function requireEvaluation(services: Services, id: string): SheetRecord<unknown, StoredEvaluation> {
  const s = services.archive.getSheet<unknown, StoredEvaluation>(id);
  if (s.kind !== 'jar-test-evaluation') {
    throw new DomainError('SHEET_NOT_FOUND', {
      detail: `Sheet ${id} is a ${s.kind} sheet, not a jar-test evaluation; see /api/v1/sheets/${id}.`,
      fields: [{ pointer: '/id', message: 'not a jar-test evaluation' }],
    });
  }
  return s;
}

// ---------------------------------------------------------------------------------------------
// routes

export async function jarTestRoutes(app: FastifyInstance): Promise<void> {
  defineRoute(app, {
    method: 'POST',
    url: '/jar-tests/plans',
    summary:
      'Plan a jar test: the stoichiometric estimate from the sample, a dose ladder that brackets the demand and the planned dose (estimate + background + target residual, as POST /api/v1/doses computes it; the residual and product may come from a plant profile), the stock to make, each jar’s aliquot and the schedule. With "Accept: application/pdf" the bench sheet (unsigned) with blank result cells and the safety box.',
    tags: ['jar-tests'],
    body: JarPlanBody,
    response: { 200: PlanOut },
    produces: ['application/pdf'],
    handler: async (req, reply) => {
      const want = preferredRepresentation(req.headers.accept);
      if (want === null) {
        throw new DomainError('NOT_ACCEPTABLE', { detail: 'This route answers application/json (the plan) or application/pdf (the bench sheet); send an Accept header that allows one of them.' });
      }
      reply.header('vary', 'Accept');
      const m = makeJarPlan(app.services, req.body);
      if (want === 'pdf') {
        const { id, pdf } = await renderJarPlanPdf(app.services, req.body, m.plan, new Date(), m.plant, m.residualFrom);
        reply.header('content-type', 'application/pdf').header('content-disposition', `inline; filename="${id}.pdf"`);
        return pdf;
      }
      return planOut(m);
    },
  });

  defineRoute(app, {
    method: 'POST',
    url: '/jar-tests/checks',
    summary:
      'Check a jar-test plan someone wrote: recompute each jar’s dose from stock strength, jar volume and aliquot, and flag arithmetic errors, ladders that do not bracket the estimate, aliquots too large or below the pipette’s resolution, stock above solubility and missing contact times.',
    tags: ['jar-tests'],
    body: JarCheckBody,
    response: { 200: CheckOut },
    handler: async (req) => checkOut(app.services, req.body),
  });

  defineRoute(app, {
    method: 'POST',
    url: '/jar-tests/evaluations',
    summary:
      'Evaluate jar-test results (engineer role): residual line, apparent and background demand, lowest dose meeting the targets, recommended plant dose; rendered with the residual plot, signed with the caller’s certificate and appended to the archive.',
    tags: ['jar-tests'],
    auth: true,
    body: JarEvaluationBody,
    response: { 201: EvaluationCreatedOut },
    preHandler: requireRole('engineer'),
    handler: async (req, reply) => {
      const out = await issueJarTestEvaluation(app.services, req.user!, req.body);
      reply.code(201).header('location', `${BASE}/evaluations/${out.id}`);
      return out;
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/jar-tests/evaluations/:id',
    summary: 'An archived jar-test evaluation: the result as issued, the request it was made from and the archive record',
    tags: ['jar-tests'],
    params: EvaluationId,
    response: { 200: EvaluationRecordOut },
    handler: async (req, reply) => {
      const s = requireEvaluation(app.services, req.params.id);
      reply.header(INTEGRITY_HEADER, integrityHeader(s));
      return { ...evaluationView(s.id, s.result), archive: archiveInfo(s), request: s.request };
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/jar-tests/evaluations/:id/plot.svg',
    summary: 'The residual plot of an archived evaluation (SVG, as drawn when the sheet was made and stored with it)',
    tags: ['jar-tests'],
    params: EvaluationId,
    produces: ['image/svg+xml'],
    handler: async (req, reply) => {
      const s = requireEvaluation(app.services, req.params.id);
      reply.header('content-type', 'image/svg+xml; charset=utf-8').header('content-disposition', `inline; filename="${s.id}-residuals.svg"`);
      return s.result.plotSvg;
    },
  });

  defineRoute(app, {
    method: 'GET',
    url: '/jar-tests/evaluations/:id/pdf',
    summary: 'The signed evaluation sheet PDF as archived',
    tags: ['jar-tests'],
    params: EvaluationId,
    produces: ['application/pdf'],
    handler: async (req, reply) => {
      const s = requireEvaluation(app.services, req.params.id);
      reply.header(INTEGRITY_HEADER, integrityHeader(s));
      reply.header('content-type', 'application/pdf').header('content-disposition', `inline; filename="${s.id}.pdf"`);
      return app.services.archive.getSheetPdf(s.id);
    },
  });
}
