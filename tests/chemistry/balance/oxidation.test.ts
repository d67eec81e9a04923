/**
 * Oxidation states from formulas and the electrons a balanced reaction transfers.
 * States are the usual textbook values (e.g. Atkins, Inorganic Chemistry; from memory). The
 * electron counts are checked against textbook reactions and, independently, against the
 * half-reaction method of balanceRedox, which counts electrons by a different route (the
 * least common multiple of the two half-reactions' electrons).
 */
import { describe, expect, it } from 'vitest';
import { parseFormula } from '../../../src/chemistry/formula/index.js';
import { balanceReaction } from '../../../src/chemistry/balance/reaction.js';
import { balanceRedox } from '../../../src/chemistry/balance/redox.js';
import { electronsTransferred, oxidationStates } from '../../../src/chemistry/balance/oxidation.js';
import type { Medium } from '../../../src/chemistry/balance/types.js';

const P = (t: string) => parseFormula(t);
const stateOf = (formula: string, element: string) => oxidationStates(P(formula)).states?.get(element)?.toString();

describe('oxidation states from the formula', () => {
  it.each([
    ['KMnO4', 'Mn', '7'],
    ['MnO4^2-', 'Mn', '6'],
    ['MnO2', 'Mn', '4'],
    ['Mn2+', 'Mn', '2'],
    ['H2O2', 'O', '-1'], // peroxide: H fixed first, O takes what the charge needs
    ['NaH', 'H', '-1'], // a metal hydride: H is the element solved
    ['HOCl', 'Cl', '1'],
    ['OCl-', 'Cl', '1'],
    ['ClO2', 'Cl', '4'],
    ['ClO2-', 'Cl', '3'],
    ['Cl2', 'Cl', '0'],
    ['HCl', 'Cl', '-1'],
    ['H2S', 'S', '-2'],
    ['SO4^2-', 'S', '6'],
    ['S4O6^2-', 'S', '5/2'], // tetrathionate: an average
    ['Fe3O4', 'Fe', '8/3'], // magnetite: an average
    ['Fe(OH)3', 'Fe', '3'],
    ['K4Fe(CN)6', 'Fe', '2'], // cyanide: N −3, C +2
    ['Fe2(SO4)3', 'Fe', '3'], // sulfate by the common-oxyanion convention
    ['MnSO4', 'Mn', '2'],
    ['NH4+', 'N', '-3'],
    ['NO3-', 'N', '5'],
    ['NO2-', 'N', '3'],
    ['H3AsO3', 'As', '3'],
    ['H3AsO4', 'As', '5'],
    ['Cr2O7^2-', 'Cr', '6'],
    ['O3', 'O', '0'],
  ])('%s: %s is %s', (formula, element, state) => {
    expect(stateOf(formula, element)).toBe(state);
  });

  it('a formula the rules cannot settle is reported open, not guessed (pyrite FeS2)', () => {
    const ox = oxidationStates(P('FeS2'));
    expect(ox.states).toBeNull();
    expect([...ox.open].sort()).toEqual(['Fe', 'S']);
  });
});

const balance = (reactants: string[], products: string[]) => balanceReaction({ reactants: reactants.map(P), products: products.map(P) });

describe('electrons transferred by a balanced reaction', () => {
  it.each([
    // 2KMnO4 + 16HCl → 2KCl + 2MnCl2 + 8H2O + 5Cl2: 2 Mn(+7→+2) = 10 e-
    [['KMnO4', 'HCl'], ['KCl', 'MnCl2', 'H2O', 'Cl2'], 10],
    // 5Fe2+ + MnO4- + 8H+ → 5Fe3+ + Mn2+ + 4H2O: 5 e-
    [['Fe2+', 'MnO4-', 'H+'], ['Fe3+', 'Mn2+', 'H2O'], 5],
    // H2S + Cl2 → S + 2HCl: 2 e-
    [['H2S', 'Cl2'], ['S', 'HCl'], 2],
    // H2S + 4Cl2 + 4H2O → H2SO4 + 8HCl: S −2 → +6, 8 e-
    [['H2S', 'Cl2', 'H2O'], ['H2SO4', 'HCl'], 8],
    // disproportionation: Cl2 + 2OH- → Cl- + OCl- + H2O, 1 e-
    [['Cl2', 'OH-'], ['Cl-', 'OCl-', 'H2O'], 1],
    // comproportionation: 2MnO4- + 3Mn2+ + 2H2O → 5MnO2 + 4H+, 6 e-
    [['MnO4-', 'Mn2+', 'H2O'], ['MnO2', 'H+'], 6],
    // 2H2O2 → 2H2O + O2: 2 e-
    [['H2O2'], ['H2O', 'O2']],
    // the 10-species exercise: each K4Fe(CN)6 gives 61 e- (Fe 1, C 6 × 2, N 6 × 8); 10 of them = 122 MnO4- × 5
    [['K4Fe(CN)6', 'NaMnO4', 'H2SO4'], ['KHSO4', 'NaHSO4', 'Fe2(SO4)3', 'MnSO4', 'HNO3', 'CO2', 'H2O'], 610],
    // mixed valence (textbook: magnetite is Fe(II)Fe(III)2O4, minium Pb(II)2Pb(IV)O4, hausmannite Mn(II)Mn(III)2O4):
    // Fe3O4 + 8H+ → Fe2+ + 2Fe3+ + 4H2O moves no electrons
    [['Fe3O4', 'H+'], ['Fe2+', 'Fe3+', 'H2O'], 0],
    // Pb3O4 + 8HCl → 3PbCl2 + Cl2 + 4H2O: one Pb(IV) → Pb(II), 2 e-
    [['Pb3O4', 'HCl'], ['PbCl2', 'Cl2', 'H2O'], 2],
    // Pb3O4 + 4HNO3 → PbO2 + 2Pb(NO3)2 + 2H2O: no electrons (the Pb(IV) stays as PbO2)
    [['Pb3O4', 'HNO3'], ['PbO2', 'Pb(NO3)2', 'H2O'], 0],
    // 4Fe3O4 + O2 → 6Fe2O3: 4 e- (whole without splitting)
    [['Fe3O4', 'O2'], ['Fe2O3'], 4],
    // not redox
    [['CaCO3', 'HCl'], ['CaCl2', 'CO2', 'H2O'], 0],
    [['CuSO4·5H2O'], ['CuSO4', 'H2O'], 0],
  ] as [string[], string[], number?][])('%j → %j', (reactants, products, expected = 2) => {
    const count = electronsTransferred(balance(reactants, products).terms);
    expect(count.electrons).toBe(expected);
    expect(count.undetermined).toEqual([]);
  });

  it('says so when a species is open (pyrite oxidation), instead of a number', () => {
    const count = electronsTransferred(balance(['FeS2', 'O2', 'H2O'], ['Fe(OH)3', 'SO4^2-', 'H+']).terms);
    expect(count.electrons).toBeNull();
    expect(count.undetermined).toEqual([{ species: 'FeS2', elements: expect.arrayContaining(['Fe', 'S']) }]);
    // nothing is known of the changes: null, not [] (which says "no element changes state")
    expect(count.changes).toBeNull();
  });

  it('a reaction in which no state changes has an empty list of changes, not null', () => {
    const count = electronsTransferred(balance(['CaCO3', 'HCl'], ['CaCl2', 'CO2', 'H2O']).terms);
    expect(count).toMatchObject({ electrons: 0, changes: [], undetermined: [] });
  });

  // independent route: the half-reaction method counts electrons as the LCM of the two halves
  it.each([
    [['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'acid'],
    [['MnO4-', 'MnO2'], ['Fe2+', 'Fe(OH)3'], 'base'],
    [['MnO4-', 'MnO2'], ['Mn2+', 'MnO2'], 'base'],
    [['OCl-', 'Cl-'], ['Fe2+', 'Fe(OH)3'], 'base'],
    [['HOCl', 'Cl-'], ['H2S', 'SO4^2-'], 'acid'],
    [['Cl2', 'Cl-'], ['H2S', 'S'], 'acid'],
    [['ClO2', 'ClO2-'], ['Mn2+', 'MnO2'], 'base'],
    [['O3', 'O2'], ['Mn2+', 'MnO2'], 'acid'],
    [['H2O2', 'H2O'], ['Fe2+', 'Fe(OH)3'], 'acid'],
    [['O2', 'H2O'], ['Fe2+', 'Fe(OH)3'], 'base'],
    [['HOCl', 'Cl-'], ['H3AsO3', 'H3AsO4'], 'acid'],
    [['HOCl', 'Cl-'], ['NH4+', 'N2'], 'acid'],
    [['MnO4-', 'MnO2'], ['H2S', 'SO4^2-'], 'acid'],
    [['Cr2O7^2-', 'Cr3+'], ['Fe2+', 'Fe3+'], 'acid'],
  ] as [[string, string], [string, string], Medium][])('%j with %j in %s: the same count as the half-reaction method', (ox, red, medium) => {
    const r = balanceRedox({ oxidant: { from: P(ox[0]), to: P(ox[1]) }, reductant: { from: P(red[0]), to: P(red[1]) }, medium });
    expect(electronsTransferred(r.terms).electrons).toBe(r.electrons);
  });
});
