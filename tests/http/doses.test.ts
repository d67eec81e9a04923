/**
 * POST /api/v1/doses, GET /api/v1/oxidants and the plant routes, through the HTTP contract of
 * issue 3 (buildApp + app.inject).
 *
 * Worked examples: invented samples (no real plant), real chemistry. Every expected number is
 * computed here by hand from the balanced reaction and the atomic weights below, independently
 * of src/dosing, and the arithmetic is shown beside it.
 *
 * Atomic weights: IUPAC/CIAAW 2021 standard atomic weights, abridged values as IUPAC prints them
 * for everyday use (value from memory of the CIAAW 2021 table; the same figures as
 * tables/atomic-weights.json, which tests/reference checks against the chemical-elements package).
 * Unit factors: NIST SP 811 (2008) appendix B — US gallon = 3.785411784 L (exact), so
 * 1 MGD = 3785.411784 m3/d and 1 gpm = 3.785411784 L/min × 1440 min/d / 1000 = 5.45099296896 m3/d;
 * °C = (°F − 32) × 5/9. Handbook ratios quoted for comparison are from US EPA (1999) Alternative
 * Disinfectants and Oxidants Guidance Manual, EPA 815-R-99-014 — values from memory; verify.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';

// IUPAC/CIAAW 2021 abridged standard atomic weights (g/mol)
const H = 1.008;
const N = 14.007;
const O = 15.999;
const S = 32.06;
const Cl = 35.45;
const K = 39.098;
const Mn = 54.938;
const Fe = 55.845;

// Molar masses (g/mol), summed by hand
const KMnO4 = K + Mn + 4 * O; // 39.098 + 54.938 + 63.996 = 158.032
const Cl2 = 2 * Cl; // 70.90
const ClO2 = Cl + 2 * O; // 35.45 + 31.998 = 67.448
const O3 = 3 * O; // 47.997
const O2 = 2 * O; // 31.998
const H2O2 = 2 * H + 2 * O; // 2.016 + 31.998 = 34.014

// NIST SP 811 (2008) appendix B: exact US gallon
const MGD_M3_PER_D = 3785.411784;
const GPM_M3_PER_D = (3.785411784 * 1440) / 1000; // 5.45099296896

const BOOTSTRAP = 'doses-test-bootstrap-token-0123456789';
let app: FastifyInstance;
let engineerToken = '';
let operatorToken = '';

beforeAll(async () => {
  app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-http-doses-')), bootstrapToken: BOOTSTRAP, rateLimitPerMinute: 10_000 });
  const mk = async (name: string, role: string) => {
    const r = await app.inject({ method: 'POST', url: '/api/v1/users', headers: { authorization: `Bearer ${BOOTSTRAP}` }, payload: { name, role } });
    expect(r.statusCode).toBe(201);
    return r.json().token as string;
  };
  engineerToken = await mk('Test engineer (invented)', 'engineer');
  operatorToken = await mk('Test operator (invented)', 'operator');
});
afterAll(async () => {
  await app?.close();
});

const post = (payload: unknown) => app.inject({ method: 'POST', url: '/api/v1/doses', payload: payload as Record<string, unknown> });

/** Relative closeness: the service keeps full values; our hand arithmetic is in doubles. */
function near(actual: number, expected: number, rel = 1e-9): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel + 1e-12);
}

interface DemandCase {
  contaminant: string;
  /** mg oxidant (on its basis) per mg contaminant, by hand */
  ratio: number;
  concentration: number;
  /** the balanced reaction must contain these species (the service's own text) */
  reactionHas: string[];
}

interface WorkedExample {
  name: string;
  body: Record<string, unknown>;
  basis: string;
  demands: DemandCase[];
  background: number;
  residual: number;
  flowM3PerD: number;
  /** g/L of the strength formula; null for gases and generated oxidants without a strength */
  solutionGPerL: number | null;
  /** strength formula mass per basis mass (1 when the strength is on the dose basis) */
  strengthPerBasis?: number;
}

const examples: WorkedExample[] = [
  {
    // Invented well water: Fe 1.5, Mn 0.4 mg/L, pH 7.2, 12 °C; 2000 m3/d; 2 % w/w batch, density 1.00 kg/L.
    name: 'potassium permanganate, iron + manganese',
    body: {
      oxidant: 'potassium-permanganate',
      flow: { value: 2000, unit: 'm3/d' },
      sample: { pH: 7.2, temperatureC: 12, iron: { value: 1.5, unit: 'mg/L' }, manganese: { value: 0.4, unit: 'mg/L' } },
      product: { strength: { value: 2, unit: '% w/w' }, density: { value: 1.0, unit: 'kg/L' } },
    },
    basis: 'as KMnO4',
    demands: [
      // MnO4- + 3e- → MnO2; Fe2+ → Fe3+ + e-: 1 MnO4- per 3 Fe2+.
      // 158.032 / (3 × 55.845) = 158.032 / 167.535 = 0.94328 (EPA 1999 ch. 5 prints 0.94; memory)
      // demand = 0.94328 × 1.5 = 1.41492 mg/L
      { contaminant: 'iron', ratio: KMnO4 / (3 * Fe), concentration: 1.5, reactionHas: ['MnO4-', '3Fe2+', 'MnO2(s)', '3Fe(OH)3(s)'] },
      // Mn2+ → MnO2 + 2e-: 2 MnO4- per 3 Mn2+.
      // 2 × 158.032 / (3 × 54.938) = 316.064 / 164.814 = 1.91770 (EPA 1999 prints 1.92; memory)
      // demand = 1.91770 × 0.4 = 0.76708 mg/L
      { contaminant: 'manganese', ratio: (2 * KMnO4) / (3 * Mn), concentration: 0.4, reactionHas: ['2MnO4-', '3Mn2+', '5MnO2(s)'] },
    ],
    // total = 1.41492 + 0.76708 + 0 + 0 = 2.18200 mg/L as KMnO4
    // feed = 2.18200 × 2000 / 1000 = 4.36399 kg/d; 2 % w/w × 1.00 kg/L = 20 g/L
    // solution = 4363.99 g/d ÷ 20 g/L ÷ 24 h/d = 9.0917 L/h
    background: 0,
    residual: 0,
    flowM3PerD: 2000,
    solutionGPerL: 20,
  },
  {
    // Invented: Fe 2.0, Mn 0.3 mg/L, pH 7.6, 15 °C; 1.2 MGD; measured background demand 0.5, target residual 1.0 mg/L as Cl2;
    // 12.5 trade % hypochlorite = 125 g/L available chlorine (AWWA B300 convention: trade % = g/L ÷ 10).
    name: 'sodium hypochlorite, iron + manganese, background and residual, flow in MGD',
    body: {
      oxidant: 'sodium-hypochlorite',
      flow: { value: 1.2, unit: 'MGD' },
      sample: { pH: 7.6, temperatureC: 15, iron: { value: 2.0, unit: 'mg/L' }, manganese: { value: 0.3, unit: 'mg/L' } },
      backgroundDemand: { value: 0.5, unit: 'mg/L' },
      targetResidual: { value: 1.0, unit: 'mg/L' },
      product: { strength: { value: 12.5, unit: '% w/v' } },
    },
    basis: 'as Cl2',
    demands: [
      // OCl- + 2e- → Cl- (one Cl2 equivalent, 2 e-); 2 Fe2+ per Cl2:
      // 70.90 / (2 × 55.845) = 70.90 / 111.69 = 0.63479 (EPA 1999 / MWH print 0.62–0.64; memory); × 2.0 = 1.26959
      { contaminant: 'iron', ratio: Cl2 / (2 * Fe), concentration: 2.0, reactionHas: ['OCl-', '2Fe2+', 'Cl-'] },
      // Mn2+ → MnO2 is 2 e-: 1 Cl2 per Mn: 70.90 / 54.938 = 1.29055 (printed 1.29; memory); × 0.3 = 0.38716
      { contaminant: 'manganese', ratio: Cl2 / Mn, concentration: 0.3, reactionHas: ['OCl-', 'Mn2+', 'MnO2(s)'] },
    ],
    // total = 1.26959 + 0.38716 + 0.5 + 1.0 = 3.15675 mg/L as Cl2
    // flow = 1.2 × 3785.411784 = 4542.494 m3/d; feed = 3.15675 × 4542.494 / 1000 = 14.3395 kg/d
    // solution = 14339.5 g/d ÷ 125 g/L ÷ 24 = 4.7798 L/h
    background: 0.5,
    residual: 1.0,
    flowM3PerD: 1.2 * MGD_M3_PER_D,
    solutionGPerL: 125,
  },
  {
    // Invented: Fe 0.8, Mn 0.2 mg/L, pH 7.0, 18 °C; 500 m3/h; residual 0.2 mg/L; generator solution 2 g/L ClO2.
    name: 'chlorine dioxide, iron + manganese, flow in m3/h',
    body: {
      oxidant: 'chlorine-dioxide',
      flow: { value: 500, unit: 'm3/h' },
      sample: { pH: 7.0, temperatureC: 18, iron: { value: 0.8, unit: 'mg/L' }, manganese: { value: 0.2, unit: 'mg/L' } },
      targetResidual: { value: 0.2, unit: 'mg/L' },
      product: { strength: { value: 2, unit: 'g/L' } },
    },
    basis: 'as ClO2',
    demands: [
      // ClO2 + e- → ClO2- (one electron): 1 ClO2 per Fe: 67.448 / 55.845 = 1.20777 (EPA 1999 ch. 4 prints 1.2; memory); × 0.8 = 0.96622
      { contaminant: 'iron', ratio: ClO2 / Fe, concentration: 0.8, reactionHas: ['ClO2', 'Fe2+', 'ClO2-'] },
      // 2 ClO2 per Mn: 134.896 / 54.938 = 2.45542 (printed 2.45; memory); × 0.2 = 0.49108
      { contaminant: 'manganese', ratio: (2 * ClO2) / Mn, concentration: 0.2, reactionHas: ['2ClO2', 'Mn2+', '2ClO2-'] },
    ],
    // total = 0.96622 + 0.49108 + 0 + 0.2 = 1.65730 mg/L; flow = 500 × 24 = 12000 m3/d
    // feed = 1.65730 × 12000 / 1000 = 19.8876 kg/d; solution = 19887.6 ÷ 2 ÷ 24 = 414.33 L/h
    background: 0,
    residual: 0.2,
    flowM3PerD: 12000,
    solutionGPerL: 2,
  },
  {
    // Invented: Fe 1.0, Mn 0.5 mg/L, pH 7.5, 20 °C; 10 000 m3/d; background 0.3 mg/L. Ozone is generated as a gas.
    name: 'ozone, iron + manganese (no solution rate)',
    body: {
      oxidant: 'ozone',
      flow: { value: 10000, unit: 'm3/d' },
      sample: { pH: 7.5, temperatureC: 20, iron: { value: 1.0, unit: 'mg/L' }, manganese: { value: 0.5, unit: 'mg/L' } },
      backgroundDemand: { value: 0.3, unit: 'mg/L' },
    },
    basis: 'as O3',
    demands: [
      // O3 + 2H+ + 2e- → O2 + H2O: 1 O3 per 2 Fe: 47.997 / 111.69 = 0.42973 (EPA 1999 ch. 3 prints 0.43; memory)
      { contaminant: 'iron', ratio: O3 / (2 * Fe), concentration: 1.0, reactionHas: ['O3', '2Fe2+', 'O2'] },
      // 1 O3 per Mn: 47.997 / 54.938 = 0.87366 (EPA 1999 quoted 0.88, MWH 0.87; memory); × 0.5 = 0.43683
      { contaminant: 'manganese', ratio: O3 / Mn, concentration: 0.5, reactionHas: ['O3', 'Mn2+', 'MnO2(s)'] },
    ],
    // total = 0.42973 + 0.43683 + 0.3 = 1.16656 mg/L; feed = 1.16656 × 10000 / 1000 = 11.6656 kg/d
    background: 0.3,
    residual: 0,
    flowM3PerD: 10000,
    solutionGPerL: null,
  },
  {
    // Invented: Fe 3.0 mg/L, pH 7.4, 10 °C; 20 L/s (= 20 × 86.4 = 1728 m3/d); aeration.
    name: 'oxygen (aeration), iron, flow in L/s (no solution rate)',
    body: { oxidant: 'oxygen', flow: { value: 20, unit: 'L/s' }, sample: { pH: 7.4, temperatureC: 10, iron: { value: 3.0, unit: 'mg/L' } } },
    basis: 'as O2',
    demands: [
      // O2 + 4H+ + 4e- → 2H2O: 1 O2 per 4 Fe: 31.998 / 223.38 = 0.143245 (EPA 1999 / MWH print 0.14; memory); × 3.0 = 0.42973
      { contaminant: 'iron', ratio: O2 / (4 * Fe), concentration: 3.0, reactionHas: ['O2', '4Fe2+', '4Fe(OH)3(s)'] },
    ],
    // feed = 0.42973 × 1728 / 1000 = 0.74258 kg/d
    background: 0,
    residual: 0,
    flowM3PerD: 20 * 86.4,
    solutionGPerL: null,
  },
  {
    // Invented: Fe 2.5 mg/L, pH 7.8, 59 °F (= 15 °C); 300 gpm; 35 % w/w H2O2 at 1.13 kg/L (density from memory of the CRC table).
    name: 'hydrogen peroxide, iron, US units (gpm, °F)',
    body: {
      oxidant: 'hydrogen-peroxide',
      flow: { value: 300, unit: 'gpm' },
      sample: { pH: 7.8, temperature: { value: 59, unit: '°F' }, iron: { value: 2.5, unit: 'mg/L' } },
      product: { strength: { value: 35, unit: '% w/w' }, density: { value: 1.13, unit: 'kg/L' } },
    },
    basis: 'as H2O2',
    demands: [
      // H2O2 + 2H+ + 2e- → 2H2O: 1 H2O2 per 2 Fe: 34.014 / 111.69 = 0.30454 (0.30 is the figure usually quoted; memory); × 2.5 = 0.76135
      { contaminant: 'iron', ratio: H2O2 / (2 * Fe), concentration: 2.5, reactionHas: ['H2O2', '2Fe2+', '2Fe(OH)3(s)'] },
    ],
    // flow = 300 × 5.45099296896 = 1635.298 m3/d; feed = 0.76135 × 1635.298 / 1000 = 1.24503 kg/d
    // 35 % w/w × 1.13 kg/L × 1000 g/kg = 395.5 g/L; solution = 1245.03 ÷ 395.5 ÷ 24 = 0.13117 L/h
    background: 0,
    residual: 0,
    flowM3PerD: 300 * GPM_M3_PER_D,
    solutionGPerL: 395.5,
  },
  {
    // Invented: H2S 1.0 mg/L as S, pH 7.0, 14 °C; 1500 m3/d; residual 0.5 mg/L; chlorine gas.
    name: 'chlorine gas, sulfide to sulfur (no solution rate)',
    body: {
      oxidant: 'chlorine-gas',
      flow: { value: 1500, unit: 'm3/d' },
      sample: { pH: 7.0, temperatureC: 14, sulfide: { value: 1.0, unit: 'mg/L' } },
      targetResidual: { value: 0.5, unit: 'mg/L' },
    },
    basis: 'as Cl2',
    demands: [
      // H2S + Cl2 → S + 2HCl: 1 Cl2 per S: 70.90 / 32.06 = 2.21148 (EPA 1999 prints 2.2 to sulfur; memory)
      { contaminant: 'sulfide', ratio: Cl2 / S, concentration: 1.0, reactionHas: ['Cl2', 'H2S', 'S(s)'] },
    ],
    // total = 2.21148 + 0.5 = 2.71148 mg/L; feed = 2.71148 × 1500 / 1000 = 4.06722 kg/d
    background: 0,
    residual: 0.5,
    flowM3PerD: 1500,
    solutionGPerL: null,
  },
  {
    // Invented: NH4+ 0.5 mg/L as N, pH 7.5, 14 °C; 1500 m3/d; 12.5 trade % hypochlorite.
    name: 'sodium hypochlorite, ammonia breakpoint (theoretical)',
    body: {
      oxidant: 'sodium-hypochlorite',
      flow: { value: 1500, unit: 'm3/d' },
      sample: { pH: 7.5, temperatureC: 14, ammoniaN: { value: 0.5, unit: 'mg/L' } },
      product: { strength: { value: 12.5, unit: '% w/v' } },
    },
    basis: 'as Cl2',
    demands: [
      // 2NH4+ + 3HOCl → N2 + 3H2O + 5H+ + 3Cl-: 3 Cl2 per 2 N: 212.70 / 28.014 = 7.5926
      // (the theoretical breakpoint ratio 7.6 : 1 of White's Handbook; memory)
      { contaminant: 'ammonia', ratio: (3 * Cl2) / (2 * N), concentration: 0.5, reactionHas: ['3OCl-', '2NH4+', 'N2(g)'] },
    ],
    // total = 7.5926 × 0.5 = 3.7963 mg/L; feed = 3.7963 × 1500 / 1000 = 5.6945 kg/d; solution = 5694.5 ÷ 125 ÷ 24 = 1.8982 L/h
    background: 0,
    residual: 0,
    flowM3PerD: 1500,
    solutionGPerL: 125,
  },
];

describe('POST /api/v1/doses: worked examples (hand arithmetic from balanced reactions and IUPAC atomic weights)', () => {
  it.each(examples)('$name', async (ex) => {
    const r = await post(ex.body);
    expect(r.statusCode, r.body).toBe(200);
    expect(r.headers['content-type']).toMatch(/application\/json/);
    const j = r.json();

    // demand[]: one entry per contaminant, ratio and demand from the hand calculation
    expect(j.demand.map((d: { contaminant: string }) => d.contaminant)).toEqual(ex.demands.map((d) => d.contaminant));
    let sum = 0;
    for (const [i, d] of ex.demands.entries()) {
      const got = j.demand[i];
      near(got.ratio, d.ratio);
      near(got.demand.value, d.ratio * d.concentration);
      expect(got.demand.unit).toBe(`mg/L ${ex.basis}`);
      for (const s of d.reactionHas) expect(got.reaction.split(/\s+/)).toContain(s);
      expect(got.reaction).toMatch(/ -> /);
      sum += d.ratio * d.concentration;
    }

    // dose = Σ demand + background + residual
    const total = sum + ex.background + ex.residual;
    expect(j.dose.unit).toBe('mg/L');
    expect(j.dose.basis).toBe(ex.basis);
    near(j.dose.value, total);

    // feed: kg/d = mg/L × m3/d / 1000 (mg/L = g/m3)
    const kgPerD = (total * ex.flowM3PerD) / 1000;
    expect(j.feed.massRate.unit).toBe('kg/d');
    near(j.feed.massRate.value, kgPerD);
    if (ex.solutionGPerL === null) {
      expect(j.feed.solutionRate).toBeNull();
    } else {
      // L/h = kg/d × 1000 g/kg ÷ (g/L) ÷ 24 h/d
      expect(j.feed.solutionRate.unit).toBe('L/h');
      near(j.feed.solutionRate.value, (kgPerD * 1000 * (ex.strengthPerBasis ?? 1)) / ex.solutionGPerL / 24);
    }

    // feasibility: one entry per reaction; "feasible" agrees with the sign of the cell potential (ΔG = −nFE)
    expect(j.feasibility).toHaveLength(ex.demands.length);
    for (const f of j.feasibility) {
      expect(typeof f.cellPotentialV).toBe('number');
      expect(Number.isFinite(f.cellPotentialV)).toBe(true);
      expect(f.feasible).toBe(f.cellPotentialV > 0);
      // all of these are textbook-feasible oxidations at near-neutral pH
      expect(f.feasible).toBe(true);
    }

    // flags: shape, and every source other than the request itself resolves to a citation in the answer
    const cited = new Set(j.sources.map((s: { id: string }) => s.id));
    for (const f of j.flags) {
      expect(f).toEqual({ code: expect.stringMatching(/^[A-Z0-9_]+$/), severity: expect.stringMatching(/^(info|warning|danger)$/), message: expect.any(String), source: expect.any(String) });
      expect(f.message.length).toBeGreaterThan(10);
      if (f.source !== 'input') expect(cited.has(f.source), `flag ${f.code} cites ${f.source}`).toBe(true);
    }
    // cautions: text, including the note that local regulations govern
    expect(j.cautions.length).toBeGreaterThan(0);
    for (const c of j.cautions) expect(typeof c).toBe('string');
    expect(j.cautions.join(' ')).toMatch(/regulations/i);
  });

  it('hypochlorite cautions name the acid hazard; chlorine dioxide warns of the chlorite MCL at a dose of 1.66 mg/L', async () => {
    const hypo = (await post(examples[1]!.body)).json();
    expect(hypo.cautions.join(' ')).toMatch(/acid/i);
    // ClO2 dose 1.657 mg/L × about 0.5–0.7 as chlorite (EPA 1999 ch. 4: "approximately 50 to 70 percent"; memory) ≈ 0.8–1.2 mg/L
    // against the chlorite MCL of 1.0 mg/L (40 CFR 141.64): the answer must at least warn.
    const clo2 = (await post(examples[2]!.body)).json();
    const chlorite = clo2.flags.filter((f: { code: string }) => /CHLORITE/.test(f.code));
    expect(chlorite.length).toBeGreaterThan(0);
    expect(chlorite.some((f: { severity: string }) => f.severity !== 'info')).toBe(true);
  });
});

describe('US customary units give the same dose as SI (NIST SP 811 factors)', () => {
  const sample = { pH: 7.6, iron: { value: 2.0, unit: 'mg/L' }, manganese: { value: 0.3, unit: 'mg/L' } };
  const rest = { oxidant: 'sodium-hypochlorite', targetResidual: { value: 1.0, unit: 'mg/L' }, product: { strength: { value: 12.5, unit: '% w/v' } } };
  it.each([
    // 1.2 MGD × 3785.411784 = 4542.4941408 m3/d; 59 °F → (59 − 32) × 5/9 = 15 °C
    ['MGD and °F', { value: 1.2, unit: 'MGD' }, { temperature: { value: 59, unit: '°F' } }, 1.2 * MGD_M3_PER_D],
    // 833.3 gpm × 5.45099296896 = 4542.4… m3/d; same 15 °C given as 288.15 K
    ['gpm and K', { value: 4542.4941408 / GPM_M3_PER_D, unit: 'gpm' }, { temperature: { value: 288.15, unit: 'K' } }, 4542.4941408],
  ])('%s', async (_name, flow, temperature, flowM3PerD) => {
    const si = (await post({ ...rest, flow: { value: 4542.4941408, unit: 'm3/d' }, sample: { ...sample, temperatureC: 15 } })).json();
    const us = (await post({ ...rest, flow, sample: { ...sample, ...temperature } })).json();
    expect(us.conditions.temperatureC).toBeCloseTo(15, 9);
    near(us.dose.value, si.dose.value);
    near(us.feed.massRate.value, si.feed.massRate.value);
    near(us.feed.massRate.value, (si.dose.value * flowM3PerD) / 1000);
    // the cell potentials are computed at the same temperature
    near(us.feasibility[0].cellPotentialV, si.feasibility[0].cellPotentialV, 1e-9);
    // lb/d from the exact pound (0.45359237 kg, NIST SP 811)
    near(us.feed.massRateUS.value, us.feed.massRate.value / 0.45359237);
  });
});

describe('plantId in place of flow/product/contact', () => {
  it('GET /api/v1/plants lists the invented demo plant; GET /api/v1/plants/demo-groundwater returns it', async () => {
    const list = await app.inject({ method: 'GET', url: '/api/v1/plants' });
    expect(list.statusCode).toBe(200);
    const demo = list.json().plants.find((p: { id: string }) => p.id === 'demo-groundwater');
    expect(demo).toMatchObject({ invented: true, version: expect.any(Number) });
    const one = await app.inject({ method: 'GET', url: '/api/v1/plants/demo-groundwater' });
    expect(one.statusCode).toBe(200);
    expect(one.json().profile).toMatchObject({ id: 'demo-groundwater', invented: true, flow: { value: 4000, unit: 'm3/d' } });
  });

  it('GET /api/v1/plants/:id of an unknown plant is a 404 naming the path field /id', async () => {
    const r = await app.inject({ method: 'GET', url: '/api/v1/plants/no-such-plant' });
    expect(r.statusCode).toBe(404);
    expect(r.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(r.json().errors).toEqual([expect.objectContaining({ pointer: '/id' })]);
    expect(r.json().detail).toMatch(/GET \/api\/v1\/plants/);
  });

  it('{"plantId":"demo-groundwater", oxidant, sample} takes flow, product and residual from the profile', async () => {
    const r = await post({ plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample: { pH: 7.4, temperatureC: 11, iron: { value: 1.2, unit: 'mg/L' } } });
    expect(r.statusCode, r.body).toBe(200);
    const j = r.json();
    expect(j.plant).toMatchObject({ id: 'demo-groundwater', invented: true });
    // demo profile (tables/demo/demo-plant.json, invented): 4000 m3/d, 12.5 % w/v hypochlorite, residual 1.0 mg/L as Cl2
    // dose = 70.90 / 111.69 × 1.2 + 1.0 = 0.761751 + 1.0 = 1.761751 mg/L; feed = 1.761751 × 4000 / 1000 = 7.04700 kg/d
    // solution = 7047.00 g/d ÷ 125 g/L ÷ 24 = 2.34900 L/h
    const dose = (Cl2 / (2 * Fe)) * 1.2 + 1.0;
    near(j.dose.value, dose);
    near(j.feed.massRate.value, (dose * 4000) / 1000);
    near(j.feed.solutionRate.value, (dose * 4000) / 125 / 24);
  });

  it.each([
    // the demo profile's residual is 1.0 mg/L as Cl2 for hypochlorite (and 0 as KMnO4 for permanganate): never another oxidant's
    ['ozone', O3 / (2 * Fe)],
    ['chlorine-dioxide', ClO2 / Fe],
  ])('with the demo plant, %s gets no residual from the profile, and a warning says the target was set for another oxidant', async (oxidant, ratio) => {
    const r = await post({ plantId: 'demo-groundwater', oxidant, sample: { pH: 7.4, temperatureC: 11, iron: { value: 1.2, unit: 'mg/L' } } });
    expect(r.statusCode, r.body).toBe(200);
    const j = r.json();
    // O3: 1 O3 per 2 Fe (O3 + 2e- -> O2); ClO2: 1 ClO2 per Fe (ClO2 + e- -> ClO2-); × 1.2 mg/L, no residual
    near(j.dose.value, ratio * 1.2);
    expect(j.plant.fromPlant).not.toContain('targetResidual');
    const codes = j.flags.map((f: { code: string }) => f.code);
    expect(codes).toContain('PLANT_RESIDUAL_FOR_OTHER_OXIDANT');
    expect(codes).not.toContain('RESIDUAL_ABOVE_MRDL');
    const other = j.flags.find((f: { code: string }) => f.code === 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT');
    expect(other.severity).toBe('warning');
    expect(other.message).toContain('targetResidual');
    // it names what the profile's targets are for: hypochlorite as Cl2, permanganate as KMnO4
    expect(other.message).toContain('sodium-hypochlorite 1 mg/L (as Cl2)');
    expect(other.message).toContain('potassium-permanganate 0 mg/L (as KMnO4)');
  });
});

describe('hypochlorite in % w/w without a density: the density is interpolated by strength', () => {
  it('5 % w/w: between the tabled 5 trade % (5 / 1.07 = 4.673 % w/w, 1.07 kg/L) and 10 trade % (10 / 1.14 = 8.772 % w/w, 1.14 kg/L) rows (White\'s Handbook, memory) → 1.0756 kg/L, 53.78 g/L', async () => {
    const r = await post({ oxidant: 'sodium-hypochlorite', flow: { value: 4000, unit: 'm3/d' }, sample: { pH: 7.4, temperatureC: 11, iron: { value: 1.2, unit: 'mg/L' } }, product: { strength: { value: 5, unit: '% w/w' } } });
    expect(r.statusCode, r.body).toBe(200);
    const j = r.json();
    const rho = 1.07 + (0.07 * (5 - 5 / 1.07)) / (10 / 1.14 - 5 / 1.07);
    near(j.feed.strength.density.value, rho);
    near(j.feed.strength.gramsPerL.value, 50 * rho);
    // dose 70.90 / 111.69 × 1.2 = 0.761751 mg/L → 3047.00 g/d ÷ 53.78 g/L ÷ 24
    near(j.feed.solutionRate.value, ((Cl2 / (2 * Fe)) * 1.2 * 4000) / (50 * rho) / 24);
    expect(j.flags.find((f: { code: string }) => f.code === 'DENSITY_INTERPOLATED')).toMatchObject({ severity: 'warning', source: 'whites-handbook-5' });
  });
});

type BadCase = [name: string, mutate: (b: Record<string, any>) => void, status: number, pointer: string, message: RegExp];
const badInput: BadCase[] = [
  ['pH above 14', (b) => (b.sample.pH = 14.5), 400, '/sample/pH', /0 and 14/],
  ['pH below 0', (b) => (b.sample.pH = -0.5), 400, '/sample/pH', /0 and 14/],
  ['negative concentration', (b) => (b.sample.iron.value = -0.1), 400, '/sample/iron/value', /0 or more/],
  ['temperatureC above boiling', (b) => (b.sample.temperatureC = 105), 400, '/sample/temperatureC', /0 and 100 °C/],
  ['temperatureC below freezing', (b) => (b.sample.temperatureC = -2), 400, '/sample/temperatureC', /0 and 100 °C/],
  ['220 °F (above 212 °F)', (b) => { delete b.sample.temperatureC; b.sample.temperature = { value: 220, unit: '°F' }; }, 400, '/sample/temperature/value', /32 to 212 °F/],
  ['20 °F (below 32 °F)', (b) => { delete b.sample.temperatureC; b.sample.temperature = { value: 20, unit: '°F' }; }, 400, '/sample/temperature/value', /32 to 212 °F/],
  ['zero flow', (b) => (b.flow.value = 0), 400, '/flow/value', /more than 0/],
  ['negative flow', (b) => (b.flow.value = -5), 400, '/flow/value', /more than 0/],
  ['strength 120 % w/w', (b) => (b.product = { strength: { value: 120, unit: '% w/w' }, density: { value: 1.2, unit: 'kg/L' } }), 400, '/product/strength/value', /at most 100/],
  ['strength 101 % w/v', (b) => (b.product.strength.value = 101), 400, '/product/strength/value', /at most 100/],
  ['density 0.5 kg/L', (b) => (b.product.density = { value: 0.5, unit: 'kg/L' }), 400, '/product/density/value', /0\.8 and 2\.0 kg\/L/],
  ['density 2.5 kg/L', (b) => (b.product.density = { value: 2.5, unit: 'kg/L' }), 400, '/product/density/value', /0\.8 and 2\.0 kg\/L/],
  ['unknown oxidant', (b) => (b.oxidant = 'bleach-x'), 400, '/oxidant', /sodium-hypochlorite/],
  ['unknown contaminant field', (b) => (b.sample.copper = { value: 1, unit: 'mg/L' }), 400, '/sample/copper', /iron.*manganese/],
  ['flow in a concentration unit', (b) => (b.flow.unit = 'mg/L'), 400, '/flow/unit', /m3\/d.*MGD.*gpm/],
  ['concentration in a flow unit', (b) => (b.sample.iron.unit = 'gpm'), 400, '/sample/iron/unit', /mg\/L/],
  ['temperature in a concentration unit', (b) => { delete b.sample.temperatureC; b.sample.temperature = { value: 20, unit: 'mg/L' }; }, 400, '/sample/temperature/unit', /°C.*°F/],
  ['strength in a flow unit', (b) => (b.product.strength.unit = 'L/h'), 400, '/product/strength/unit', /% w\/w.*% w\/v.*g\/L/],
  ['unknown plantId', (b) => { delete b.flow; delete b.product; b.plantId = 'no-such-plant'; }, 404, '/plantId', /GET \/api\/v1\/plants/],
  // plausibility bounds (src/dosing/bounds.ts, common practice): tens of mg/L of iron are already extreme for groundwater
  ['iron 1e9 mg/L', (b) => (b.sample.iron.value = 1e9), 422, '/sample/iron/value', /above 100 mg\/L.*raw-water reading/],
  ['manganese 80 mg/L', (b) => (b.sample.manganese = { value: 80, unit: 'mg/L' }), 422, '/sample/manganese/value', /above 50 mg\/L/],
  ['sulfide 0.5 g/L', (b) => (b.sample.sulfide = { value: 0.5, unit: 'g/L' }), 422, '/sample/sulfide/value', /500 mg\/L as S \(given as 0\.5 g\/L\) is above 100 mg\/L/],
  ['flow 1e308 MGD', (b) => (b.flow = { value: 1e308, unit: 'MGD' }), 400, '/flow/value', /10,000,000 m3\/d/],
  ['flow 1e-300 MGD with contact volume 1e300 m3', (b) => { b.flow = { value: 1e-300, unit: 'MGD' }; b.contactVolume = { value: 1e300, unit: 'm3' }; }, 400, '/flow/value', /outside 0\.001 to/],
  ['contact volume 1e300 m3 at 1 MGD', (b) => { b.flow = { value: 1, unit: 'MGD' }; b.contactVolume = { value: 1e300, unit: 'm3' }; }, 400, '/contactVolume/value', /more than 30 days/],
  ['ozone with a strength in % w/w', (b) => { b.oxidant = 'ozone'; b.product = { strength: { value: 5, unit: '% w/w' } }; }, 400, '/product/strength', /as a gas/],
  ['hypochlorite 1 % w/w with no density (outside the tabled densities)', (b) => (b.product = { strength: { value: 1, unit: '% w/w' } }), 422, '/product/strength', /not extrapolated/],
  // strengths no solution of the product can have (tables/strength-limits.json): a range of the field, 400 like the other strength bounds.
  // Hypochlorite: a third above 15 trade % = 150 g/L (White's Handbook 5th ed., memory), refused above 200 g/L (common practice).
  ['hypochlorite 500 g/L', (b) => (b.product = { strength: { value: 500, unit: 'g/L' } }), 400, '/product/strength/value', /above 200 g\/L.*source operator-practice.*15 trade %.*source whites-handbook-5/],
  ['hypochlorite 30 % w/v (trade %: 300 g/L)', (b) => (b.product = { strength: { value: 30, unit: '% w/v' } }), 400, '/product/strength/value', /300 g\/L.*above 200 g\/L/],
  // Potassium permanganate: 22.2 g per 100 g water at 60 °C, the warmest point of the solubility table (Perry's 8th ed., memory).
  ['permanganate 25 % w/v (25 000 / 750 = 33.33 g per 100 g water)', (b) => { b.oxidant = 'potassium-permanganate'; b.product = { strength: { value: 25, unit: '% w/v' } }; }, 400, '/product/strength/value', /33\.33 g KMnO4 per 100 g water.*22\.2 g KMnO4 per 100 g water that dissolve at 60 °C.*source perry-8-solubility/],
  // Calcium hypochlorite: roughly 21 g per 100 mL of water (CRC Handbook 97th ed., memory); 65 % is the granules' assay (ANSI/AWWA B300, memory).
  ['calcium hypochlorite 65 % w/w', (b) => { b.oxidant = 'calcium-hypochlorite'; b.product = { strength: { value: 65, unit: '% w/w' } }; }, 400, '/product/strength/value', /roughly 21 g per 100 mL.*source crc-97-inorganic-constants.*product\.purity/],
];

describe('bad input: 4xx problem+json naming the field and what is accepted', () => {
  // Invented sample for the mutations.
  const good = () => ({
    oxidant: 'sodium-hypochlorite',
    flow: { value: 1000, unit: 'm3/d' },
    sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } as Record<string, unknown>,
    product: { strength: { value: 12.5, unit: '% w/v' } } as Record<string, unknown>,
  });

  it('the unmutated request is accepted (so each case below fails for its own reason)', async () => {
    expect((await post(good())).statusCode).toBe(200);
  });

  it.each(badInput.map(([name, mutate, status, pointer, message]) => ({ name, mutate, status, pointer, message })))('$name → $status naming $pointer', async ({ mutate, status, pointer, message }) => {
    const b = good() as Record<string, any>;
    mutate(b);
    const r = await post(b);
    expect(r.statusCode, r.body).toBe(status);
    expect(r.headers['content-type']).toMatch(/^application\/problem\+json/);
    const p = r.json();
    expect(p).toMatchObject({ status, type: expect.stringMatching(/^\/problems\//), title: expect.any(String), detail: expect.any(String) });
    const field = (p.errors ?? []).find((e: { pointer: string }) => e.pointer === pointer);
    expect((p.errors ?? []).map((e: { pointer: string }) => e.pointer)).not.toContain('/availableMinutes');
    expect(field, `errors: ${JSON.stringify(p.errors)}`).toBeDefined();
    expect(`${field.message} ${p.detail}`).toMatch(message);
  });

  it.each([
    // "Legal but unusual" thresholds of the issue (common practice): Fe above 20 mg/L, pH below 5.
    ['iron 25 mg/L', (b: Record<string, any>) => (b.sample.iron.value = 25), /IRON/],
    ['pH 4.5', (b: Record<string, any>) => (b.sample.pH = 4.5), /PH/],
    // above 15 trade %, the strongest hypochlorite tabled (White's Handbook 5th ed., memory), below the 200 g/L refusal
    ['hypochlorite 17 trade %', (b: Record<string, any>) => (b.product = { strength: { value: 17, unit: '% w/v' } }), /STRENGTH_ABOVE_TRADE_GRADE/],
    // permanganate 8 % w/v at 12 °C: 8000 / 920 = 8.70 g per 100 g water, above the 4.8 interpolated at 12 °C (4.4 at 10, 6.4 at 20)
    // but below 9.0 at 30 °C (Perry's 8th ed. solubility table, memory): possible only in a warm tank
    ['permanganate 8 % w/v at 12 °C', (b: Record<string, any>) => { b.oxidant = 'potassium-permanganate'; b.product = { strength: { value: 8, unit: '% w/v' } }; }, /STRENGTH_ABOVE_SOLUBILITY/],
  ])('legal but unusual: %s → 200 with a warning flag', async (_name, mutate, code) => {
    const b = good() as Record<string, any>;
    mutate(b);
    const r = await post(b);
    expect(r.statusCode, r.body).toBe(200);
    const warnings = r.json().flags.filter((f: { severity: string; code: string }) => f.severity === 'warning' && code.test(f.code));
    expect(warnings.length).toBeGreaterThan(0);
  });
});

describe('GET /api/v1/oxidants', () => {
  it('lists the nine contract ids, each with a source that resolves to a citation', async () => {
    const r = await app.inject({ method: 'GET', url: '/api/v1/oxidants' });
    expect(r.statusCode).toBe(200);
    const list = r.json().oxidants as { id: string; name: string; source: string; citation?: string }[];
    const ids = list.map((o) => o.id);
    for (const id of ['potassium-permanganate', 'sodium-permanganate', 'sodium-hypochlorite', 'calcium-hypochlorite', 'chlorine-gas', 'chlorine-dioxide', 'ozone', 'hydrogen-peroxide', 'oxygen']) {
      expect(ids).toContain(id);
    }
    for (const o of list) {
      expect(o.source).toMatch(/\S/);
      // the citation is the full reference text, not the bare id
      expect(o.citation).toBeDefined();
      expect(o.citation).not.toBe(o.source);
      expect(o.citation!.length).toBeGreaterThan(20);
    }
  });
});

describe('POST /api/v1/plants', () => {
  // An invented surface-water plant (no real place).
  const profile = {
    id: 'test-river-intake',
    name: 'Test river intake (invented)',
    invented: true,
    flow: { value: 2.5, unit: 'MGD' },
    contactVolume: { value: 40000, unit: 'gal' },
    products: [{ oxidant: 'sodium-hypochlorite', strength: { value: 12.5, unit: '% w/v' }, density: { value: 1.17, unit: 'kg/L' }, stock: { value: 1500, unit: 'gal' } }],
    pumps: [{ id: 'hypo-1', oxidant: 'sodium-hypochlorite', ratedCapacity: { value: 20, unit: 'gal/h' } }],
    targets: { residual: { value: 1.2, unit: 'mg/L' } },
    preferredUnits: 'US',
  };
  const as = (token?: string) => (token ? { authorization: `Bearer ${token}` } : {});
  const postPlant = (payload: unknown, token?: string) => app.inject({ method: 'POST', url: '/api/v1/plants', headers: as(token), payload: payload as Record<string, unknown> });

  it.each([
    ['negative flow', { ...profile, flow: { value: -1, unit: 'MGD' } }, '/flow/value'],
    ['flow in a volume unit', { ...profile, flow: { value: 2.5, unit: 'gal' } }, '/flow/unit'],
    ['missing name', (({ name: _n, ...p }) => p)(profile), '/name'],
    ['unknown product oxidant', { ...profile, products: [{ ...profile.products[0], oxidant: 'bleach-x' }] }, '/products/0/oxidant'],
    ['density out of range', { ...profile, products: [{ ...profile.products[0], density: { value: 3, unit: 'kg/L' } }] }, '/products/0/density/value'],
    // the strength limits of a dose request (tables/strength-limits.json; sources as in the bad-input cases above)
    ['hypochlorite 500 g/L', { ...profile, products: [{ ...profile.products[0], strength: { value: 500, unit: 'g/L' } }] }, '/products/0/strength/value'],
    ['hypochlorite 30 % w/v', { ...profile, products: [{ ...profile.products[0], strength: { value: 30, unit: '% w/v' } }] }, '/products/0/strength/value'],
    ['permanganate 25 % w/v', { ...profile, products: [{ oxidant: 'potassium-permanganate', strength: { value: 25, unit: '% w/v' } }] }, '/products/0/strength/value'],
    ['calcium hypochlorite 65 % w/w', { ...profile, products: [{ oxidant: 'calcium-hypochlorite', strength: { value: 65, unit: '% w/w' } }] }, '/products/0/strength/value'],
    // fed as a gas: no product strength, no metering pump (the dose route refuses product for a gas the same way)
    ['a chlorine-gas product', { ...profile, products: [...profile.products, { oxidant: 'chlorine-gas', strength: { value: 100, unit: '% w/w' }, stock: { value: 900, unit: 'kg' } }] }, '/products/1/strength'],
    ['an ozone product', { ...profile, products: [{ oxidant: 'ozone', strength: { value: 10, unit: 'g/L' } }] }, '/products/0/strength'],
    ['a chlorine-gas pump in L/h', { ...profile, pumps: [...profile.pumps, { id: 'cl2-1', oxidant: 'chlorine-gas', ratedCapacity: { value: 5, unit: 'L/h' } }] }, '/pumps/1/ratedCapacity'],
    ['an oxygen pump in gal/h', { ...profile, pumps: [{ id: 'o2-1', oxidant: 'oxygen', ratedCapacity: { value: 5, unit: 'gal/h' } }] }, '/pumps/0/ratedCapacity'],
  ].map(([name, body, pointer]) => ({ name: name as string, body, pointer: pointer as string })))('bad profile ($name) → 400 naming $pointer', async ({ body, pointer }) => {
    const r = await postPlant(body, engineerToken);
    expect(r.statusCode, r.body).toBe(400);
    expect(r.headers['content-type']).toMatch(/^application\/problem\+json/);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toContain(pointer);
  });

  it('a profile with 500 g/L hypochlorite → 400 PLANT_INVALID whose message names the 200 g/L limit and its sources (common practice; 15 trade %, White\'s Handbook 5th ed., memory); a warm-tank permanganate (8 % w/v) is stored', async () => {
    const r = await postPlant({ ...profile, products: [{ ...profile.products[0], strength: { value: 500, unit: 'g/L' } }] }, engineerToken);
    expect(r.statusCode, r.body).toBe(400);
    expect(r.json().code).toBe('PLANT_INVALID');
    const field = r.json().errors.find((e: { pointer: string }) => e.pointer === '/products/0/strength/value');
    expect(field.message).toMatch(/above 200 g\/L.*source operator-practice.*source whites-handbook-5, from memory/);
    const warm = await postPlant({ ...profile, id: 'test-warm-tank', products: [{ oxidant: 'potassium-permanganate', strength: { value: 8, unit: '% w/v' } }], pumps: [] }, engineerToken);
    expect(warm.statusCode, warm.body).toBe(201);
  });

  it('a profile whose hypochlorite density is below water\'s is stored with a warning naming the product\'s density; the tabled density gives none', async () => {
    const light = await postPlant({ ...profile, id: 'test-light-hypo', products: [{ ...profile.products[0], density: { value: 0.95, unit: 'kg/L' } }] }, engineerToken);
    expect(light.statusCode, light.body).toBe(201);
    expect(light.json().warnings).toEqual([expect.objectContaining({ code: 'DENSITY_BELOW_WATER', pointer: '/products/0/density' })]);
    const ok = await postPlant({ ...profile, id: 'test-tabled-hypo' }, engineerToken);
    expect(ok.json().warnings).toEqual([]);
  });

  it('no token → 401; an operator token → 403', async () => {
    const none = await postPlant(profile);
    expect(none.statusCode).toBe(401);
    expect(none.headers['content-type']).toMatch(/^application\/problem\+json/);
    const op = await postPlant(profile, operatorToken);
    expect(op.statusCode).toBe(403);
    expect((await app.inject({ method: 'GET', url: `/api/v1/plants/${profile.id}` })).statusCode).toBe(404);
  });

  it('an engineer stores a valid profile (201), GET returns it, the same profile again makes no new version, an admin may store too', async () => {
    const first = await postPlant(profile, engineerToken);
    expect(first.statusCode, first.body).toBe(201);
    expect(first.json()).toMatchObject({ id: profile.id, version: 1 });
    const got = await app.inject({ method: 'GET', url: `/api/v1/plants/${profile.id}` });
    expect(got.statusCode).toBe(200);
    expect(got.json().profile).toEqual(profile);
    expect(got.json().sha256).toBe(first.json().sha256);

    const again = await postPlant(profile, engineerToken);
    expect(again.statusCode).toBeLessThan(300);
    expect(again.statusCode).not.toBe(201);
    expect(again.json().version).toBe(1);

    const changed = await postPlant({ ...profile, targets: { residual: { value: 1.5, unit: 'mg/L' } } }, BOOTSTRAP);
    expect(changed.statusCode).toBe(201);
    expect(changed.json().version).toBe(2);
    const list = (await app.inject({ method: 'GET', url: '/api/v1/plants' })).json().plants;
    expect(list.filter((p: { id: string }) => p.id === profile.id)).toEqual([expect.objectContaining({ version: 2 })]);

    // and the stored profile drives a dose: 2.5 MGD × 3785.411784 = 9463.53 m3/d, residual 1.5 mg/L,
    // Fe 0.5 mg/L → 70.90/111.69 × 0.5 + 1.5 = 0.317396 + 1.5 = 1.817396 mg/L; feed = 1.817396 × 9463.53 / 1000 = 17.1990 kg/d
    const d = await post({ plantId: profile.id, oxidant: 'sodium-hypochlorite', sample: { pH: 7.3, temperatureC: 16, iron: { value: 0.5, unit: 'mg/L' } } });
    expect(d.statusCode, d.body).toBe(200);
    const dose = (Cl2 / (2 * Fe)) * 0.5 + 1.5;
    near(d.json().dose.value, dose);
    near(d.json().feed.massRate.value, (dose * 2.5 * MGD_M3_PER_D) / 1000);
  });
});
