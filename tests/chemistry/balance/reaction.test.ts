import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { balanceReaction, reactionVector } from '../../../src/chemistry/balance/reaction.js';
import { parseEquation } from '../../../src/chemistry/formula/equation.js';
import { canonical, isConserved, P } from './helpers.js';

function balance(reactants: string[], products: string[]) {
  return balanceReaction({ reactants: reactants.map(P), products: products.map(P) });
}
function fails(reactants: string[], products: string[]): DomainError {
  try {
    balance(reactants, products);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a DomainError');
}

describe('balanceReaction: edge cases', () => {
  it('refuses an empty side, naming the field', () => {
    const e = fails([], ['H2O']);
    expect(e.code).toBe('BALANCE_IMPOSSIBLE');
    expect(e.fields[0]?.pointer).toBe('/reactants');
  });
  it('refuses more than 40 species with BALANCE_TOO_LARGE', () => {
    const many = Array.from({ length: 41 }, () => 'H2O');
    expect(fails(many.slice(0, 20), many.slice(20)).code).toBe('BALANCE_TOO_LARGE');
  });
  it('balances a species that only changes phase label (H2O(l) → H2O(g)) as 1:1', () => {
    expect(balance(['H2O(l)'], ['H2O(g)']).equation).toBe('H2O(l) -> H2O(g)');
  });
});

// Whole-number balances from general chemistry (hand-checked: every element and the charge
// counted on both sides in the comment).
describe('balanceReaction: textbook equations', () => {
  it.each([
    // 2H2 + O2 → 2H2O: H 4=4, O 2=2
    [['H2', 'O2'], ['H2O'], '2H2 + O2 -> 2H2O', 0],
    // C3H8 + 5O2 → 3CO2 + 4H2O: C 3=3, H 8=8, O 10=6+4
    [['C3H8', 'O2'], ['CO2', 'H2O'], 'C3H8 + 5O2 -> 3CO2 + 4H2O', 0],
    // Fe2O3 + 3CO → 2Fe + 3CO2: Fe 2=2, O 3+3=6, C 3=3
    [['Fe2O3', 'CO'], ['Fe', 'CO2'], 'Fe2O3 + 3CO -> 2Fe + 3CO2', 0],
    // 2KMnO4 + 16HCl → 2KCl + 2MnCl2 + 8H2O + 5Cl2: K 2, Mn 2, Cl 16=2+4+10, H 16, O 8
    [['KMnO4', 'HCl'], ['KCl', 'MnCl2', 'H2O', 'Cl2'], '2KMnO4 + 16HCl -> 2KCl + 2MnCl2 + 8H2O + 5Cl2', 0],
    // the classic 9-species exercise: K 40+122=162, Fe 10, C 60, N 60, Mn 122, S 299=162+15+122,
    // H 598=162+60+376, O 488+1196=1684=648+60+488+180+120+188
    [
      ['K4Fe(CN)6', 'KMnO4', 'H2SO4'],
      ['KHSO4', 'Fe2(SO4)3', 'MnSO4', 'HNO3', 'CO2', 'H2O'],
      '10K4Fe(CN)6 + 122KMnO4 + 299H2SO4 -> 162KHSO4 + 5Fe2(SO4)3 + 122MnSO4 + 60HNO3 + 60CO2 + 188H2O',
      0,
    ],
    // ionic, with electrons: MnO4- + 8H+ + 5e- → Mn2+ + 4H2O (charge −1+8−5 = +2)
    [['MnO4-', 'H+', 'e-'], ['Mn2+', 'H2O'], 'MnO4- + 8H+ + 5e- -> Mn2+ + 4H2O', 5],
    // hydrate: CuSO4·5H2O → CuSO4 + 5H2O
    [['CuSO4·5H2O'], ['CuSO4', 'H2O'], 'CuSO4.5H2O -> CuSO4 + 5H2O', 0], // plain text writes the hydrate dot as "."
  ] as const)('%j → %j', (reactants, products, equation, electrons) => {
    const r = balance([...reactants], [...products]);
    expect(r.equation).toBe(equation);
    expect(r.electrons).toBe(electrons);
    expect(isConserved(r)).toBe(true);
    // terms keep the input order (formulas as written, in plain text: the hydrate dot as ".")
    expect(r.terms.map((t) => t.species.text)).toEqual([...reactants, ...products].map((t) => t.replace('·', '.')));
  });

  it('balances a 10-species reaction (the sodium variant of the classic exercise)', () => {
    const r = balance(['K4Fe(CN)6', 'NaMnO4', 'H2SO4'], ['KHSO4', 'Fe2(SO4)3', 'MnSO4', 'HNO3', 'CO2', 'H2O', 'NaHSO4']);
    // K: 40 = 40; Na: 122 = 122; S: 299 = 40 + 15 + 122 + 122
    expect(r.equation).toBe('10K4Fe(CN)6 + 122NaMnO4 + 299H2SO4 -> 40KHSO4 + 5Fe2(SO4)3 + 122MnSO4 + 60HNO3 + 60CO2 + 188H2O + 122NaHSO4');
    expect(isConserved(r)).toBe(true);
  });
});

describe('balanceReaction: why a balance fails', () => {
  it('BALANCE_IMPOSSIBLE names the charge when only the elements balance (Fe3+ → Fe2+)', () => {
    const e = fails(['Fe3+'], ['Fe2+']);
    expect(e.code).toBe('BALANCE_IMPOSSIBLE');
    expect(e.params['cause']).toBe('charge');
    expect(e.detail).toContain('charge 3+ on the left and 2+ on the right');
    expect(e.detail).toContain('add electrons');
  });
  it('BALANCE_IMPOSSIBLE names an element found on one side only (HOCl → H2O)', () => {
    const e = fails(['HOCl'], ['H2O']);
    expect(e.params['cause']).toBe('Cl');
    expect(e.detail).toContain('Cl cannot balance: it appears only among the reactants (in "HOCl")');
  });
  it('BALANCE_IMPOSSIBLE names a charge found on one side only (Fe → Fe2+)', () => {
    const e = fails(['Fe'], ['Fe2+']);
    expect(e.params['cause']).toBe('charge');
    expect(e.detail).toContain('only the products carry charge');
  });
  it('BALANCE_IMPOSSIBLE says when charged species on both sides have charges that add up (Fe(OH)3- → Fe3+ + H2O)', () => {
    // −1 on the left and +3 on the right: a·(−1) = b·(+3) has no positive solution
    const e = fails(['Fe(OH)3-'], ['Fe3+', 'H2O']);
    expect(e.params['cause']).toBe('charge');
    expect(e.detail).toContain('the charged reactants ("Fe(OH)3-") and the charged products ("Fe3+") carry charges of opposite sign');
    expect(e.detail).not.toContain('only the');
  });
  it('BALANCE_IMPOSSIBLE says a species takes no part (zero coefficient)', () => {
    const e = fails(['H2', 'O2', 'NaCl'], ['H2O']);
    expect(e.code).toBe('BALANCE_IMPOSSIBLE');
    expect(e.detail).toContain('"NaCl" takes no part');
    expect(e.params['balancedEquation']).toBe('2H2 + O2 -> 2H2O');
    expect(e.fields).toEqual([{ pointer: '/reactants/2', message: 'NaCl takes no part in the balance' }]);
  });
  it('BALANCE_NOT_UNIQUE lists independent sub-reactions', () => {
    const e = fails(['H2', 'O2'], ['H2O', 'H2O2']);
    expect(e.code).toBe('BALANCE_NOT_UNIQUE');
    const subs = e.params['subReactions'] as string[];
    expect(subs.length).toBe(2);
    expect(subs.map(canonical).sort()).toEqual([canonical('2H2 + O2 = 2H2O'), canonical('H2 + O2 = H2O2')].sort());
    for (const s of subs) expect(e.detail).toContain(s);
  });
  it('BALANCE_NOT_UNIQUE also says when a species is listed on both sides', () => {
    const e = fails(['H2', 'O2', 'H2O'], ['H2O']);
    expect(e.code).toBe('BALANCE_NOT_UNIQUE');
    expect(e.detail).toContain('"H2O" is listed more than once');
    expect(e.params['subReactions']).toContain('H2O -> H2O');
  });
  it('BALANCE_WRONG_SIDE names the species that would change sides', () => {
    const e = fails(['H2', 'H2O'], ['O2']);
    expect(e.code).toBe('BALANCE_WRONG_SIDE');
    expect(e.params['species']).toEqual(['H2']);
    expect(e.params['balancedEquation']).toBe('2H2O -> 2H2 + O2');
    expect(e.fields[0]?.pointer).toBe('/reactants/0');
  });
});

describe('reactionVector', () => {
  it('puts products positive, reactants negative and electrons under "e-"', () => {
    const v = reactionVector(parseEquation('MnO4- + 8H+ + 5e- = Mn2+ + 4H2O'));
    expect(Object.fromEntries([...v].map(([k, c]) => [k, c.toString()]))).toEqual({
      'MnO4^-': '-1', 'H^+': '-8', 'e-': '-5', 'Mn^2+': '1', H2O: '4',
    });
  });
  it('nets a species on both sides and drops it at zero', () => {
    const v = reactionVector(parseEquation('Fe + H2O = H2O + Fe'));
    expect(v.size).toBe(0);
  });
  it('gives the same vector for a balanced reaction and its equation text', () => {
    const r = balance(['MnO4-', 'H+', 'e-'], ['Mn2+', 'H2O']);
    expect(canonical(r)).toBe(canonical(r.equation));
  });
});
