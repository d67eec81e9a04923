/**
 * E°(T) of a derivation: potential rows shifted by dE°/dT·(T − 25 °C) where a table gives it,
 * log K rows by their expression or van 't Hoff, everything else held at 25 °C (and said so).
 */
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { reactionLog10K, standardPotential } from '../../../src/chemistry/thermo/derive.js';
import { buildLedger } from '../../../src/chemistry/thermo/ledger.js';
import { loadTables } from '../../../src/reference/load.js';

const real = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));

describe('temperature range', () => {
  it.each([-5, 101, Number.NaN])('%f °C is refused with a pointer to temperatureC', (t) => {
    let err: unknown;
    try {
      standardPotential('Fe3+ + e- = Fe2+', real, { temperatureC: t });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(DomainError);
    expect((err as DomainError).code).toBe('CONDITIONS_OUT_OF_RANGE');
    expect((err as DomainError).fields[0]!.pointer).toBe('/temperatureC');
  });

  it('at 25 °C there is no correction', () => {
    expect(standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', real).temperatureCorrectionV).toBe(0);
  });
});

describe('potential rows with dE°/dT (Bratsch 1989)', () => {
  it.each([
    // [couple, dE°/dT mV/K as tabled, °C]
    ['MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', -0.646, 35],
    ['Cl2(g) + 2e- = 2Cl-', -1.248, 5],
    ['Fe3+ + e- = Fe2+', 1.175, 15],
  ])('%s: correction = dE°/dT · ΔT', (eq, dEdT, t) => {
    const r = standardPotential(eq, real, { temperatureC: t });
    expect(r.temperatureCorrectionV).toBeCloseTo((dEdT / 1000) * (t - 25), 12);
    expect(r.standardPotentialAtTemperatureV).toBeCloseTo(r.standardPotentialV + r.temperatureCorrectionV, 12);
  });

  it('two sources agree on the shift: CRC Fe3+/Fe2+ with Bratsch dE°/dT vs phreeqc.dat log K with its ΔH° (van t Hoff)', () => {
    const crc = standardPotential('Fe3+ + e- = Fe2+', real, { temperatureC: 35 }).temperatureCorrectionV;
    const only = buildLedger({ ...loadTables(['constants', 'potentials', 'equilibria']), potentials: loadTables(['potentials']).potentials.filter((r) => r.id === 'phreeqc-fe2-fe3') });
    const pq = standardPotential('Fe3+ + e- = Fe2+', only, { temperatureC: 35 }).temperatureCorrectionV;
    expect(Math.abs(crc - pq)).toBeLessThan(0.0005);
  });

  it('a linear dE°/dT is the slope at 25 °C: used more than 25 K away the answer calls it an extrapolation', () => {
    const near = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', real, { temperatureC: 45 });
    expect(near.notes.join(' ')).not.toMatch(/extrapolation/);
    const far = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', real, { temperatureC: 90 });
    expect(far.temperatureCorrectionV).toBeCloseTo((-0.646 / 1000) * 65, 12); // still applied, and said
    expect(far.notes.join(' ')).toMatch(/dE°\/dT is the slope at 25 °C; at 90\.0 °C, more than 25 K away, the linear correction is an extrapolation/);
  });

  it('the request can turn the correction off', () => {
    const r = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', real, { temperatureC: 35, temperatureCorrection: false });
    expect(r.temperatureCorrectionV).toBe(0);
    expect(r.notes.join(' ')).toContain('turned off');
  });
});

describe('rows without temperature data are held at 25 °C and the answer says so', () => {
  it('Fe(OH)3/Fe2+: Fe3+/Fe2+ shifts by its dE°/dT, the solubility row is held', () => {
    const r = standardPotential('Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', real, { temperatureC: 15 });
    expect(r.temperatureCorrectionV).toBeCloseTo((1.175 / 1000) * -10, 12);
    expect(r.notes.some((n) => n.includes('phreeqc-feoh3-am') && n.includes('held'))).toBe(true);
  });

  it('OCl-/Cl- (CRC, no dE°/dT): no correction, with a note', () => {
    const r = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', real, { temperatureC: 10 });
    expect(r.temperatureCorrectionV).toBe(0);
    expect(r.notes.some((n) => n.includes('crc-ocl-cl-base') && n.includes('held'))).toBe(true);
  });
});

describe('log K(T) expressions against published values', () => {
  it.each([
    // [reaction, °C, published log K, tolerance, source]
    ['H2O = H+ + OH-', 0, -14.9435, 0.005, 'Harned & Owen 1958, pKw table (from memory)'],
    ['H2O = H+ + OH-', 25, -13.9965, 0.005, 'Harned & Owen 1958, pKw table (from memory)'],
    ['H2O = H+ + OH-', 50, -13.2617, 0.005, 'Harned & Owen 1958, pKw table (from memory)'],
    ['HOCl = H+ + OCl-', 25, -7.537, 0.001, 'Morris 1966'],
    ['NH4+ = NH3 + H+', 25, -9.245, 0.002, 'Emerson et al. 1975'],
    ['HCO3- = H+ + CO3^2-', 25, -10.329, 0.001, 'phreeqc.dat printed log_k of CO3-2 + H+ = HCO3- (reversed)'],
    ['CO2 + H2O = H+ + HCO3-', 25, 10.329 - 16.681, 0.001, 'phreeqc.dat printed log_k values 16.681 and 10.329'],
    ['CO2(g) = CO2', 25, -1.468, 0.001, 'phreeqc.dat printed log_k of CO2(g)'],
  ])('%s at %f °C: %f (%s)', (eq, t, published, tol) => {
    const r = reactionLog10K(eq, real, { temperatureC: t });
    expect(Math.abs(r.log10K - published)).toBeLessThanOrEqual(tol);
  });

  it('says when an expression is used outside its stated range', () => {
    const r = reactionLog10K('HOCl = H+ + OCl-', real, { temperatureC: 50 });
    expect(r.notes.join(' ')).toContain('morris-hocl');
  });
});
