/**
 * The balance answer built from text (src/chemistry/balance/service.ts), as the HTTP route and
 * the CLI return it: the electrons and the oxidation-state changes of a reaction given as
 * species. Oxidation states are the usual textbook values (e.g. Atkins, Inorganic Chemistry;
 * from memory); pyrite's balance 4FeS2 + 15O2 + 14H2O → 4Fe(OH)3 + 8SO4^2- + 16H+ is the
 * textbook acid-mine-drainage reaction (e.g. Stumm & Morgan, Aquatic Chemistry; from memory).
 */
import { describe, expect, it } from 'vitest';
import { balanceService } from '../../../src/chemistry/balance/service.js';
import type { DomainError } from '../../../src/core/errors.js';

describe('balanceService: oxidation-state changes of a reaction given as species', () => {
  it('open oxidation states (pyrite FeS2): electrons and oxidationStateChanges are both null, the reason in electronsNote', () => {
    const r = balanceService({ reactants: ['FeS2', 'O2', 'H2O'], products: ['Fe(OH)3', 'SO4^2-', 'H+'] });
    expect(r.equation).toBe('4FeS2 + 15O2 + 14H2O -> 4Fe(OH)3 + 8SO4^2- + 16H+');
    expect(r.electrons).toBeNull();
    expect(r).toHaveProperty('oxidationStateChanges', null);
    expect(r).toHaveProperty('electronsNote');
    expect((r as { electronsNote: string }).electronsNote).toMatch(/oxidation states of Fe and S in FeS2 do not follow from the formula rules/);
  });

  it('a non-redox reaction: 0 electrons and an empty list (no element changes state)', () => {
    const r = balanceService({ reactants: ['CaCO3', 'H+'], products: ['Ca2+', 'CO2', 'H2O'] });
    expect(r).toMatchObject({ electrons: 0, oxidationStateChanges: [] });
    expect(r).not.toHaveProperty('electronsNote');
  });

  it('a redox reaction: the changes per element, lost = gained = electrons (5Fe2+ + MnO4- + 8H+: Fe +2→+3, Mn +7→+2)', () => {
    const r = balanceService({ reactants: ['Fe2+', 'MnO4-', 'H+'], products: ['Fe3+', 'Mn2+', 'H2O'] });
    expect(r).toMatchObject({
      electrons: 5,
      oxidationStateChanges: [
        { element: 'Fe', electronsLost: '5', electronsGained: '0' },
        { element: 'Mn', electronsLost: '0', electronsGained: '5' },
      ],
    });
  });

  // which element is oxidised and which reduced, counted by hand from the textbook states
  // (ammonium N −3, sulfite S +4, sulfate S +6, dichromate Cr +6; Greenwood & Earnshaw, from memory)
  it.each([
    [['(NH4)2Cr2O7'], ['Cr2O3', 'N2', 'H2O'], 6, [{ element: 'Cr', electronsLost: '0', electronsGained: '6' }, { element: 'N', electronsLost: '6', electronsGained: '0' }]],
    [['(NH4)2SO3', 'O2'], ['(NH4)2SO4'], 4, [{ element: 'O', electronsLost: '0', electronsGained: '4' }, { element: 'S', electronsLost: '4', electronsGained: '0' }]],
    [['FeSO3', 'O2'], ['FeSO4'], 4, [{ element: 'O', electronsLost: '0', electronsGained: '4' }, { element: 'S', electronsLost: '4', electronsGained: '0' }]],
    [['NH4NO3'], ['N2O', 'H2O'], 4, [{ element: 'N', electronsLost: '4', electronsGained: '4' }]],
  ] as [string[], string[], number, unknown[]][])('a salt with polyatomic ions: %j → %j moves %i electrons, the right element oxidised', (reactants, products, electrons, changes) => {
    const r = balanceService({ reactants, products });
    expect(r).toMatchObject({ electrons, oxidationStateChanges: changes });
    expect((r as { electronsNote?: string }).electronsNote).toMatch(/polyatomic ions/);
  });

  it('the ions named are those whose elements change state (ammonium dichromate: NH4+ only)', () => {
    const r = balanceService({ reactants: ['(NH4)2Cr2O7'], products: ['Cr2O3', 'N2', 'H2O'] }) as { electronsNote?: string };
    expect(r.electronsNote).toBe('Oxidation states read with the polyatomic ions in (NH4)2Cr2O7: NH4+ (N −3).');
  });

  it('a solid written with a thermodynamic table label, (cr) or (am), balances as the solid and the answer says how it was read', () => {
    // Fe3+ + 3H2O → Fe(OH)3 + 3H+: hydrolysis of iron(III), no electrons (textbook, from memory)
    const r = balanceService({ reactants: ['Fe3+', 'H2O'], products: ['Fe(OH)3(am)', 'H+'] }) as { equation: string; electrons: number; notes?: string[] };
    expect(r.equation).toBe('Fe3+ + 3H2O -> Fe(OH)3(am) + 3H+');
    expect(r.electrons).toBe(0);
    expect(r.notes?.join(' ')).toMatch(/Fe\(OH\)3\(am\): \(cr\) crystalline and \(am\) amorphous are read as the solid phase \(s\)/);
  });

  // VO2+ is written for both vanadyl VO^2+ (V(IV)) and pervanadyl VO2^+ (V(V)) (Greenwood & Earnshaw, from memory)
  it.each([
    [['VO2+', 'H2O'], ['VO(OH)+', 'H+'], 'VO^2+ + H2O -> VO(OH)+ + H+'],
    [['VO2+', 'OH-'], ['VO(OH)2'], 'VO^2+ + 2OH- -> VO(OH)2'],
  ])('a digit and one sign read as a count that leaves %j → %j unbalanced: the error names the charge reading that balances', (reactants, products, equation) => {
    try {
      balanceService({ reactants, products });
      expect.unreachable('the count reading does not balance');
    } catch (e) {
      expect(e).toMatchObject({ code: 'BALANCE_IMPOSSIBLE', params: { chargeReading: { species: 'VO2+', read: 'VO2^+', alternative: 'VO^2+', balancedEquation: equation } } });
      expect((e as DomainError).detail).toContain(`VO2+ was read as VO2^+ (a single sign after a digit is a charge of 1, the digit a count); read as VO^2+ (the digit as the charge) the species balance: ${equation}.`);
      expect((e as DomainError).fields[0]).toEqual({ pointer: '/reactants/0', message: 'read as VO2^+; as VO^2+ the species balance' });
    }
  });

  it('no charge reading is offered when neither reading balances (Fe2+ → Fe3+ lacks electrons)', () => {
    try {
      balanceService({ reactants: ['Fe2+'], products: ['Fe3+'] });
      expect.unreachable();
    } catch (e) {
      expect((e as DomainError).params).not.toHaveProperty('chargeReading');
    }
  });

  it('a half-reaction written with e-: its e- coefficient, and no oxidation-state report', () => {
    const r = balanceService({ reactants: ['MnO4-', 'H+', 'e-'], products: ['Mn2+', 'H2O'] });
    expect(r.electrons).toBe(5);
    expect(r).not.toHaveProperty('oxidationStateChanges');
  });

  it('a formula with its charge written ambiguously is refused with the field pointer, not read as a dimer', () => {
    try {
      balanceService({ reactants: ['Fe2++'], products: ['Fe3+', 'e-'] });
      expect.unreachable('Fe2++ must be refused');
    } catch (e) {
      expect(e).toMatchObject({ code: 'FORMULA_AMBIGUOUS_CHARGE', position: 2, text: 'Fe2++' });
      expect((e as { fields: { pointer: string }[] }).fields[0]?.pointer).toBe('/reactants/0');
    }
  });
});
