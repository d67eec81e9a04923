/**
 * Oxidation states from formulas and the electrons a balanced reaction transfers.
 * States are the usual textbook values (e.g. Atkins, Inorganic Chemistry; from memory). The
 * electron counts are checked against textbook reactions and, independently, against the
 * half-reaction method of balanceRedox, which counts electrons by a different route (the
 * least common multiple of the two half-reactions' electrons).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { parseFormula } from '../../../src/chemistry/formula/index.js';
import { balanceReaction } from '../../../src/chemistry/balance/reaction.js';
import { balanceRedox } from '../../../src/chemistry/balance/redox.js';
import { electronsTransferred, oxidationStates } from '../../../src/chemistry/balance/oxidation.js';
import type { Medium } from '../../../src/chemistry/balance/types.js';

const P = (t: string) => parseFormula(t);
/** The states of an element in a formula, lowest first, joined by "," (NH4NO3, N: "-3,5"); undefined when open. */
const stateOf = (formula: string, element: string) =>
  oxidationStates(P(formula))
    .sites?.filter((s) => s.element === element)
    .sort((a, b) => a.state.compare(b.state))
    .map((s) => s.state.toString())
    .join(',');

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
    ['Fe2(SO4)3', 'Fe', '3'], // sulfate read as the ion SO4^2-
    ['MnSO4', 'Mn', '2'],
    // one element in two states, read with the polyatomic ions (textbook: ammonium N −3,
    // nitrate +5, nitrite +3, sulfite S +4, perchlorate Cl +7; Greenwood & Earnshaw, from memory)
    ['NH4NO3', 'N', '-3,5'],
    ['NH4NO2', 'N', '-3,3'],
    ['(NH4)2Cr2O7', 'N', '-3'],
    ['(NH4)2Cr2O7', 'Cr', '6'],
    ['NH4ClO4', 'N', '-3'],
    ['NH4ClO4', 'Cl', '7'],
    ['(NH4)2SO3', 'S', '4'],
    ['(NH4)2SO3', 'N', '-3'],
    ['FeSO3', 'Fe', '2'],
    ['FeSO3', 'S', '4'],
    ['FeSO4', 'Fe', '2'],
    ['Fe(NO2)2', 'Fe', '2'],
    ['Fe(NO2)2', 'N', '3'],
    ['Fe(NO3)3', 'Fe', '3'],
    ['(NH4)2Fe(SO4)2', 'Fe', '2'], // Mohr's salt: iron(II)
    ['NH4Fe(SO4)2', 'Fe', '3'], // ferric alum
    ['NaNO2', 'N', '3'],
    ['HNO2', 'N', '3'],
    ['H2SO3', 'S', '4'],
    ['NaHSO3', 'S', '4'],
    ['Na2S2O5', 'S', '4'], // metabisulfite
    ['Na2S2O3', 'S', '2'], // thiosulfate: the average
    ['Na2S2O4', 'S', '3'], // dithionite
    ['Na2S2O8', 'S', '6'], // peroxodisulfate: S +6 with one O–O bridge
    ['Na2S2O8', 'O', '-2,-1'],
    ['KHSO5', 'O', '-2,-1'],
    ['NaOCl', 'Cl', '1'],
    ['Ca(OCl)2', 'Cl', '1'],
    ['NaClO2', 'Cl', '3'],
    ['KClO3', 'Cl', '5'],
    ['NH4Cl', 'N', '-3'],
    ['NH4Cl', 'Cl', '-1'],
    ['FeCl(OH)2', 'Fe', '3'],
    ['FeOOH', 'Fe', '3'],
    ['NH4HCO3', 'C', '4'],
    ['KSCN', 'S', '-2'], // thiocyanate by electronegativity: S −2, C +4, N −3
    ['KSCN', 'C', '4'],
    ['K3Fe(CN)6', 'Fe', '3'],
    ['Na2C2O4', 'C', '3'],
    ['NH2OH', 'N', '-1'], // hydroxylamine
    ['K2MnO4', 'Mn', '6'], // manganate: the metal solved from K
    ['K2Cr2O7', 'Cr', '6'],
    ['SO3', 'S', '6'], // the neutral oxide, not sulfite
    ['NO2', 'N', '4'],
    ['ClO2', 'Cl', '4'],
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
    expect(ox.sites).toBeNull();
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
    // salts with one element in two states (the electrons counted by hand from the states above):
    // NH4NO3 → N2O + 2H2O: N −3 → +1 (4 lost), N +5 → +1 (4 gained): 4
    [['NH4NO3'], ['N2O', 'H2O'], 4],
    // NH4NO2 → N2 + 2H2O: N −3 → 0 (3), N +3 → 0 (3): 3, as written with the ions
    [['NH4NO2'], ['N2', 'H2O'], 3],
    [['NH4+', 'NO2-'], ['N2', 'H2O'], 3],
    // (NH4)2Cr2O7 → Cr2O3 + N2 + 4H2O: 2 N −3 → 0 (6 lost), 2 Cr +6 → +3 (6 gained): 6
    [['(NH4)2Cr2O7'], ['Cr2O3', 'N2', 'H2O'], 6],
    // 2NH4ClO4 → N2 + Cl2 + 2O2 + 4H2O: N 2 × 3 + O 4 × 2 lost = 14; Cl 2 × 7 gained = 14
    [['NH4ClO4'], ['N2', 'Cl2', 'O2', 'H2O'], 14],
    // 2NH4NO3 → 2N2 + O2 + 4H2O: N 2 × 3 + O 2 × 2 lost = 10; N 2 × 5 gained = 10
    [['NH4NO3'], ['N2', 'O2', 'H2O'], 10],
    // NH4NO3 + Zn → N2 + ZnO + 2H2O: N 3 + Zn 2 lost = 5; N 5 gained
    [['NH4NO3', 'Zn'], ['N2', 'ZnO', 'H2O'], 5],
    // Fe(NO3)2 + 2Fe → Fe(NO2)2 + 2FeO: 2 Fe 0 → +2 (4 lost), 2 N +5 → +3 (4 gained): 4
    [['Fe(NO3)2', 'Fe'], ['Fe(NO2)2', 'FeO'], 4],
    // 2(NH4)2SO3 + O2 → 2(NH4)2SO4 and 2FeSO3 + O2 → 2FeSO4: 2 S +4 → +6, 4
    [['(NH4)2SO3', 'O2'], ['(NH4)2SO4'], 4],
    [['FeSO3', 'O2'], ['FeSO4'], 4],
    // dechlorination with metabisulfite: Na2S2O5 + 2HOCl + H2O → 2NaHSO4 + 2HCl: 2 S +4 → +6, 4
    [['Na2S2O5', 'HOCl', 'H2O'], ['NaHSO4', 'HCl'], 4],
    // 10FeSO4·(NH4)2SO4 as Mohr's salt with permanganate: 10 Fe(II) → Fe(III), 10
    [['(NH4)2Fe(SO4)2', 'KMnO4', 'H2SO4'], ['Fe2(SO4)3', 'MnSO4', 'K2SO4', '(NH4)2SO4', 'H2O'], 10],
    // not redox
    [['NH4Cl', 'NaOH'], ['NH3', 'NaCl', 'H2O'], 0],
    [['NH4NO3', 'NaOH'], ['NaNO3', 'NH3', 'H2O'], 0],
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

describe('per-species reading by polyatomic ions', () => {
  it('a salt written with ions names the ions in the answer; the ion itself written alone names none', () => {
    expect(oxidationStates(P('NH4NO3')).ions.map((i) => i.text)).toEqual(['NH4+ (N −3)', 'NO3- (N +5)']);
    expect(oxidationStates(P('NO3-')).ions).toEqual([]);
  });

  it('water of hydration is read apart from the salt, so a hydrated chloride is settled (FeCl3·6H2O: Fe +3, Cl −1)', () => {
    expect(stateOf('FeCl3·6H2O', 'Fe')).toBe('3');
    expect(stateOf('FeCl3·6H2O', 'Cl')).toBe('-1');
  });

  it('an ion reading that would leave a halogen other than −1 is not taken (nitryl chloride NO2Cl stays open, not N +3 and Cl +1)', () => {
    expect(oxidationStates(P('NO2Cl')).sites).toBeNull();
  });

  it('a formula that reads two ways with different states is open, naming both readings (made-up NH4NO3SO3: NO3- or SO3^2-)', () => {
    const ox = oxidationStates(P('NH4NO3SO3'));
    expect(ox.sites).toBeNull();
    expect(ox.readings).toHaveLength(2);
    expect(ox.readings!.join(' | ')).toMatch(/NO3-.*\|.*SO3\^2-/);
  });
});

// Property: every species' sites carry its atoms and add up to its charge, so in every balanced
// reaction whose states are settled the electrons lost equal the electrons gained (charge
// conservation; no outside value needed).
const POOL = [
  'NH4NO3', 'NH4NO2', 'NH4+', 'NO3-', 'NO2-', 'N2', 'N2O', 'NO', 'NO2', 'HNO3', 'NH3', '(NH4)2SO4', '(NH4)2SO3', '(NH4)2Cr2O7',
  'NH4ClO4', 'NaNO2', 'Fe(NO3)2', 'Fe(NO2)2', 'Fe(NO3)3', 'FeSO4', 'FeSO3', 'Fe2(SO4)3', 'Fe2+', 'Fe3+', 'Fe', 'FeO', 'Fe(OH)3',
  'SO4^2-', 'SO3^2-', 'S2O3^2-', 'Na2S2O5', 'NaHSO3', 'H2S', 'S', 'Cl2', 'Cl-', 'HOCl', 'OCl-', 'ClO2', 'ClO2-', 'ClO3-', 'ClO4-',
  'KMnO4', 'MnO2', 'Mn2+', 'Cr2O3', 'Cr3+', 'Cr2O7^2-', 'H2O', 'H+', 'OH-', 'O2', 'H2O2', 'Zn', 'ZnO', 'Na+', 'K+', 'Na2S2O8',
  'KSCN', 'CN-', 'HCO3-', 'CO2', 'NH4Cl', 'FeCl3·6H2O', 'CuSO4·5H2O', 'Cu2+',
];
/** The pool by element, so that random picks share elements and often balance. */
const THEMES: readonly (readonly string[])[] = [
  ['NH4NO3', 'NH4NO2', 'NH4+', 'NO3-', 'NO2-', 'N2', 'N2O', 'NO', 'NO2', 'HNO3', 'NH3', 'NaNO2', 'NH4ClO4'],
  ['(NH4)2SO4', '(NH4)2SO3', 'SO4^2-', 'SO3^2-', 'S2O3^2-', 'Na2S2O5', 'NaHSO3', 'H2S', 'S', 'Na2S2O8', 'Na+'],
  ['Cl2', 'Cl-', 'HOCl', 'OCl-', 'ClO2', 'ClO2-', 'ClO3-', 'ClO4-', 'NH4Cl'],
  ['Fe(NO3)2', 'Fe(NO2)2', 'Fe(NO3)3', 'FeSO4', 'FeSO3', 'Fe2(SO4)3', 'Fe2+', 'Fe3+', 'Fe', 'FeO', 'Fe(OH)3', 'FeCl3·6H2O'],
  ['KMnO4', 'MnO2', 'Mn2+', 'K+', '(NH4)2Cr2O7', 'Cr2O3', 'Cr3+', 'Cr2O7^2-', 'Zn', 'ZnO', 'H2O2'],
];
const sum = (xs: readonly { electronsLost?: string; electronsGained?: string; oxidised?: string; reduced?: string }[], k: 'oxidised' | 'reduced') =>
  xs.reduce((n, c) => n + Number(c[k]), 0);

describe('properties of the oxidation states', () => {
  it.each(POOL)('%s: the sites hold every atom and add up to the charge', (formula) => {
    const sp = P(formula);
    const ox = oxidationStates(sp);
    expect(ox.sites).not.toBeNull();
    const atoms: Record<string, number> = {};
    let total = 0;
    for (const s of ox.sites!) {
      atoms[s.element] = (atoms[s.element] ?? 0) + s.atoms;
      total += s.state.toNumber() * s.atoms;
    }
    expect(atoms).toEqual(sp.composition);
    expect(total).toBeCloseTo(sp.charge, 12);
  });

  it('in every balanced reaction of pooled species with settled states, electrons lost = electrons gained = electrons', () => {
    let balanced = 0;
    fc.assert(
      fc.property(
        // two couples' worth of species (two from each of two themes) with water and H+ or OH-
        fc.constantFrom(...THEMES).chain((a) => fc.shuffledSubarray([...a], { minLength: 2, maxLength: 2 })),
        fc.constantFrom(...THEMES).chain((b) => fc.shuffledSubarray([...b], { minLength: 2, maxLength: 2 })),
        fc.constantFrom('H+', 'OH-'),
        (first, second, acidOrBase) => {
          const species = [...new Set([...first, ...second, 'H2O', acidOrBase])];
          let reactants = species.filter((_, i) => i % 2 === 0);
          let products = species.filter((_, i) => i % 2 === 1);
          let r;
          for (let attempt = 0; attempt < 3 && !r; attempt++) {
            try {
              r = balance(reactants, products);
            } catch (e) {
              // species on the wrong side: move them as the balancer says and try again
              const moved = e instanceof DomainError && e.code === 'BALANCE_WRONG_SIDE' ? (e.params['species'] as string[]) : null;
              if (!moved) return; // no balance, or not a unique one: nothing to count
              const was = reactants;
              reactants = [...reactants.filter((x) => !moved.includes(x)), ...products.filter((x) => moved.includes(x))];
              products = [...products.filter((x) => !moved.includes(x)), ...was.filter((x) => moved.includes(x))];
            }
          }
          if (!r) return;
          balanced++;
          const count = electronsTransferred(r.terms);
          if (count.changes === null) return;
          const lost = sum(count.changes, 'oxidised');
          const gained = sum(count.changes, 'reduced');
          expect(lost).toBe(gained);
          if (count.electrons !== null) expect(count.electrons).toBe(lost);
        },
      ),
      { numRuns: 3000 },
    );
    expect(balanced).toBeGreaterThan(100);
  });
});
