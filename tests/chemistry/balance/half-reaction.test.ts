import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { halfReaction } from '../../../src/chemistry/balance/half-reaction.js';
import type { Medium } from '../../../src/chemistry/balance/types.js';
import { isConserved, P } from './helpers.js';

function half(oxidised: string, reduced: string, medium: Medium) {
  return halfReaction({ oxidised: P(oxidised), reduced: P(reduced), medium });
}
function fails(oxidised: string, reduced: string, medium: Medium): DomainError {
  try {
    half(oxidised, reduced, medium);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected a DomainError');
}

describe('halfReaction: edge cases', () => {
  it('a couple that is itself an auxiliary is not added twice (H2O2/H2O)', () => {
    const h = half('H2O2', 'H2O', 'acid');
    expect(h.equation).toBe('H2O2 + 2H+ + 2e- -> 2H2O');
    expect(h.terms.filter((t) => t.species.text === 'H2O').length).toBe(1);
  });
  it('O2/OH- in base completes with water only', () => {
    expect(half('O2', 'OH-', 'base').equation).toBe('O2 + 2H2O + 4e- -> 4OH-');
  });
  it('O2/H2O in base is written with OH- (the water form falls on the reactant side) and says so', () => {
    const h = half('O2', 'H2O', 'base');
    expect(h.equation).toBe('O2 + 2H2O + 4e- -> 4OH-');
    expect(h.convention).toContain('basic medium');
  });
  it('H+/H2 in base is written with water', () => {
    const h = half('H+', 'H2', 'base');
    expect(h.equation).toBe('2H2O + 2e- -> H2 + 2OH-');
    expect(h.convention).toContain('"H+" is written as water');
  });
  it('drops auxiliaries with coefficient 0 (Fe3+/Fe2+ needs no water)', () => {
    expect(half('Fe3+', 'Fe2+', 'acid').terms.map((t) => t.species.text)).toEqual(['Fe3+', 'e-', 'Fe2+']);
  });
  it('O3/O2 is not unique; one O3 to one O2 by convention, and says so', () => {
    const acid = half('O3', 'O2', 'acid');
    expect(acid.equation).toBe('O3 + 2H+ + 2e- -> O2 + H2O');
    expect(acid.convention).toContain('by convention one O3 is reduced to one O2');
    expect(half('O3', 'O2', 'base').equation).toBe('O3 + H2O + 2e- -> O2 + 2OH-');
  });
  it('a couple with a unique balance carries no convention', () => {
    expect(half('MnO4-', 'MnO2', 'acid').convention).toBeUndefined();
  });
});

// Tabled half-reactions: CRC Handbook of Chemistry and Physics, "Electrochemical Series", and
// OpenStax Chemistry 2e, Appendix L (equations from memory of those tables; verify). Each is
// also hand-checked: elements and charge on both sides.
describe('halfReaction: the tabled equations', () => {
  it.each([
    ['MnO4-', 'Mn2+', 'acid', 'MnO4- + 8H+ + 5e- -> Mn2+ + 4H2O', 5], // charge −1+8−5 = 2
    ['MnO4-', 'MnO2', 'acid', 'MnO4- + 4H+ + 3e- -> MnO2 + 2H2O', 3], // −1+4−3 = 0
    ['MnO4-', 'MnO2', 'base', 'MnO4- + 2H2O + 3e- -> MnO2 + 4OH-', 3], // −1−3 = −4
    ['MnO2', 'Mn2+', 'acid', 'MnO2 + 4H+ + 2e- -> Mn2+ + 2H2O', 2],
    ['HOCl', 'Cl-', 'acid', 'HOCl + H+ + 2e- -> Cl- + H2O', 2], // 1−2 = −1
    ['ClO-', 'Cl-', 'base', 'ClO- + H2O + 2e- -> Cl- + 2OH-', 2], // −1−2 = −3
    ['Cl2', 'Cl-', 'acid', 'Cl2 + 2e- -> 2Cl-', 2],
    ['ClO2', 'ClO2-', 'acid', 'ClO2 + e- -> ClO2-', 1],
    ['O2', 'H2O', 'acid', 'O2 + 4H+ + 4e- -> 2H2O', 4],
    ['H2O2', 'H2O', 'acid', 'H2O2 + 2H+ + 2e- -> 2H2O', 2],
    ['O3', 'O2', 'acid', 'O3 + 2H+ + 2e- -> O2 + H2O', 2],
    ['Fe3+', 'Fe2+', 'acid', 'Fe3+ + e- -> Fe2+', 1],
    ['Cr2O7^2-', 'Cr3+', 'acid', 'Cr2O7^2- + 14H+ + 6e- -> 2Cr3+ + 7H2O', 6], // −2+14−6 = 6
    ['S', 'H2S', 'acid', 'S + 2H+ + 2e- -> H2S', 2],
    ['H3AsO4', 'H3AsO3', 'acid', 'H3AsO4 + 2H+ + 2e- -> H3AsO3 + H2O', 2],
    ['NO3-', 'HNO2', 'acid', 'NO3- + 3H+ + 2e- -> HNO2 + H2O', 2],
    ['IO3-', 'I-', 'acid', 'IO3- + 6H+ + 6e- -> I- + 3H2O', 6],
    // Stumm & Morgan, Aquatic Chemistry, 3rd ed., table of pε° (from memory; verify)
    ['SO4^2-', 'H2S', 'acid', 'SO4^2- + 10H+ + 8e- -> H2S + 4H2O', 8],
    ['N2', 'NH4+', 'acid', 'N2 + 8H+ + 6e- -> 2NH4+', 6],
    ['Fe(OH)3(s)', 'Fe2+', 'acid', 'Fe(OH)3(s) + 3H+ + e- -> Fe2+ + 3H2O', 1],
  ] as const)('%s/%s (%s)', (ox, red, medium, equation, electrons) => {
    const h = half(ox, red, medium);
    expect(h.equation).toBe(equation);
    expect(h.electrons).toBe(electrons);
    expect(h.medium).toBe(medium);
    expect(h.oxidised.text).toBe(ox);
    expect(h.reduced.text).toBe(red);
    expect(isConserved(h)).toBe(true);
    // written as a reduction: electrons on the reactant side
    expect(h.terms.find((t) => t.species.text === 'e-')?.side).toBe('reactant');
  });
});

describe('halfReaction: errors', () => {
  it('BALANCE_COUPLE_DIRECTION when the couple is written backwards, telling which form goes first', () => {
    const e = fails('Fe2+', 'Fe(OH)3', 'acid');
    expect(e.code).toBe('BALANCE_COUPLE_DIRECTION');
    expect(e.detail).toContain('put the oxidised form first (oxidised "Fe(OH)3", reduced "Fe2+")');
    expect(e.params['suggested']).toEqual({ oxidised: 'Fe(OH)3', reduced: 'Fe2+' });
  });
  it('BALANCE_NOT_REDOX for an acid–base pair (HOCl/OCl-)', () => {
    const e = fails('HOCl', 'OCl-', 'acid');
    expect(e.code).toBe('BALANCE_NOT_REDOX');
    expect(e.detail).toContain('HOCl -> OCl- + H+');
  });
  it('BALANCE_NOT_REDOX for a precipitation step (Fe3+/Fe(OH)3)', () => {
    expect(fails('Fe3+', 'Fe(OH)3', 'acid').code).toBe('BALANCE_NOT_REDOX');
  });
  it('BALANCE_NOT_REDOX for the same species twice', () => {
    expect(fails('Fe(OH)3(s)', 'Fe(OH)3', 'acid').code).toBe('BALANCE_NOT_REDOX');
  });
  it('BALANCE_IMPOSSIBLE when the forms do not share their element', () => {
    const e = fails('Fe3+', 'Mn2+', 'acid');
    expect(e.code).toBe('BALANCE_IMPOSSIBLE');
    expect(e.detail).toContain('Fe is in "Fe3+" but not in "Mn2+"');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/oxidised', '/reduced']);
  });
  it('BALANCE_IMPOSSIBLE for the electron as a form', () => {
    expect(fails('e-', 'Fe2+', 'acid').code).toBe('BALANCE_IMPOSSIBLE');
  });
});
