/**
 * Standard potentials from combinations of tabled rows: ΔG° = Σ cᵢ ΔG°ᵢ, ΔG°(redox) = −nFE°,
 * ΔG°(equilibrium) = −RT ln K, E° = −ΔG°/(nF) at 298.15 K.
 */
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { Rational } from '../../../src/core/rational.js';
import { solveCombination, standardPotential } from '../../../src/chemistry/thermo/derive.js';
import { buildLedger } from '../../../src/chemistry/thermo/ledger.js';
import { loadTables } from '../../../src/reference/load.js';
import { equilibrium, redox, tables } from './small-tables.js';

const real = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));
/** RT ln10 / F at 298.15 K from the CODATA 2018 R and F (V). */
const K25 = (8.314462618 * 298.15 * Math.LN10) / 96485.33212;

function domainError(f: () => unknown): DomainError {
  try {
    f();
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a DomainError');
}

describe('solveCombination (exact rational linear algebra), edge cases first', () => {
  const v = (o: Record<string, number>) => new Map(Object.entries(o).map(([k, c]) => [k, Rational.of(c)]));
  it.each([
    ['no solution', [v({ a: 1 })], v({ b: 1 }), null],
    ['dependent columns (not unique)', [v({ a: 1, b: 1 }), v({ a: 2, b: 2 })], v({ a: 1, b: 1 }), null],
    ['a zero coefficient (a smaller set would do)', [v({ a: 1 }), v({ b: 1 })], v({ a: 3 }), null],
    ['unique', [v({ a: 1, b: -1 }), v({ b: 1, c: -1 })], v({ a: 2, c: -2 }), ['2', '2']],
    ['fractions', [v({ a: 2 }), v({ a: 1, b: 3 })], v({ a: 1, b: 1 }), ['1/3', '1/3']],
  ] as const)('%s', (_case, cols, target, expected) => {
    const x = solveCombination(cols, target);
    expect(x === null ? null : x.map((r) => r.toString())).toEqual(expected);
  });
});

describe('electron-weighted combination of consecutive steps', () => {
  // Skoog et al., Fundamentals of Analytical Chemistry, Appendix 5: MnO4-/MnO2 1.695 (3 e-),
  // MnO2/Mn2+ 1.23 (2 e-), and the tabled MnO4-/Mn2+ 1.51 (5 e-).
  const skoog = buildLedger(
    tables([
      redox('mno4-mno2', 'MnO4- + 4H+ + 3e- = MnO2(s) + 2H2O', 3, '1.695'),
      redox('mno2-mn2', 'MnO2(s) + 4H+ + 2e- = Mn2+ + 2H2O', 2, '1.23'),
    ]),
  );

  it('MnO4-/MnO2 (3 e-) + MnO2/Mn2+ (2 e-) gives MnO4-/Mn2+ = (3·1.695 + 2·1.23)/5, within the rounding of Skoog Appendix 5 (1.51)', () => {
    const r = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', skoog);
    expect(r.usedValue).toBe('derived');
    expect(r.derivation.map((d) => [d.rowId, d.coefficient])).toEqual([
      ['mno4-mno2', '1'],
      ['mno2-mn2', '1'],
    ]);
    expect(r.standardPotentialV).toBeCloseTo(1.509, 12); // 7.545 / 5, exact in rationals
    expect(Math.abs(r.standardPotentialV - 1.51)).toBeLessThanOrEqual(0.005); // 1.51 is printed to 0.01 V
  });

  it('with the CRC Handbook (97th ed.) rows the same sum misses the tabled 1.507 by 10 mV, and the check says so', () => {
    // CRC electrochemical series: MnO4-/MnO2 1.679, MnO2/Mn2+ 1.224, MnO4-/Mn2+ 1.507.
    const r = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', real);
    expect(r.usedValue).toBe('tabled');
    expect(r.standardPotentialV).toBe(1.507);
    expect(r.derivation).toEqual([expect.objectContaining({ rowId: 'crc-mno4-mn2', source: 'crc-97-electrochemical-series', coefficient: '1' })]);
    expect(r.tabledCheck!.derivedV).toBeCloseTo((3 * 1.679 + 2 * 1.224) / 5, 12);
    expect(r.tabledCheck!.discrepancyV).toBeCloseTo(0.01, 12);
    expect(r.tabledCheck!.flagged).toBe(true);
    expect(r.alternatives.map((a) => a.rows[0]!.rowId)).toContain('skoog-mno4-mn2');
  });

  it('Bratsch 1989 MnO4-/MnO2 (1.70) with the CRC MnO2/Mn2+ (1.224) agrees with the CRC 1.507 within the rounding of 1.70', () => {
    const l = buildLedger(
      tables([
        redox('bratsch', 'MnO4- + 4H+ + 3e- = MnO2(s) + 2H2O', 3, '1.70'),
        redox('crc', 'MnO2(s) + 4H+ + 2e- = Mn2+ + 2H2O', 2, '1.224'),
      ]),
    );
    const e = standardPotential('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', l).standardPotentialV;
    // 1.70 carries ±0.005 from rounding, weighted 3/5; 1.224 carries ±0.0005, weighted 2/5.
    expect(Math.abs(e - 1.507)).toBeLessThanOrEqual((3 / 5) * 0.005 + (2 / 5) * 0.0005);
  });
});

describe('reversal and multiples', () => {
  it.each([
    ['MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', 'Mn2+ + 4H2O = MnO4- + 8H+ + 5e-', '2MnO4- + 16H+ + 10e- = 2Mn2+ + 8H2O'],
    ['Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', 'Fe2+ + 3H2O = Fe(OH)3(s) + 3H+ + e-', '3Fe(OH)3 + 9H+ + 3e- = 3Fe2+ + 9H2O'],
    ['OCl- + H2O + 2e- = Cl- + 2OH-', 'Cl- + 2OH- = OCl- + H2O + 2e-', '1/2OCl- + 1/2H2O + e- = 1/2Cl- + OH-'],
  ])('%s', (reduction, oxidation, multiple) => {
    const red = standardPotential(reduction, real);
    const ox = standardPotential(oxidation, real);
    const mul = standardPotential(multiple, real);
    expect(red.direction).toBe('reduction');
    expect(ox.direction).toBe('oxidation');
    // Reversing flips the sign of E° as written and of ΔG°; the reduction's E° is the same number.
    expect(ox.asWrittenPotentialV).toBeCloseTo(-red.asWrittenPotentialV, 12);
    expect(ox.standardPotentialV).toBeCloseTo(red.standardPotentialV, 12);
    expect(ox.deltaGkJPerMol).toBeCloseTo(-red.deltaGkJPerMol, 9);
    expect(ox.log10K).toBeCloseTo(-red.log10K, 9);
    // Multiplying leaves E° unchanged and scales ΔG°.
    expect(mul.standardPotentialV).toBeCloseTo(red.standardPotentialV, 12);
    expect(mul.deltaGkJPerMol / red.deltaGkJPerMol).toBeCloseTo(mul.electrons / red.electrons, 9);
    // ΔG° = −nFE° for the reduction.
    expect(red.deltaGkJPerMol).toBeCloseTo((-red.electrons * 96485.33212 * red.standardPotentialV) / 1000, 9);
  });
});

describe('acid and base forms tied through Kw and the pKa', () => {
  // E°(OCl-/Cl-, base) = E°(HOCl/Cl-) + (RT ln10 / 2F)·(pKa − 2 pKw)
  const hoclPKa = 3000.0 / 298.15 - 10.0686 + 0.0253 * 298.15; // Morris 1966
  const pKw = 4470.99 / 298.15 - 6.0875 + 0.01706 * 298.15; // Harned & Owen 1958
  const acidBase = [
    equilibrium('morris', 'HOCl = H+ + OCl-', { temperature: { form: 'A1 + A2*T + A3/T + A4*log10(T) + A5/T^2 + A6*T^2', quantity: 'pK', coefficients: { A1: '-10.0686', A2: '0.0253', A3: '3000.00' } } }),
    equilibrium('kw', 'H2O = H+ + OH-', { kind: 'water', temperature: { form: 'A1 + A2*T + A3/T + A4*log10(T) + A5/T^2 + A6*T^2', quantity: 'pK', coefficients: { A1: '-6.0875', A2: '0.01706', A3: '4470.99' } } }),
  ];

  it('from Skoog Appendix 5 (HOCl/Cl2 1.63, Cl2/Cl- 1.359) agrees with Bratsch 1989 (0.890 V) within the rounding of the inputs', () => {
    const l = buildLedger(
      tables(
        [redox('hocl-cl2', '2HOCl + 2H+ + 2e- = Cl2(g) + 2H2O', 2, '1.63'), redox('cl2-cl', 'Cl2(g) + 2e- = 2Cl-', 2, '1.359')],
        acidBase,
      ),
    );
    const r = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', l);
    expect(r.derivation.map((d) => d.rowId).sort()).toEqual(['cl2-cl', 'hocl-cl2', 'kw', 'morris']);
    expect(r.standardPotentialV).toBeCloseTo((1.63 + 1.359) / 2 + (K25 / 2) * (hoclPKa - 2 * pKw), 9);
    // Neither source states an uncertainty: use the rounding of 1.63 (±0.005, weight 1/2) and of 0.890 (±0.0005).
    expect(Math.abs(r.standardPotentialV - 0.89)).toBeLessThanOrEqual(0.0025 + 0.0005);
  });

  it('from the CRC HOCl/Cl- (1.482 V) it gives about 0.877 V, some 67 mV above the CRC base value 0.81', () => {
    const l = buildLedger(tables([redox('hocl-cl', 'HOCl + H+ + 2e- = Cl- + H2O', 2, '1.482')], acidBase));
    const r = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', l);
    expect(r.standardPotentialV).toBeCloseTo(1.482 + (K25 / 2) * (hoclPKa - 2 * pKw), 9);
    expect(r.standardPotentialV - 0.81).toBeGreaterThan(0.06);
    expect(r.standardPotentialV - 0.81).toBeLessThan(0.075);
  });

  it('the repository tables flag the CRC 0.81 V row against its own derivation', () => {
    const r = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', real);
    expect(r.usedValue).toBe('tabled');
    expect(r.derivation[0]!.rowId).toBe('crc-ocl-cl-base');
    expect(r.tabledCheck!.flagged).toBe(true);
    expect(r.notes.join(' ')).toContain('crc-ocl-cl-base');
    expect(r.alternatives.map((a) => a.rows[0]!.rowId)).toContain('bratsch-ocl-cl-base');
  });
});

describe("basis 'acid': a base-medium half-reaction carried from its acid form through Kw", () => {
  const kwRow = equilibrium('kw', 'H2O = H+ + OH-', { kind: 'water', pK: '14.00' });

  it('with no OH- in the half-reaction the basis changes nothing', () => {
    const l = buildLedger(tables([redox('fe', 'Fe3+ + e- = Fe2+', 1, '0.771')], [kwRow]));
    const a = standardPotential('Fe3+ + e- = Fe2+', l, { basis: 'acid' });
    expect(a.usedValue).toBe('tabled');
    expect(a.standardPotentialV).toBe(0.771);
  });

  it('a row tabled only in base (its acid form is that row minus Kw) is used as tabled', () => {
    // CRC 97th ed.: MnO4^2- + 2H2O + 2e- = MnO2 + 4OH-, 0.60 V; no acid-medium row for it here
    const l = buildLedger(tables([redox('mn6', 'MnO4^2- + 2H2O + 2e- = MnO2(s) + 4OH-', 2, '0.60', { medium: 'base' })], [kwRow]));
    const r = standardPotential('MnO4^2- + 2H2O + 2e- = MnO2(s) + 4OH-', l, { basis: 'acid' });
    expect(r.usedValue).toBe('tabled');
    expect(r.derivation.map((d) => d.rowId)).toEqual(['mn6']);
  });

  it('E°(base) = E°(acid) − (m/n)·(RT ln10/F)·pKw, the acid row and m water ionisations in the derivation', () => {
    // O2 + 4H+ + 4e- = 2H2O, 1.229 V (CRC 97th ed.); in base m = 4, n = 4: 1.229 − 14.00·K25 = 0.4008 V,
    // the printed CRC base value O2 + 2H2O + 4e- = 4OH- being 0.401 V.
    const l = buildLedger(tables([redox('o2', 'O2(g) + 4H+ + 4e- = 2H2O', 4, '1.229')], [kwRow]));
    const r = standardPotential('O2(g) + 2H2O + 4e- = 4OH-', l, { basis: 'acid' });
    expect(r.usedValue).toBe('derived');
    expect(r.derivation.map((d) => [d.rowId, d.coefficient])).toEqual([
      ['o2', '1'],
      ['kw', '4'],
    ]);
    expect(r.standardPotentialV).toBeCloseTo(1.229 - 14 * K25, 12);
    expect(Math.abs(r.standardPotentialV - 0.401)).toBeLessThan(0.0005);
  });

  it('a site value is for the acid form unless it says base, and is carried through Kw to the form computed', () => {
    const l = buildLedger(tables([redox('o2', 'O2(g) + 4H+ + 4e- = 2H2O', 4, '1.229')], [kwRow]));
    const base = 'O2(g) + 2H2O + 4e- = 4OH-';
    const acid = 'O2(g) + 4H+ + 4e- = 2H2O';
    const site = { valueV: 1.2, source: 'site value (invented)' };
    // acid value, base form: 1.2 − 14.00·K25 (m = 4, n = 4)
    const a = standardPotential(base, l, { basis: 'acid', override: site });
    expect(a.usedValue).toBe('override');
    expect(a.standardPotentialV).toBeCloseTo(1.2 - 14 * K25, 12);
    expect(a.override).toMatchObject({ medium: 'acid' });
    expect(a.override!.carriedV).toBeCloseTo(a.standardPotentialV, 12);
    // base value, base form: as given; base value, acid form: carried up
    expect(standardPotential(base, l, { basis: 'acid', override: { ...site, medium: 'base' } }).standardPotentialV).toBe(1.2);
    expect(standardPotential(acid, l, { override: { ...site, medium: 'base' } }).standardPotentialV).toBeCloseTo(1.2 + 14 * K25, 12);
    // a couple with neither H+ nor OH- takes the value as given whatever it says
    expect(standardPotential('Fe3+ + e- = Fe2+', l, { override: { ...site, medium: 'base' } }).standardPotentialV).toBe(1.2);
    // an oxidation written the other way round gets the same reduction E°
    expect(standardPotential('4OH- = O2(g) + 2H2O + 4e-', l, { basis: 'acid', override: site }).standardPotentialV).toBeCloseTo(1.2 - 14 * K25, 12);
  });

  it('every base-medium row of the repository tables: carried from acid-medium rows and equilibria only, or used as tabled where nothing else gives it', () => {
    const baseRows = real.rows.filter((r) => r.kind === 'redox' && /OH-/.test(r.equation));
    expect(baseRows.length).toBeGreaterThan(5);
    const isBaseRedox = (id: string) => {
      const row = real.byId.get(id)!;
      return row.kind === 'redox' && /OH-/.test(row.equation);
    };
    for (const row of baseRows) {
      const r = standardPotential(row.equation, real, { basis: 'acid' });
      const ids = r.derivation.map((d) => d.rowId);
      if (r.usedValue === 'tabled') expect(ids, row.id).toHaveLength(1);
      else expect(ids.filter(isBaseRedox), row.id).toEqual([]);
    }
    // ClO2-/OCl- in base is not built from the CRC OCl-/Cl- base row that disagrees with HOCl by 67 mV
    const clo2 = standardPotential('ClO2- + H2O + 2e- = OCl- + 2OH-', real, { basis: 'acid' });
    expect(clo2.derivation.map((d) => d.rowId)).not.toContain('crc-ocl-cl-base');
  });

  it('a disagreeing base-medium row becomes the check: CRC OCl-/Cl- 0.81 V against 0.877 V carried from CRC HOCl/Cl- 1.482 V', () => {
    const asWritten = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', real);
    const viaAcid = standardPotential('OCl- + H2O + 2e- = Cl- + 2OH-', real, { basis: 'acid' });
    expect(asWritten.standardPotentialV).toBe(0.81);
    expect(viaAcid.usedValue).toBe('derived');
    expect(viaAcid.derivation.map((d) => d.rowId).sort()).toEqual(['crc-hocl-cl', 'harned-owen-kw', 'morris-hocl']);
    const hoclPKa = 3000.0 / 298.15 - 10.0686 + 0.0253 * 298.15; // Morris 1966
    const pKw = 4470.99 / 298.15 - 6.0875 + 0.01706 * 298.15; // Harned & Owen 1958
    expect(viaAcid.standardPotentialV).toBeCloseTo(1.482 + (K25 / 2) * (hoclPKa - 2 * pKw), 9);
    expect(viaAcid.tabledCheck).toMatchObject({ tabledV: 0.81, flagged: true });
    expect(viaAcid.tabledCheck!.discrepancyV).toBeCloseTo(0.81 - viaAcid.standardPotentialV, 12);
    expect(viaAcid.notes.join(' ')).toMatch(/crc-ocl-cl-base.*not used/);
    // Bratsch 1989 (row bratsch-ocl-cl-base) gives 0.89 V for the base couple: the carried value is 13 mV from it, the CRC row 80 mV
    expect(Math.abs(viaAcid.standardPotentialV - 0.89)).toBeLessThan(0.015);
    expect(viaAcid.alternatives.map((a) => a.rows.map((x) => x.rowId).join('+'))).toEqual(expect.arrayContaining(['crc-ocl-cl-base', 'bratsch-ocl-cl-base']));
  });
});

describe('a couple with a solid: Fe(OH)3/Fe2+ from Fe3+/Fe2+ and the solubility of the solid', () => {
  it('E° = E°(Fe3+/Fe2+) + (RT ln10/F)·log *Ks; which solid sets the value (about 0.93–1.06 V, shared/README §3)', () => {
    const r = standardPotential('Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', real);
    expect(r.usedValue).toBe('derived');
    expect(r.derivation.map((d) => [d.rowId, d.kind])).toEqual(
      expect.arrayContaining([
        ['crc-fe3-fe2', 'redox'],
        ['phreeqc-feoh3-am', 'equilibrium'],
      ]),
    );
    // CRC 0.771 V with phreeqc.dat Fe(OH)3(a) log K 4.891
    expect(r.standardPotentialV).toBeCloseTo(0.771 + K25 * 4.891, 9);
    // The other amorphous-solid row (Stumm & Morgan, log *Ks 3.2) is offered as an alternative.
    const sm = r.alternatives.find((a) => a.rows.some((x) => x.rowId === 'sm-feoh3-am'));
    expect(sm!.standardPotentialV).toBeCloseTo(0.771 + K25 * 3.2, 9);
    expect(r.standardPotentialV).toBeGreaterThan(0.93);
    expect(r.standardPotentialV).toBeLessThan(1.07);
  });

  it('crystalline goethite gives a much lower potential (FeOOH/Fe2+)', () => {
    const r = standardPotential('FeOOH(s) + 3H+ + e- = Fe2+ + 2H2O', real);
    expect(r.standardPotentialV).toBeCloseTo(0.771 + K25 * -1.0, 9);
  });

  it('a site value overrides the tables and the answer says which value was used', () => {
    const r = standardPotential('Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', real, { override: { valueV: 0.95, source: 'site jar test 2024-03 (invented example)' } });
    expect(r.usedValue).toBe('override');
    expect(r.standardPotentialV).toBe(0.95);
    expect(r.tablesStandardPotentialV).toBeCloseTo(0.771 + K25 * 4.891, 9);
    expect(r.override).toEqual({ valueV: 0.95, source: 'site jar test 2024-03 (invented example)', medium: 'acid' });
  });
});

describe('what cannot be derived', () => {
  it.each([
    ['no tabled reactions add up to it', 'Cr2O7^2- + 14H+ + 6e- = 2Cr3+ + 7H2O', 'POTENTIAL_NOT_DERIVABLE'],
    ['no electrons: an equilibrium, not a couple', 'HOCl = H+ + OCl-', 'POTENTIAL_NOT_DERIVABLE'],
    ['malformed equation', 'MnO4- + = Mn2+', 'EQUATION_SYNTAX'],
  ])('%s', (_case, eq, code) => {
    const err = domainError(() => standardPotential(eq, real));
    expect(err.code).toBe(code);
    expect(err.fields[0]!.pointer).toBe('/equation');
  });

  it('an underivable couple with a site value is still answered', () => {
    const r = standardPotential('Cr2O7^2- + 14H+ + 6e- = 2Cr3+ + 7H2O', real, { override: { valueV: 1.36, source: 'CRC Handbook (quoted by the caller)' } });
    expect(r.usedValue).toBe('override');
    expect(r.tablesStandardPotentialV).toBeNull();
    expect(r.derivation).toEqual([]);
  });
});

describe('cache', () => {
  it('a multiple of a derived couple reuses the cached derivation; a repeated request reuses the answer', () => {
    const l = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));
    const derivations = () => [...l.cache.keys()].filter((k) => k.startsWith('derive')).length;
    const first = standardPotential('Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', l);
    const n = derivations();
    const doubled = standardPotential('2Fe(OH)3(s) + 6H+ + 2e- = 2Fe2+ + 6H2O', l);
    expect(derivations()).toBe(n);
    expect(doubled.standardPotentialV).toBeCloseTo(first.standardPotentialV, 12);
    expect(doubled.derivation.map((d) => d.coefficient)).toEqual(first.derivation.map((d) => (Number(d.coefficient) * 2).toString()));
    expect(standardPotential('Fe(OH)3(s) + 3H+ + e- = Fe2+ + 3H2O', l)).toBe(first);
  });
});

describe('arsenic(V) in its pH forms: each acid step adds (RT ln10 / nF)·pKa to E°', () => {
  // H3AsO4 + 2H+ + 2e- = H3AsO3 + H2O, 0.575 V (Harris, Quantitative Chemical Analysis, appendix H; the
  // table's row), with the arsenic acid pKa values 2.26 and 6.76 (CRC 97th ed. dissociation constants of
  // inorganic acids, from memory): H2AsO4- takes one more H+ (E° + (K25/2)·2.26), HAsO4^2- two (+ (K25/2)·6.76).
  const e = (eq: string) => standardPotential(eq, real);
  it('H2AsO4- and HAsO4^2- to H3AsO3 are derived from the tables, not refused', () => {
    const h2 = e('H2AsO4- + 3H+ + 2e- = H3AsO3 + H2O');
    const h1 = e('HAsO4^2- + 4H+ + 2e- = H3AsO3 + H2O');
    expect(h2.standardPotentialV).toBeCloseTo(0.575 + (K25 / 2) * 2.26, 9);
    expect(h1.standardPotentialV).toBeCloseTo(h2.standardPotentialV + (K25 / 2) * 6.76, 9);
    expect(h1.derivation.map((d) => d.rowId).sort()).toEqual(['crc-h2aso4', 'crc-h3aso4', 'harris-h3aso4-h3aso3']);
  });
});
