/** Linking a given species to the half-reaction term it is the non-redox partner of (src/water/linked.ts). */
import { describe, expect, it } from 'vitest';
import { loadTables } from '../../src/reference/load.js';
import { buildLedger } from '../../src/chemistry/thermo/ledger.js';
import { halfReaction } from '../../src/chemistry/balance/index.js';
import { parseFormula, speciesKey } from '../../src/chemistry/formula/index.js';
import { linkGivenSpecies, type GivenSpecies } from '../../src/water/linked.js';

const ledger = buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']));
const half = (ox: string, red: string) => halfReaction({ oxidised: parseFormula(ox), reduced: parseFormula(red), medium: 'acid' });
const given = (text: string, log10Activity: number): GivenSpecies => ({ key: speciesKey(parseFormula(text)), text, species: parseFormula(text), log10Activity });
const link = (h: ReturnType<typeof half>, g: GivenSpecies[], temperatureC = 25) =>
  linkGivenSpecies([{ half: h, name: 'oxidant couple' }], g, { temperatureC, ledger, solids: new Set() });

describe('linkGivenSpecies', () => {
  it('HOCl → OCl-: log10 a(OCl-) = log10 a(HOCl) − pKa + pH (Morris 1966 pKa 7.5367 at 25 °C, hand: 3000/298.15 − 10.0686 + 0.0253·298.15)', () => {
    const r = link(half('OCl-', 'Cl-'), [given('HOCl', -5)]);
    const l = r.links.get(speciesKey(parseFormula('OCl-')))!;
    expect(l.equation).toBe('HOCl -> OCl- + H+');
    expect(l.nu).toEqual({ given: -1, term: 1, proton: 1 });
    expect(l.linked.perPH).toBe(1);
    expect(l.linked.log10ActivityAtPH0).toBeCloseTo(-5 - (3000 / 298.15 - 10.0686 + 0.0253 * 298.15), 9);
    expect(l.derivation.map((d) => [d.rowId, d.source])).toEqual([['morris-hocl', 'morris-1966']]);
    expect([...r.usedGiven]).toEqual([speciesKey(parseFormula('HOCl'))]);
  });

  it('O2(g) → O2 by Henry, no pH term (phreeqc.dat log K_H = −2.8983 at 25 °C)', () => {
    const r = link(half('O2', 'H2O'), [given('O2(g)', Math.log10(0.21))]);
    const l = r.links.get(speciesKey(parseFormula('O2')))!;
    expect(l.linked.perPH).toBe(0);
    expect(l.linked.log10ActivityAtPH0).toBeCloseTo(Math.log10(0.21) - 2.8983, 9);
  });

  it.each([
    ['Cl2', 'another oxidation state of chlorine (Cl2 → OCl- moves electrons)'],
    ['Br-', 'no element in common'],
    ['H+', 'set by the pH'],
    ['H2O', 'the solvent'],
  ])('%s is not linked to OCl-: %s', (text) => {
    const r = link(half('OCl-', 'Cl-'), [given(text, -5)]);
    expect(r.links.size).toBe(0);
    expect(r.usedGiven.size).toBe(0);
  });

  it('a term given itself is not linked', () => {
    const r = link(half('OCl-', 'Cl-'), [given('HOCl', -5), given('OCl-', -5)]);
    expect(r.links.size).toBe(0);
  });
});
