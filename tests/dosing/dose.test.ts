/**
 * Worked examples of computeDose (src/dosing/index.ts) for an invented groundwater plant with
 * real chemistry, computed by hand below from the balanced reactions and the IUPAC 2021 atomic
 * weights as tabled (K 39.098, Mn 54.938, O 15.999, Fe 55.845, Cl 35.45, Na 22.990, N 14.007).
 * The chemistry of each ratio is checked against the published tables in ratio.test.ts.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { buildDosingContext, computeDose, DoseResultSchema, parseDoseRequest, parsePlantProfile, type DoseResult } from '../../src/dosing/index.js';
import { isDomainError } from '../../src/core/errors.js';
import { context, tables } from './fixture.js';
import { caught } from '../core/fixtures/caught.js';

const M = { K: 39.098, Mn: 54.938, O: 15.999, Fe: 55.845, Cl: 35.45, N: 14.007 };
const KMnO4 = M.K + M.Mn + 4 * M.O; // 158.032
const Cl2 = 2 * M.Cl; // 70.90
const ClO2 = M.Cl + 2 * M.O; // 67.448
const O3 = 3 * M.O; // 47.997
const O2 = 2 * M.O; // 31.998

const dose = (body: unknown, ctx = context): DoseResult => computeDose(parseDoseRequest(body), ctx);
const codes = (r: DoseResult) => r.flags.map((f) => f.code);
const demo = parsePlantProfile(JSON.parse(readFileSync(new URL('../../tables/demo/demo-plant.json', import.meta.url), 'utf8')));

describe('worked example 1 — potassium permanganate for iron and manganese (demo plant, invented)', () => {
  // Fe 0.5 mg/L, Mn 0.3 mg/L, measured background demand 0.2 mg/L as KMnO4, residual 0 (plant target)
  // Fe: MnO4- + 3Fe2+ + 7H2O → MnO2 + 3Fe(OH)3 + 5H+ : 158.032 / (3 × 55.845) = 0.943280 mg/mg → 0.5 × 0.943280 = 0.471640
  // Mn: 2MnO4- + 3Mn2+ + 2H2O → 5MnO2 + 4H+        : 2 × 158.032 / (3 × 54.938) = 1.917707 → 0.3 × 1.917707 = 0.575312
  // dose = 0.471640 + 0.575312 + 0.2 + 0 = 1.246952 mg/L as KMnO4
  const fe = (0.5 * KMnO4) / (3 * M.Fe);
  const mn = (0.3 * 2 * KMnO4) / (3 * M.Mn);
  const total = fe + mn + 0.2;
  const r = computeDose(
    parseDoseRequest({
      oxidant: 'potassium-permanganate',
      plantId: 'demo-groundwater',
      sample: { pH: 7.4, temperatureC: 12, iron: { value: 0.5, unit: 'mg/L' }, manganese: { value: 300, unit: 'ug/L' }, alkalinity: { value: 120, unit: 'mg/L' } },
      backgroundDemand: { value: 0.2, unit: 'mg/L' },
    }),
    context,
    { plant: demo },
  );
  it('dose = Σ demand + background + residual = 1.25 mg/L as KMnO4', () => {
    expect(r.dose.value).toBeCloseTo(total, 12);
    expect(r.dose.rounded).toBe('1.25');
    expect(r.dose.basis).toBe('as KMnO4');
    expect(r.terms.map((t) => t.term)).toEqual(['contaminant', 'contaminant', 'background', 'residual']);
  });
  it('feed from the plant: 1.246952 g/m3 × 4000 m3/d = 4.988 kg/d; 97 % solid → 5.142 kg/d; 2 % batch (20 g/L) → 4987.8 / 20 / 24 = 10.39 L/h = 17.3 % of the 60 L/h pump', () => {
    const kgPerD = (total * 4000) / 1000;
    expect(r.feed!.massRate.value).toBeCloseTo(kgPerD, 10);
    expect(r.feed!.productMassRate!.value).toBeCloseTo(kgPerD / 0.97, 10);
    expect(r.feed!.solutionRate!.value).toBeCloseTo((kgPerD * 1000) / 20 / 24, 10);
    expect(r.feed!.pump!.settingPercent.rounded).toBe('17.3');
    expect(r.plant!.fromPlant).toEqual(expect.arrayContaining(['flow', 'contactVolume', 'product', 'stock', 'batch', 'pump', 'targetResidual']));
  });
  it('solids: Fe 0.5 × (106.867/55.845 + 86.936/(3 × 55.845)) + Mn 0.3 × 5 × 86.936 / (3 × 54.938) = 0.957 + 0.259 + 0.791 mg/L', () => {
    const FeOH3 = M.Fe + 3 * (M.O + 1.008);
    const MnO2 = M.Mn + 2 * M.O;
    const fromBackground = (0.2 / KMnO4) * MnO2; // background KMnO4 also ends as MnO2
    const expected = 0.5 * (FeOH3 / M.Fe + MnO2 / (3 * M.Fe)) + (0.3 * 5 * MnO2) / (3 * M.Mn) + fromBackground;
    expect(r.sideEffects.solidsTotal.value).toBeCloseTo(expected, 10);
  });
  it('alkalinity: 5/3 H+ per Fe and 4/3 per Mn → (0.5/55.845 × 5/3 + 0.3/54.938 × 4/3) meq/L × 50.04 = 1.11 mg/L as CaCO3; the pH falls a little', () => {
    const meq = (0.5 / M.Fe) * (5 / 3) + (0.3 / M.Mn) * (4 / 3);
    expect(r.sideEffects.alkalinityConsumed.value).toBeCloseTo(meq * ((40.078 + 12.011 + 3 * M.O) / 2), 8);
    expect(r.sideEffects.pH.after).toBeLessThan(7.4);
    expect(r.sideEffects.pH.after).toBeGreaterThan(7.3);
  });
  it('both reactions feasible at pH 7.4 with a margin, contact 100 m3 / 4000 m3/d = 36 min covers the typical times', () => {
    expect(r.feasibility.map((f) => f.feasible)).toEqual([true, true]);
    expect(r.contact.availableMinutes).toBeCloseTo((100 / 4000) * 1440, 10);
    expect(r.contact.entries.every((e) => e.status === 'ok')).toBe(true);
  });
  it('cautions name the product hazards and the standing note that local rules govern', () => {
    expect(r.cautions.join(' ')).toMatch(/pink/);
    expect(r.cautions.join(' ')).toMatch(/Local regulations/);
  });
});

describe('worked example 2 — sodium hypochlorite for iron with a residual (demo plant, invented)', () => {
  // Fe 1.2 mg/L at pH 7.0 (acid medium): OCl- + 2Fe2+ + 5H2O → Cl- + 2Fe(OH)3 + 4H+
  // ratio = 70.90 / (2 × 55.845) = 0.634793 → 1.2 × 0.634793 = 0.761751; residual 1.0 (plant) → 1.761751 mg/L as Cl2
  // feed: 1.761751 × 4000 / 1000 = 7.047 kg/d; 12.5 trade % = 125 g/L → 7047 / 125 / 24 = 2.349 L/h → 23.5 % of 10 L/h
  const expected = (1.2 * Cl2) / (2 * M.Fe) + 1.0;
  const r = computeDose(parseDoseRequest({ oxidant: 'sodium-hypochlorite', plantId: 'demo-groundwater', sample: { pH: 7.0, temperatureC: 12, iron: { value: 1.2, unit: 'mg/L' } } }), context, { plant: demo });
  it('dose 1.76 mg/L as Cl2 and its feed', () => {
    expect(r.dose.value).toBeCloseTo(expected, 12);
    expect(r.dose.rounded).toBe('1.76');
    expect(r.feed!.solutionRate!.value).toBeCloseTo((expected * 4000) / 125 / 24, 10);
    expect(r.feed!.pump!.settingPercent.rounded).toBe('23.5');
    expect(r.demand[0]!.reaction).toBe('OCl- + 2Fe2+ + 5H2O -> Cl- + 2Fe(OH)3(s) + 4H+');
  });
  it('with 0.5 mg/L ammonia-N at the theoretical breakpoint: + 0.5 × 3 × 70.90 / (2 × 14.007) = 1.898 mg/L', () => {
    const r2 = computeDose(parseDoseRequest({ oxidant: 'sodium-hypochlorite', plantId: 'demo-groundwater', sample: { pH: 7.0, temperatureC: 12, iron: { value: 1.2, unit: 'mg/L' }, ammoniaN: { value: 0.5, unit: 'mg/L' } } }), context, { plant: demo });
    expect(r2.dose.value).toBeCloseTo(expected + (0.5 * 3 * Cl2) / (2 * M.N), 10);
    expect(r2.demand[1]!.ratioKind).toBe('stoichiometric');
  });
  it('the practical breakpoint ratio (common practice, 10 mg Cl2 per mg N) is an option, named as such', () => {
    const r3 = computeDose(
      parseDoseRequest({ oxidant: 'sodium-hypochlorite', plantId: 'demo-groundwater', sample: { pH: 7.0, temperatureC: 12, ammoniaN: { value: 0.5, unit: 'mg/L' } }, options: { ammoniaRatio: 'practical' } }),
      context,
      { plant: demo },
    );
    expect(r3.demand[0]!.ratioKind).toBe('practical');
    expect(r3.demand[0]!.demand.value).toBe(5); // 0.5 × 10
    expect(r3.demand[0]!.provenance.join(' ')).toMatch(/common practice/);
  });
});

describe('worked example 3 — chlorine dioxide, with the chlorite it forms', () => {
  // Fe 0.6, Mn 0.1 mg/L, residual 0.2 mg/L, 2000 m3/d
  // Fe: ClO2 + Fe2+ + 3H2O → ClO2- + Fe(OH)3 + 3H+     : 0.6 × 67.448 / 55.845 = 0.724663
  // Mn: 2ClO2 + Mn2+ + 2H2O → 2ClO2- + MnO2 + 4H+      : 0.1 × 2 × 67.448 / 54.938 = 0.245542
  // dose = 0.724663 + 0.245542 + 0.2 = 1.170205 mg/L as ClO2; chlorite: the reactions alone reduce 0.970205 mg/L of
  // ClO2 to ClO2- (1 : 1 by mol; M(ClO2-)/M(ClO2) = 1 less an electron's mass), more than 0.7 × 1.170205 = 0.819 mg/L
  // (the usual 50–70 % of the dose, US EPA 1999), so 0.970 mg/L is the estimate
  const expected = (0.6 * ClO2) / M.Fe + (0.1 * 2 * ClO2) / M.Mn + 0.2;
  const r = dose({ oxidant: 'chlorine-dioxide', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 15, iron: { value: 0.6, unit: 'mg/L' }, manganese: { value: 0.1, unit: 'mg/L' } }, targetResidual: { value: 0.2, unit: 'mg/L' } });
  it('dose 1.17 mg/L as ClO2; generator output 1.170205 × 2000 / 1000 = 2.34 kg/d', () => {
    expect(r.dose.value).toBeCloseTo(expected, 12);
    expect(r.feed!.generator!.output.value).toBeCloseTo((expected * 2000) / 1000, 10);
    expect(r.feed!.solutionRate).toBeNull();
  });
  it('chlorite 0.970 mg/L, the larger of the reactions\' chlorite and 70 % of the dose: under the US MCL 1.0 mg/L (40 CFR 141.64), over the WHO 0.7 mg/L → warning', () => {
    const c = r.sideEffects.byproducts.find((b) => b.id === 'chlorite')!;
    const byReactions = expected - 0.2;
    expect(byReactions).toBeGreaterThan(0.7 * expected);
    expect(c.estimate!.value).toBeCloseTo(byReactions, 6);
    expect(c.text).toMatch(/balanced reactions with iron\(II\) and manganese\(II\) reduce all the chlorine dioxide they consume to chlorite.*: 0\.970 mg\/L/);
    // a background demand adds its usual share: Fe 0.1, Mn 0.3, background 0.4, residual 0.1 mg/L →
    // reactions 0.1 × 67.448/55.845 + 0.3 × 2 × 67.448/54.938 = 0.8574, + 0.7 × 0.4 = 1.1374 mg/L, over the US MCL 1.0
    const bg = dose({ oxidant: 'chlorine-dioxide', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 15, iron: { value: 0.1, unit: 'mg/L' }, manganese: { value: 0.3, unit: 'mg/L' } }, backgroundDemand: { value: 0.4, unit: 'mg/L' }, targetResidual: { value: 0.1, unit: 'mg/L' } });
    const expectedBg = (0.1 * ClO2) / M.Fe + (0.3 * 2 * ClO2) / M.Mn + 0.7 * 0.4; // ClO2- and ClO2 differ by an electron's mass
    expect(bg.sideEffects.byproducts.find((b) => b.id === 'chlorite')!.estimate!.value).toBeCloseTo(expectedBg, 4);
    expect(codes(bg)).toContain('CHLORITE_ABOVE_MCL');
    // with little iron and a residual the rule-of-thumb fraction is the larger: 0.2 mg/L Fe (0.2416 mg/L ClO2) and
    // a 0.5 mg/L residual give 0.7 × 0.7416 = 0.519 mg/L against 0.2416 from the reaction
    const low = dose({ oxidant: 'chlorine-dioxide', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 15, iron: { value: 0.2, unit: 'mg/L' } }, targetResidual: { value: 0.5, unit: 'mg/L' } });
    expect(low.sideEffects.byproducts.find((b) => b.id === 'chlorite')!.estimate!.value).toBeCloseTo(0.7 * low.dose.value, 10);
    expect(r.flags.find((f) => f.code === 'CHLORITE_ABOVE_WHO')?.severity).toBe('warning');
    expect(codes(r)).not.toContain('CHLORITE_ABOVE_MCL');
  });
});

describe('worked example 4 — ozone, with bromide present', () => {
  // Fe 0.4, Mn 0.2 mg/L at 3000 m3/d: O3 + 2Fe2+ + 5H2O → O2 + 2Fe(OH)3 + 4H+ ; O3 + Mn2+ + H2O → O2 + MnO2 + 2H+
  // dose = 0.4 × 47.997 / (2 × 55.845) + 0.2 × 47.997 / 54.938 = 0.171894 + 0.174732 = 0.346626 mg/L as O3
  // generator output = 0.346626 × 3000 / 1000 = 1.0399 kg/d = 43.33 g/h
  const expected = (0.4 * O3) / (2 * M.Fe) + (0.2 * O3) / M.Mn;
  const r = dose({ oxidant: 'ozone', flow: { value: 3000, unit: 'm3/d' }, sample: { pH: 7.0, temperatureC: 18, iron: { value: 0.4, unit: 'mg/L' }, manganese: { value: 0.2, unit: 'mg/L' }, bromide: { value: 80, unit: 'ug/L' } } });
  it('dose and generator output', () => {
    expect(r.dose.value).toBeCloseTo(expected, 12);
    expect(r.feed!.generator!.outputGPerH.value).toBeCloseTo((expected * 3000) / 24, 8);
  });
  it('bromide 0.08 mg/L above the 0.05 mg/L screening level (common practice) → bromate warning citing the 0.010 mg/L MCL', () => {
    const f = r.flags.find((x) => x.code === 'BROMATE_RISK')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toMatch(/0\.010/);
    expect(f.source).toBe('cfr-40-141-64');
  });
});

describe('worked example 5 — oxygen by aeration for iron (Stumm & Lee 1961 kinetics)', () => {
  // Fe 2.0 mg/L: O2 + 4Fe2+ + 10H2O → 4Fe(OH)3 + 8H+ : 31.998 / (4 × 55.845) = 0.143244 → 0.286 mg/L O2
  const at = (pH: number) => dose({ oxidant: 'oxygen', flow: { value: 1000, unit: 'm3/d' }, sample: { pH, temperatureC: 15, iron: { value: 2.0, unit: 'mg/L' } }, contactTime: { value: 20, unit: 'min' } });
  const r75 = at(7.5);
  const r80 = at(8.0);
  it('dose 0.286 mg/L as O2, below saturation at 15 °C (10.084 mg/L)', () => {
    expect(r75.dose.value).toBeCloseTo((2.0 * O2) / (4 * M.Fe), 12);
    expect(codes(r75)).not.toContain('OXYGEN_ABOVE_SATURATION');
  });
  it('the rate law is second order in OH-: half a pH unit more makes the time to 0.3 mg/L ten times shorter', () => {
    const t75 = r75.contact.entries[0]!.requiredMinutes!;
    const t80 = r80.contact.entries[0]!.requiredMinutes!;
    expect(t75 / t80).toBeCloseTo(10, 6);
    expect(r75.contact.entries[0]!.basis).toBe('rate-law');
  });
  it('at pH 6 the same iron needs days: too slow for 20 min, with the remedy (raise pH, aerate, longer detention, stronger oxidant)', () => {
    const r6 = at(6.0);
    const e = r6.contact.entries[0]!;
    expect(e.tooSlow).toBe(true);
    expect(e.remedy).toMatch(/pH/);
    expect(codes(r6)).toContain('CONTACT_TOO_SHORT');
  });
});

describe('flags', () => {
  const base = { flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 15 } };
  it('iron above 20 mg/L and pH below 5 are legal but unusual: warnings, not errors', () => {
    const r = dose({ ...base, oxidant: 'chlorine-gas', sample: { pH: 4.5, temperatureC: 15, iron: { value: 25, unit: 'mg/L' } } });
    expect(r.flags.find((f) => f.code === 'IRON_UNUSUALLY_HIGH')?.severity).toBe('warning');
    expect(r.flags.find((f) => f.code === 'PH_UNUSUALLY_LOW')?.severity).toBe('warning');
  });
  it('ammonia with a non-chlorine oxidant: info that breakpoint does not apply, and no ammonia demand', () => {
    const r = dose({ ...base, oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 15, ammoniaN: { value: 0.5, unit: 'mg/L' } } });
    expect(r.flags.find((f) => f.code === 'AMMONIA_BREAKPOINT_NOT_APPLICABLE')?.severity).toBe('info');
    expect(r.demand).toEqual([]);
    // and the zero dose says why, rather than that no contaminant was given
    expect(r.flags.find((f) => f.code === 'DOSE_ZERO')?.message).toMatch(/not ones Potassium permanganate.* is counted against/);
  });
  it('names inside a sentence keep their oxidation state in capitals: "manganese(II)", not "manganese(ii)"', () => {
    const r = dose({ ...base, oxidant: 'hydrogen-peroxide', sample: { pH: 7.2, temperatureC: 15, manganese: { value: 0.3, unit: 'mg/L' } } });
    const f = r.flags.find((x) => x.code === 'OXIDANT_UNUSUAL_FOR_CONTAMINANT')!;
    expect(f.message).toContain('manganese(II)');
    expect(r.flags.map((x) => x.message).join(' ')).not.toMatch(/\((ii|iii)\)/);
  });
  it('ammonia with chlorine: a warning that chloramines form before breakpoint, the ratio counted and the practical range (common practice, White\'s Handbook)', () => {
    // 3 Cl2 per 2 N: 3 × 70.906 / (2 × 14.007) = 7.59 mg Cl2 per mg N, the stoichiometric minimum
    const r = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.5, temperatureC: 15, ammoniaN: { value: 0.5, unit: 'mg/L' }, manganese: { value: 0.1, unit: 'mg/L' } } });
    const f = r.flags.find((x) => x.code === 'BREAKPOINT_CHLORAMINES')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toContain('7.59 mg Cl2 per mg N counted here is the stoichiometric minimum');
    expect(f.message).toContain('8 to 10');
    expect(f.message).toContain('this sample has manganese');
    expect(f.source).toBe('whites-handbook-5');
    const practical = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.5, temperatureC: 15, ammoniaN: { value: 0.5, unit: 'mg/L' } }, options: { ammoniaRatio: 'practical' } });
    expect(practical.flags.find((x) => x.code === 'BREAKPOINT_CHLORAMINES')!.message).toContain('the practical 10 mg Cl2 per mg N counted here is common practice');
    expect(practical.flags.find((x) => x.code === 'BREAKPOINT_CHLORAMINES')!.message).not.toContain('manganese)');
  });
  it('chlorine gas at the practical breakpoint ratio: the chlorine beyond the stoichiometric 7.59 hydrolyses too, and its acid is counted', () => {
    // extra Cl2 = (10 − 7.59) × 0.5 mg N/L = 1.205 mg/L → 1.205 / 70.906 = 0.0170 mmol/L → ≥ 0.0170 meq/L H+ from
    // Cl2 + H2O = HOCl + H+ + Cl- → ≥ 0.0170 × 50.04 = 0.85 mg/L as CaCO3 more than with the stoichiometric ratio
    const body = { flow: { value: 1000, unit: 'm3/d' }, oxidant: 'chlorine-gas', targetResidual: { value: 1, unit: 'mg/L' }, sample: { pH: 7.2, temperatureC: 12, ammoniaN: { value: 0.5, unit: 'mg/L' }, alkalinity: { value: 100, unit: 'mg/L' } } };
    const st = dose({ ...body, options: { ammoniaRatio: 'theoretical' } });
    const pr = dose({ ...body, options: { ammoniaRatio: 'practical' } });
    const extraCl2 = pr.dose.value - st.dose.value;
    const hydrolysisOnly = (extraCl2 / 70.906) * 50.04;
    expect(pr.sideEffects.alkalinityConsumed.value - st.sideEffects.alkalinityConsumed.value).toBeGreaterThanOrEqual(hydrolysisOnly - 1e-9);
    expect(pr.sideEffects.alkalinityTerms.find((t) => t.what === 'hydrolysis')!.how).toMatch(/practical breakpoint excess/);
  });
  it('sulfide with oxygen: a warning that oxidation is slow and aeration strips only H2S, with its share at the pH and temperature (pKa from the tables)', () => {
    // un-ionised share 1/(1 + 10^(pH − pKa)). The H2S pKa follows the temperature by phreeqc.dat's
    // analytical expression −11.17 + 0.02386·T + 3279/T, which PHREEQC uses in place of the printed
    // log_k 6.994 when both are given: 6.94 at 25 °C, 7.08 at 15 °C. Cross-checks: van 't Hoff with
    // phreeqc.dat's delta_h (5.30 kcal/mol for the dissociation) moves pK by 0.135 from 25 to 15 °C
    // (the expression by 0.143); the CRC table's 25 °C value is 7.05 (from memory).
    const pKaAt = (c: number) => -11.17 + 0.02386 * (273.15 + c) + 3279 / (273.15 + c);
    const at = (pH: number, temperatureC = 15) =>
      dose({ ...base, oxidant: 'oxygen', sample: { pH, temperatureC, sulfide: { value: 2, unit: 'mg/L' } } }).flags.find((x) => x.code === 'AERATION_SULFIDE_SLOW')!;
    expect(at(7).severity).toBe('warning');
    expect(pKaAt(15)).toBeCloseTo(7.08, 2);
    expect(pKaAt(25)).toBeCloseTo(6.94, 2); // −11.17 + 0.02386 × 298.15 + 3279/298.15 = 6.9417, as the comment above says
    expect(pKaAt(15) - pKaAt(25)).toBeCloseTo(((5.3 * 4184) / (8.314462618 * Math.LN10)) * (1 / 288.15 - 1 / 298.15), 1); // 0.143 vs 0.135: ΔH is not constant
    expect(at(7).message).toContain(`about ${(100 / (1 + 10 ** (7 - pKaAt(15)))).toPrecision(2)} % of the sulfide is H2S`);
    expect(at(8.5).message).toContain(`about ${(100 / (1 + 10 ** (8.5 - pKaAt(15)))).toPrecision(2)} % of the sulfide is H2S`);
    // colder water holds more of it as H2S at the same pH
    expect(at(7.2, 5).message).toContain(`about ${(100 / (1 + 10 ** (7.2 - pKaAt(5)))).toPrecision(2)} % of the sulfide is H2S`);
    expect(pKaAt(5)).toBeGreaterThan(pKaAt(25));
    expect(dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7, temperatureC: 15, sulfide: { value: 2, unit: 'mg/L' } } }).flags.map((x) => x.code)).not.toContain('AERATION_SULFIDE_SLOW');
  });
  it('a target residual above the MRDL (4.0 mg/L as Cl2, 40 CFR 141.65) is danger, naming the limit and that local regulations govern', () => {
    const r = dose({ ...base, oxidant: 'sodium-hypochlorite', targetResidual: { value: 5, unit: 'mg/L' } });
    const f = r.flags.find((x) => x.code === 'RESIDUAL_ABOVE_MRDL')!;
    expect(f.severity).toBe('danger');
    expect(f.message).toMatch(/40 CFR 141\.65/);
    expect(f.message).toMatch(/Local regulations/);
    expect(r.flags[0]!.severity).toBe('danger'); // danger sorted first
  });
  it('raw arsenite above the MCL: oxidation removes no arsenic (warning naming 40 CFR 141.62)', () => {
    const r = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, arsenite: { value: 25, unit: 'ug/L' } } });
    const f = r.flags.find((x) => x.code === 'RAW_ARSENIC_ABOVE_LIMIT')!;
    expect(f.message).toMatch(/141\.62/);
  });
  it('raw nitrite against its limits: US MCL 1 mg/L as N (40 CFR 141.62(b)), WHO 3 mg/L as NO2- and EU 0.50 mg/L as NO2- compared through the molar masses (values from memory)', () => {
    // 3 mg/L as NO2- × 14.007 / 46.005 = 0.913 mg/L as N; 0.50 × 14.007 / 46.005 = 0.152 mg/L as N (IUPAC weights N 14.007, O 15.999)
    const asN = (x: number) => (x * 14.007) / (14.007 + 2 * 15.999);
    const at = (n: number) => dose({ ...base, oxidant: 'chlorine-gas', sample: { pH: 7.5, temperatureC: 15, nitrite: { value: n, unit: 'mg/L' } } }).flags.find((x) => x.code === 'RAW_NITRITE_ABOVE_LIMIT');
    const f = at(0.95)!;
    expect(f.severity).toBe('warning');
    expect(f.message).toContain(`3 mg/L as NO2- (${asN(3).toFixed(3)} mg/L as N)`);
    expect(f.message).toContain(`0.50 mg/L as NO2- (${asN(0.5).toFixed(3)} mg/L as N)`);
    expect(f.message).not.toMatch(/US EPA MCL/); // 0.95 is below the 1 mg/L as N MCL
    expect(f.message).toMatch(/nitrate/);
    expect(f.message).toMatch(/Local regulations/);
    expect(at(1.2)!.message).toMatch(/US EPA MCL 1 mg\/L as N \(40 CFR 141\.62\(b\)\)/);
    expect(at(0.1)).toBeUndefined();
  });
  it('chlorine with TOC above 2.0 mg/L: DBP caution (screening level from 40 CFR 141.135, named common practice)', () => {
    const r = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, toc: { value: 3.5, unit: 'mg/L' } } });
    expect(r.flags.find((x) => x.code === 'DBP_CAUTION')?.message).toMatch(/common practice/);
  });
  it('hypochlorite and chlorine dioxide name chlorate and its limits (WHO 0.7 mg/L provisional; EU 2020/2184 0.25 mg/L, 0.70 with ClO2; both from memory); chlorine gas, ozone and permanganate do not', () => {
    for (const oxidant of ['sodium-hypochlorite', 'calcium-hypochlorite', 'chlorine-dioxide']) {
      const r = dose({ ...base, oxidant, sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } } });
      const f = r.flags.find((x) => x.code === 'CHLORATE_CHECK')!;
      expect(f.severity).toBe('info');
      expect(f.message).toMatch(/0\.7 mg\/L/);
      expect(f.message).toMatch(/0\.25 mg\/L/);
      expect(f.message).toMatch(/2020\/2184/);
      expect(f.message).toMatch(/Local regulations govern/);
      const b = r.sideEffects.byproducts.find((x) => x.id === 'chlorate')!;
      expect(b.estimate).toBeNull();
      expect(b.limit?.value).toBe('0.7');
    }
    for (const oxidant of ['chlorine-gas', 'ozone', 'potassium-permanganate']) {
      expect(dose({ ...base, oxidant, sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } } }).flags.map((x) => x.code)).not.toContain('CHLORATE_CHECK');
    }
  });
  it('manganese with free chlorine at pH 7.2 is feasible but too slow for 36 min (typical range from the literature)', () => {
    const r = dose({ ...base, flow: { value: 4000, unit: 'm3/d' }, contactVolume: { value: 100, unit: 'm3' }, oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, manganese: { value: 0.2, unit: 'mg/L' } } });
    expect(r.feasibility[0]!.feasible).toBe(true);
    const e = r.contact.entries[0]!;
    expect(e.basis).toBe('typical range from the literature');
    expect(e.tooSlow).toBe(true);
  });
  it('permanganate with manganese at pH 6.5: below the pH of the typical times → warning with the remedy', () => {
    const r = dose({ ...base, oxidant: 'potassium-permanganate', sample: { pH: 6.5, temperatureC: 15, manganese: { value: 0.3, unit: 'mg/L' } }, contactTime: { value: 20, unit: 'min' } });
    expect(r.flags.find((x) => x.code === 'CONTACT_PH_TOO_LOW')?.message).toMatch(/raise the pH/i);
  });
  it('oxygen cannot supply more than saturation: 80 mg/L iron needs 11.5 mg/L O2 > 10.084 at 15 °C → danger', () => {
    const r = dose({ ...base, oxidant: 'oxygen', sample: { pH: 7.5, temperatureC: 15, iron: { value: 80, unit: 'mg/L' } } });
    expect(r.flags.find((x) => x.code === 'OXYGEN_ABOVE_SATURATION')?.severity).toBe('danger');
  });
  it('warm water beyond the 0–40 °C saturation table: Henry\'s law with the water vapour pressure, falling to zero at the boiling point, and the flag says so', () => {
    // Independent: C* = K_H(T) × 0.20946 × (1 atm − p_w(T)) × 31 998 mg/mol. p_w from the steam tables
    // (from memory): 19.95 kPa at 60 °C, 70.18 kPa at 90 °C, 97.85 kPa at 99 °C, 101.325 kPa at 100 °C.
    // K_H of O2 from phreeqc.dat's expression (log K = −7.5001 + 7.8981e-3·T + 2.0027e5/T²) — the service
    // scales its curve to meet the 40 °C table point (6.412 mg/L), so allow a few per cent.
    const kH = (c: number) => 10 ** (-7.5001 + 7.8981e-3 * (c + 273.15) + 2.0027e5 / (c + 273.15) ** 2);
    const byHand = (c: number, pwKPa: number) => kH(c) * 0.20946 * (1 - pwKPa / 101.325) * 31998;
    const sat = (c: number) => context.o2SaturationAt(c);
    expect(sat(40)).toBeCloseTo(6.412, 3); // the table point itself
    for (const [c, pw] of [[60, 19.95], [90, 70.18], [99, 97.85]] as const) {
      expect(Math.abs(sat(c) - byHand(c, pw)) / byHand(c, pw), `${c} °C`).toBeLessThan(0.05);
    }
    expect(sat(60)).toBeGreaterThan(4.5); // published tables give about 4.7 mg/L at 60 °C (from memory)
    expect(sat(99)).toBeLessThan(0.25);
    expect(sat(100)).toBe(0);
    // 3 mg/L sulfide to sulfate needs 2 × 31.998 / 32.06 × 3 = 5.99 mg/L O2: above what 50 °C water holds
    const hot = dose({ ...base, oxidant: 'oxygen', sample: { pH: 7.5, temperatureC: 50, sulfide: { value: 3, unit: 'mg/L' } }, options: { sulfideProduct: 'sulfate' } });
    expect(hot.flags.find((x) => x.code === 'OXYGEN_ABOVE_SATURATION')?.message).toContain(`(${sat(50).toFixed(2)} mg/L)`);
    const beyond = hot.flags.find((x) => x.code === 'TEMPERATURE_BEYOND_CORRELATION')!;
    expect(beyond.severity).toBe('info');
    expect(beyond.message).toMatch(/ends at 40 °C; beyond it Henry's law with the water vapour pressure/);
    // at 99 °C 1.4 mg/L of O2 for 10 mg/L iron is beyond what the water can hold
    const at99 = dose({ ...base, oxidant: 'oxygen', sample: { pH: 7.5, temperatureC: 99, iron: { value: 10, unit: 'mg/L' } } });
    expect(at99.flags.map((x) => x.code)).toContain('OXYGEN_ABOVE_SATURATION');
    // the contact check's oxygen pressure: 0.2095 × (101.325 − 19.95)/101.325 = 0.168 atm at 60 °C
    const at60 = dose({ ...base, oxidant: 'oxygen', sample: { pH: 7, temperatureC: 60, iron: { value: 3, unit: 'mg/L' } }, contactTime: { value: 10, unit: 'min' } });
    const detail = at60.contact!.entries[0]!.detail as { dissolvedOxygenMgPerL: number; pO2Atm: number };
    expect(detail.dissolvedOxygenMgPerL).toBeCloseTo(sat(60), 6);
    expect(Math.abs(detail.pO2Atm - 0.168) / 0.168).toBeLessThan(0.03);
    // boiling water holds none: oxygen is refused naming the temperature
    const boiling = caught(() => dose({ ...base, oxidant: 'oxygen', sample: { pH: 7, temperatureC: 100, iron: { value: 1, unit: 'mg/L' } } }));
    expect(boiling.code).toBe('CONDITIONS_OUT_OF_RANGE');
    expect(boiling.fields.map((f) => f.pointer)).toEqual(['/sample/temperatureC']);
    // within the table and the correlations' ranges, no such flag
    expect(dose({ ...base, oxidant: 'oxygen', sample: { pH: 7, temperatureC: 25, iron: { value: 3, unit: 'mg/L' } } }).flags.map((x) => x.code)).not.toContain('TEMPERATURE_BEYOND_CORRELATION');
  });
  it('Kw beyond its fitted range (Harned & Owen, 0–60 °C) is named at 70 °C', () => {
    const r = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7, temperatureC: 70, iron: { value: 1, unit: 'mg/L' } } });
    const f = r.flags.find((x) => x.code === 'TEMPERATURE_BEYOND_CORRELATION')!;
    expect(f.message).toMatch(/harned-owen-kw\) is fitted for 0–60 °C/);
    expect(f.message).toMatch(/morris-hocl\) is fitted for 5–35 °C/);
    expect(f.source).toBe('harned-owen-1958');
  });
  it('a purity below the usual grade (KMnO4 at least 97 %, ANSI/AWWA B603; Ca(OCl)2 65–70 %, ANSI/AWWA B300; both from memory) is used as given, with a warning', () => {
    const km = (purity: number) => dose({ ...base, oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 15, iron: { value: 2, unit: 'mg/L' } }, product: { purity: { value: purity, unit: '%' } } });
    const low = km(50);
    const f = low.flags.find((x) => x.code === 'PURITY_BELOW_GRADE')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toContain('97 %');
    expect(f.message).toContain(`${(97 / 50).toPrecision(3)} times`);
    // product mass = KMnO4 mass ÷ purity: at 50 % it is 98/50 of what a 98 % product needs
    const at98 = km(98);
    expect(at98.flags.map((x) => x.code)).not.toContain('PURITY_BELOW_GRADE');
    const mass = (r: typeof low) => r.feed!.productMassRate!.value;
    expect(mass(low) / mass(at98)).toBeCloseTo(98 / 50, 2);
    const hy = dose({ ...base, oxidant: 'calcium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, iron: { value: 2, unit: 'mg/L' } }, product: { purity: { value: 60, unit: '%' } } });
    expect(hy.flags.find((x) => x.code === 'PURITY_BELOW_GRADE')?.message).toMatch(/65 %.*loses strength/);
  });
  it('contact time and contact volume both given: the time is used and the note gives what the volume would: 10 000 gal at 500 gpm is 20 min', () => {
    const r = dose({ oxidant: 'chlorine-gas', flow: { value: 500, unit: 'gpm' }, sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } }, contactVolume: { value: 10000, unit: 'gal' }, contactTime: { value: 5, unit: 'min' } });
    expect(r.contact!.availableMinutes).toBe(5);
    expect(r.notes.find((n) => n.startsWith('Contact:'))).toMatch(/5 min, was used; the contact volume ÷ flow would give 20\.0 min/);
  });
  it('an unusually high reading speaks of solids only where oxidation makes them (iron, not arsenite)', () => {
    const msg = (sample: Record<string, unknown>, code: string) => dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, ...sample } }).flags.find((x) => x.code === code)!.message;
    expect(msg({ iron: { value: 25, unit: 'mg/L' } }, 'IRON_UNUSUALLY_HIGH')).toMatch(/the dose and the solids load scale with it/);
    expect(msg({ arsenite: { value: 0.8, unit: 'mg/L' } }, 'ARSENITE_UNUSUALLY_HIGH')).toMatch(/the dose scales with it/);
    expect(msg({ nitrite: { value: 2, unit: 'mg/L' } }, 'NITRITE_UNUSUALLY_HIGH')).not.toMatch(/solids/);
  });
  it('a batch for a gas is refused naming /batch; for a solution it is not computed, with a note saying why', () => {
    const err = caught(() => dose({ ...base, oxidant: 'chlorine-gas', sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } }, batch: { volume: { value: 100, unit: 'L' }, temperatureC: 20 } }));
    expect(err.fields.map((f) => f.pointer)).toEqual(['/batch']);
    const hypo = dose({ ...base, oxidant: 'sodium-hypochlorite', sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } }, product: { strength: { value: 12.5, unit: '% w/v' } }, batch: { volume: { value: 100, unit: 'L' } } });
    expect(hypo.feed!.batch).toBeNull();
    expect(hypo.flags.find((f) => f.code === 'BATCH_NOT_USED')?.message).toMatch(/delivered as a solution/);
    // a solid with a strength makes up the batch (no such note)
    const km = dose({ ...base, oxidant: 'potassium-permanganate', sample: { pH: 7.2, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } }, product: { strength: { value: 2, unit: '% w/w' } }, batch: { volume: { value: 100, unit: 'L' } } });
    expect(km.feed!.batch).not.toBeNull();
    expect(km.flags.map((f) => f.code)).not.toContain('BATCH_NOT_USED');
  });
  it('every flag source is a sources.json id or "input"', () => {
    const ids = new Set([...tables.sources.map((s) => s.id), 'input']);
    const r = dose({ ...base, oxidant: 'chlorine-dioxide', sample: { pH: 4.5, temperatureC: 15, iron: { value: 25, unit: 'mg/L' }, manganese: { value: 0.5, unit: 'mg/L' }, ammoniaN: { value: 1, unit: 'mg/L' } }, targetResidual: { value: 1, unit: 'mg/L' } });
    for (const f of r.flags) expect(ids.has(f.source), `${f.code}: ${f.source}`).toBe(true);
  });
});

describe('feasibility at the sample conditions', () => {
  it('oxygen with iron at pH 6: feasible, with the pH below which it stops (E = 0) between 0 and 14', () => {
    const r = dose({ oxidant: 'oxygen', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 6, temperatureC: 15, iron: { value: 2, unit: 'mg/L' } } });
    const f = r.feasibility[0]!;
    expect(f.feasible).toBe(true);
    expect(f.feasibleSide).toBe('above');
    expect(f.feasibilityLimitPH).toBeGreaterThan(0);
    expect(f.feasibilityLimitPH).toBeLessThan(6);
    expect(f.cellPotentialV).toBeCloseTo(f.oxidantCouple.potentialV - f.contaminantCouple.potentialV, 12);
  });
  it('arsenite to arsenate: both split by the pH (H3AsO3 pKa 9.29; H3AsO4 pKa 2.26, 6.76, 11.29; CRC, from memory), so E of the As couple follows Nernst on the acid forms', () => {
    // H3AsO4 + 2H+ + 2e- = H3AsO3 + H2O, E° 0.575 V (Harris): E = 0.575 − (s/2)·[log a(H3AsO3) − log a(H3AsO4) + 2 pH], γ = 1 (no TDS)
    const pH = 7.5;
    const r = dose({ oxidant: 'sodium-hypochlorite', flow: { value: 1000, unit: 'm3/d' }, sample: { pH, temperatureC: 25, arsenite: { value: 0.05, unit: 'mg/L' } } });
    const c = 0.05e-3 / 74.9216; // mol/L of As, both forms (IUPAC 2021 As)
    const a0 = 1 / (1 + 10 ** (pH - 2.26) + 10 ** (2 * pH - 2.26 - 6.76) + 10 ** (3 * pH - 2.26 - 6.76 - 11.29));
    const aRed = 1 / (1 + 10 ** (pH - 9.29));
    const s = (8.314462618 * 298.15 * Math.LN10) / 96485.33212;
    const expected = 0.575 - (s / 2) * (Math.log10(c * aRed) - Math.log10(c * a0) + 2 * pH);
    const f = r.feasibility.find((x) => x.contaminant === 'arsenite')!;
    expect(f.contaminantCouple.potentialV).toBeCloseTo(expected, 4);
    expect(f.feasible).toBe(true);
  });
  it('ozone: the feed note speaks of the ozone the contactor transfers, not of a generator solution', () => {
    const r = dose({ oxidant: 'ozone', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } });
    const notes = r.feed!.notes.join(' ');
    expect(notes).toMatch(/ozone the contactor must transfer/);
    expect(notes).not.toMatch(/generator solution/);
  });
  it('aeration: the iron oxygenation time runs on the water after aeration, not the raw water\'s 0.5 mg/L of DO (Stumm & Lee 1961)', () => {
    const body = { oxidant: 'oxygen', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 12, iron: { value: 2, unit: 'mg/L' }, dissolvedOxygen: { value: 0.5, unit: 'mg/L' } } };
    const detailOf = (r: DoseResult) => r.contact.entries.find((e) => e.contaminant === 'iron')!.detail as { dissolvedOxygenMgPerL: number; dissolvedOxygenFrom: string };
    // no DO residual targeted: air saturation at 12 °C, the table's value
    const saturated = detailOf(dose(body));
    expect(saturated.dissolvedOxygenFrom).toMatch(/saturation in air/);
    expect(saturated.dissolvedOxygenMgPerL).toBeGreaterThan(10);
    // a 2 mg/L DO residual targeted: 0.5 measured + the dose (demand 2 × 0.1432 + 2 residual) − what the iron
    // consumes (2 × 0.1432) = 0.5 + 2: the DO left after the reaction, the cautious figure for the rate
    const r = dose({ ...body, targetResidual: { value: 2, unit: 'mg/L' } });
    expect(detailOf(r).dissolvedOxygenMgPerL).toBeCloseTo(0.5 + 2, 9);
    expect(detailOf(r).dissolvedOxygenFrom).toMatch(/DO left after the reactions/);
    // the raw water's DO is set against the need: 0.5 of 2.286 mg/L, so about 1.79 mg/L to add
    expect(r.flags.find((f) => f.code === 'DISSOLVED_OXYGEN_IN_SAMPLE')!.message).toMatch(/must add about 1\.79 mg\/L/);
    // with a background demand the oxygen it takes is gone too: still the sample's DO + the residual
    const bg = dose({ ...body, sample: { ...body.sample, dissolvedOxygen: { value: 2, unit: 'mg/L' } }, backgroundDemand: { value: 3, unit: 'mg/L' }, targetResidual: { value: 1, unit: 'mg/L' } });
    expect(detailOf(bg).dissolvedOxygenMgPerL).toBeCloseTo(2 + 1, 9);
    const rich = dose({ ...body, sample: { ...body.sample, dissolvedOxygen: { value: 8, unit: 'mg/L' } }, targetResidual: { value: 2, unit: 'mg/L' } });
    expect(rich.flags.find((f) => f.code === 'DISSOLVED_OXYGEN_IN_SAMPLE')!.message).toMatch(/already holds 8\.00 mg\/L dissolved oxygen, at least the 2\.29 mg\/L/);
  });
  it('a DO reading above air saturation at the sample temperature is said (info), whatever the oxidant; one below it is not', () => {
    // air saturation at 11 °C is about 11 mg/L (tables/oxygen-saturation.json, Standard Methods 4500-O, from memory)
    const at = (mg: number) => dose({ oxidant: 'sodium-hypochlorite', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 11, iron: { value: 1, unit: 'mg/L' }, dissolvedOxygen: { value: mg, unit: 'mg/L' } } });
    expect(at(16).flags.find((f) => f.code === 'DISSOLVED_OXYGEN_ABOVE_SATURATION')!.message).toMatch(/supersaturated/);
    expect(at(9).flags.map((f) => f.code)).not.toContain('DISSOLVED_OXYGEN_ABOVE_SATURATION');
  });
  it('unusual background demand (> 20 mg/L) and target residual (> 10 mg/L) are warnings (common practice); oxygen has no residual band', () => {
    const base = { flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 10, iron: { value: 0.5, unit: 'mg/L' } } };
    const high = dose({ ...base, oxidant: 'sodium-hypochlorite', backgroundDemand: { value: 500, unit: 'mg/L' }, targetResidual: { value: 12, unit: 'mg/L' } });
    expect(high.flags.map((f) => f.code)).toEqual(expect.arrayContaining(['BACKGROUND_DEMAND_UNUSUALLY_HIGH', 'TARGET_RESIDUAL_UNUSUALLY_HIGH']));
    const usual = dose({ ...base, oxidant: 'sodium-hypochlorite', backgroundDemand: { value: 3, unit: 'mg/L' }, targetResidual: { value: 1, unit: 'mg/L' } });
    expect(usual.flags.map((f) => f.code)).not.toEqual(expect.arrayContaining(['BACKGROUND_DEMAND_UNUSUALLY_HIGH']));
    expect(usual.flags.map((f) => f.code)).not.toContain('TARGET_RESIDUAL_UNUSUALLY_HIGH');
    expect(dose({ ...base, oxidant: 'oxygen', targetResidual: { value: 11, unit: 'mg/L' } }).flags.map((f) => f.code)).not.toContain('TARGET_RESIDUAL_UNUSUALLY_HIGH');
  });
  it('chlorine gas: the chloride the dose forms is two per Cl2 (Cl2 + H2O = HOCl + H+ + Cl-, then HOCl + H+ + 2e- → Cl- + H2O), not one', () => {
    const r = dose({ oxidant: 'chlorine-gas', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 6.5, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } } });
    const molCl2 = r.dose.value / 1000 / 70.906; // mg/L as Cl2 → mol/L (IUPAC 2021 Cl 35.45 × 2 = 70.90)
    const note = r.feasibility[0]!.notes.find((n) => /^Cl- taken at/.test(n))!;
    expect(Number(/taken at the ([0-9.e+-]+) mol\/L/.exec(note)![1])).toBeCloseTo(Number((2 * molCl2).toExponential(2)), 8);
  });
  it('a site value for the Fe(OH)3/Fe2+ couple is used when given, and said', () => {
    const r = dose({ oxidant: 'chlorine-gas', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 6.5, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } }, options: { potentialOverrides: [{ from: 'Fe(OH)3(s)', to: 'Fe2+', standardPotentialV: 0.95, source: 'site study (invented)' }] } });
    expect(r.feasibility[0]!.contaminantCouple.usedValue).toBe('override');
    expect(r.feasibility[0]!.contaminantCouple.standardPotentialV).toBe(0.95);
  });
});

describe('bad input names the field and what is accepted', () => {
  const ok = { oxidant: 'sodium-hypochlorite', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7, temperatureC: 15 } };
  const fails = (body: unknown): { code: string; pointers: string[]; text: string } => {
    try {
      computeDose(parseDoseRequest(body), context);
    } catch (e) {
      if (!isDomainError(e)) throw e;
      return { code: e.code, pointers: e.fields.map((f) => f.pointer), text: e.fields.map((f) => f.message).join(' ') + ' ' + e.detail };
    }
    throw new Error('no error');
  };
  it.each([
    ['pH 15', { ...ok, sample: { pH: 15, temperatureC: 15 } }, '/sample/pH', /0 and 14/],
    ['negative iron', { ...ok, sample: { pH: 7, temperatureC: 15, iron: { value: -1, unit: 'mg/L' } } }, '/sample/iron/value', /0 or more/],
    ['120 °C', { ...ok, sample: { pH: 7, temperatureC: 120 } }, '/sample/temperatureC', /0 and 100 °C/],
    ['250 °F', { ...ok, sample: { pH: 7, temperature: { value: 250, unit: '°F' } } }, '/sample/temperature/value', /32 to 212 °F/],
    ['zero flow', { ...ok, flow: { value: 0, unit: 'm3/d' } }, '/flow/value', /more than 0/],
    ['strength 150 % w/w', { ...ok, product: { strength: { value: 150, unit: '% w/w' } } }, '/product/strength/value', /at most 100/],
    ['density 2.5 kg/L', { ...ok, product: { strength: { value: 12.5, unit: '% w/v' }, density: { value: 2.5, unit: 'kg/L' } } }, '/product/density/value', /0\.8 and 2\.0/],
    ['unknown oxidant', { ...ok, oxidant: 'bleach' }, '/oxidant', /sodium-hypochlorite/],
    ['unknown contaminant', { ...ok, sample: { pH: 7, temperatureC: 15, copper: { value: 1, unit: 'mg/L' } } }, '/sample', /copper.*accepted/],
    ['flow in mg/L', { ...ok, flow: { value: 1000, unit: 'mg/L' } }, '/flow/unit', /m3\/d.*MGD.*gpm/],
    ['iron in m3/d', { ...ok, sample: { pH: 7, temperatureC: 15, iron: { value: 1, unit: 'm3/d' } } }, '/sample/iron/unit', /mg\/L/],
    ['no temperature', { ...ok, sample: { pH: 7 } }, '/sample/temperatureC', /temperature/],
  ])('%s', (_label, body, pointer, message) => {
    const e = fails(body);
    expect(e.pointers).toContain(pointer);
    expect(e.text).toMatch(message);
  });
  it('a plantId with no stored profile is PLANT_NOT_FOUND naming /plantId', () => {
    const e = fails({ oxidant: 'sodium-hypochlorite', plantId: 'nowhere', sample: { pH: 7, temperatureC: 15 } });
    expect(e.code).toBe('PLANT_NOT_FOUND');
    expect(e.pointers).toEqual(['/plantId']);
  });
  it('a TOC factor without TOC is DOSE_INPUT_MISSING naming /sample/toc', () => {
    const e = fails({ ...ok, backgroundDemand: { tocFactor: 0.5 } });
    expect(e.code).toBe('DOSE_INPUT_MISSING');
    expect(e.pointers).toEqual(['/sample/toc']);
    // listed together with the other problems of the request, not after they are put right
    const both = fails({ ...ok, flow: { value: 1e9, unit: 'm3/d' }, backgroundDemand: { tocFactor: 0.5 } });
    expect(both.code).toBe('DOSE_INPUT_MISSING');
    expect(both.pointers).toEqual(['/sample/toc', '/flow/value']);
  });
  it('a bad plant profile is PLANT_INVALID naming the field', () => {
    try {
      parsePlantProfile({ ...demo, flow: { value: -1, unit: 'm3/d' } });
      throw new Error('no error');
    } catch (e) {
      if (!isDomainError(e)) throw e;
      expect(e.code).toBe('PLANT_INVALID');
      expect(e.fields.map((f) => f.pointer)).toContain('/flow/value');
    }
  });
});

describe('background demand and units', () => {
  it('TOC × the plant\'s factor: 3.0 mg/L × 0.4 = 1.2 mg/L, shown with its reason; no default factor exists', () => {
    const r = dose({ oxidant: 'chlorine-gas', flow: { value: 1, unit: 'MGD' }, sample: { pH: 7.5, temperatureC: 20, toc: { value: 3.0, unit: 'mg/L' } }, backgroundDemand: { tocFactor: 0.4 } });
    const t = r.terms.find((x) => x.term === 'background')!;
    expect(t.value.value).toBeCloseTo(1.2, 12);
    expect(t.reason).toMatch(/factor 0\.4/);
  });
  it('1 MGD in, both unit systems out: 3785.411784 m3/d, 1.2 mg/L → 4.5425 kg/d = 10.01 lb/d', () => {
    const r = dose({ oxidant: 'chlorine-gas', flow: { value: 1, unit: 'MGD' }, sample: { pH: 7.5, temperatureC: 20 }, backgroundDemand: { value: 1.2, unit: 'mg/L' } });
    expect(r.units.flow!.si.value).toBeCloseTo(3785.411784, 9);
    expect(r.feed!.massRate.value).toBeCloseTo((1.2 * 3785.411784) / 1000, 10);
    expect(r.feed!.massRateUS.value).toBeCloseTo((1.2 * 3785.411784) / 1000 / 0.45359237, 10);
    expect(r.units.temperature.us.value).toBe(68);
    expect(r.rounding.rule).toMatch(/half to even/);
  });
  it('every source id cited in the answer resolves to a full citation', () => {
    const r = dose({ oxidant: 'potassium-permanganate', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.5, temperatureC: 10, manganese: { value: 0.2, unit: 'mg/L' } } });
    expect(r.sources.length).toBeGreaterThan(2);
    for (const s of r.sources) expect(s.citation.length).toBeGreaterThan(20);
  });
});

describe('the result memo', () => {
  it('answers an identical request with the same frozen result, and a different one anew', () => {
    const ctx = buildDosingContext(tables, { resultMemoSize: 4 });
    const body = { oxidant: 'ozone', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } } };
    const a = dose(body, ctx);
    const b = dose(body, ctx);
    expect(b).toBe(a);
    expect(Object.isFrozen(a.dose)).toBe(true);
    const c = dose({ ...body, sample: { ...body.sample, iron: { value: 2, unit: 'mg/L' } } }, ctx);
    expect(c.dose.value).toBeCloseTo(2 * a.dose.value, 12);
  });
});

describe('the response schema (src/dosing/response.ts) describes the real answers', () => {
  it.each([
    ['permanganate with a plant', { oxidant: 'potassium-permanganate', plantId: 'demo-groundwater', sample: { pH: 7.4, temperatureC: 12, iron: { value: 0.5, unit: 'mg/L' }, manganese: { value: 0.3, unit: 'mg/L' }, alkalinity: { value: 120, unit: 'mg/L' } } }],
    ['chlorine dioxide', { oxidant: 'chlorine-dioxide', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 15, iron: { value: 0.6, unit: 'mg/L' } }, targetResidual: { value: 0.2, unit: 'mg/L' } }],
    ['oxygen with a rate law', { oxidant: 'oxygen', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.5, temperatureC: 15, iron: { value: 2, unit: 'mg/L' } }, contactTime: { value: 20, unit: 'min' } }],
    ['no flow, no contaminant', { oxidant: 'ozone', sample: { pH: 7, temperatureC: 15 } }],
  ])('%s: parsing keeps every field', (_label, body) => {
    const r = computeDose(parseDoseRequest(body), context, { plant: demo });
    const parsed = DoseResultSchema.parse(JSON.parse(JSON.stringify(r)));
    expect(parsed).toEqual(JSON.parse(JSON.stringify(r)));
  });
});

describe('plant profile merge', () => {
  it('fields the request gives win over the profile (today\'s flow), the rest comes from the plant', () => {
    const r = computeDose(parseDoseRequest({ oxidant: 'sodium-hypochlorite', plantId: 'demo-groundwater', flow: { value: 2000, unit: 'm3/d' }, sample: { pH: 7, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } }), context, { plant: demo });
    expect(r.units.flow!.si.value).toBe(2000);
    expect(r.plant!.fromPlant).not.toContain('flow');
    expect(r.plant!.fromPlant).toContain('targetResidual');
    // contact 100 m3 / 2000 m3/d = 72 min
    expect(r.contact.availableMinutes).toBeCloseTo(72, 10);
  });
});
