import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FastifyInstance } from 'fastify';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from '../../src/http/app.js';

let app: FastifyInstance;
beforeAll(async () => {
  app = await buildApp({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-reactions-')) });
});
afterAll(async () => {
  await app.close();
});

const post = (body: unknown) => app.inject({ method: 'POST', url: '/api/v1/reactions/balance', payload: body as object });

describe('POST /api/v1/reactions/balance', () => {
  it('balances permanganate–iron(II) in acid (textbook: MnO4- + 3Fe2+ + 7H2O → MnO2 + 3Fe(OH)3 + 5H+; Benjamin, Water Chemistry, 2nd ed., from memory)', async () => {
    const r = await post({ oxidant: { from: 'MnO4-', to: 'MnO2' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, medium: 'acid' });
    expect(r.statusCode).toBe(200);
    const b = r.json();
    expect(b.equation).toBe('MnO4- + 3Fe2+ + 7H2O -> MnO2 + 3Fe(OH)3 + 5H+');
    expect(b.electrons).toBe(3);
    expect(b.terms).toEqual(
      expect.arrayContaining([
        { species: 'MnO4-', coefficient: 1, side: 'reactant' },
        { species: 'Fe2+', coefficient: 3, side: 'reactant' },
        { species: 'H+', coefficient: 5, side: 'product' },
      ]),
    );
  });

  it('formulas sent with subscripts and superscripts come back in the plain-text notation; the typeset form is equationUnicode', async () => {
    const r = await post({ oxidant: { from: 'MnO₄⁻', to: 'MnO₂' }, reductant: { from: 'Fe²⁺', to: 'Fe(OH)₃' }, medium: 'acid' });
    expect(r.statusCode, r.body).toBe(200);
    const b = r.json();
    expect(b.equation).toBe('MnO4- + 3Fe2+ + 7H2O -> MnO2 + 3Fe(OH)3 + 5H+');
    expect(b.terms.map((t: { species: string }) => t.species)).toEqual(expect.arrayContaining(['MnO4-', 'Fe2+', 'Fe(OH)3']));
    expect(/^[\x20-\x7e]*$/.test(JSON.stringify(b.terms))).toBe(true);
    expect(b.equationUnicode).toContain('MnO₄⁻');
  });

  it('chooses the basic medium above pH 7 and says why', async () => {
    const r = await post({ oxidant: { from: 'MnO4-', to: 'MnO2' }, reductant: { from: 'Fe2+', to: 'Fe(OH)3' }, pH: 7.5 });
    const b = r.json();
    expect(b.medium).toBe('base');
    expect(b.mediumReason).toMatch(/7\.5/);
    expect(b.terms.find((t: { species: string }) => t.species === 'OH-')).toMatchObject({ side: 'reactant', coefficient: 5 });
  });

  it('balances any reaction given as species (0 electrons for non-redox)', async () => {
    const r = await post({ reactants: ['CaCO3', 'H+'], products: ['Ca2+', 'CO2', 'H2O'] });
    expect(r.statusCode).toBe(200);
    expect(r.json()).toMatchObject({ equation: 'CaCO3 + 2H+ -> Ca2+ + CO2 + H2O', electrons: 0 });
  });

  it.each([
    // textbook: 2KMnO4 + 16HCl → 2KCl + 2MnCl2 + 8H2O + 5Cl2, 10 electrons (2 Mn +7 → +2)
    [['KMnO4', 'HCl'], ['KCl', 'MnCl2', 'H2O', 'Cl2'], '2KMnO4 + 16HCl -> 2KCl + 2MnCl2 + 8H2O + 5Cl2', 10],
    // hydrogen sulfide and chlorine: H2S + Cl2 → S + 2HCl, 2 electrons
    [['H2S', 'Cl2'], ['S', 'HCl'], 'H2S + Cl2 -> S + 2HCl', 2],
    [['Fe2+', 'MnO4-', 'H+'], ['Fe3+', 'Mn2+', 'H2O'], '5Fe2+ + MnO4- + 8H+ -> 5Fe3+ + Mn2+ + 4H2O', 5],
    // one element in two states: NH4NO3 → N2O + 2H2O (N −3 → +1 and +5 → +1, 4 electrons) and
    // the ammonium dichromate decomposition (2 Cr +6 → +3, 2 N −3 → 0: 6); textbook, from memory
    [['NH4NO3'], ['N2O', 'H2O'], 'NH4NO3 -> N2O + 2H2O', 4],
    [['(NH4)2Cr2O7'], ['Cr2O3', 'N2', 'H2O'], '(NH4)2Cr2O7 -> Cr2O3 + N2 + 4H2O', 6],
  ])('a redox reaction given as species counts its electrons from the oxidation states: %j', async (reactants, products, equation, electrons) => {
    const r = await post({ reactants, products });
    expect(r.statusCode, r.body).toBe(200);
    const b = r.json();
    expect(b).toMatchObject({ equation, electrons });
    const lost = b.oxidationStateChanges.reduce((n: number, c: { electronsLost: string }) => n + Number(c.electronsLost), 0);
    const gained = b.oxidationStateChanges.reduce((n: number, c: { electronsGained: string }) => n + Number(c.electronsGained), 0);
    expect([lost, gained]).toEqual([electrons, electrons]);
  });

  it('a half-reaction given with e- keeps its e- coefficient; open oxidation states give null with the reason', async () => {
    const half = (await post({ reactants: ['MnO4-', 'H+', 'e-'], products: ['Mn2+', 'H2O'] })).json();
    expect(half.electrons).toBe(5);
    const pyrite = (await post({ reactants: ['FeS2', 'O2', 'H2O'], products: ['Fe(OH)3', 'SO4^2-', 'H+'] })).json();
    expect(pyrite.electrons).toBeNull();
    expect(pyrite.electronsNote).toMatch(/Fe and S in FeS2/);
    expect(pyrite.oxidationStateChanges).toBeNull();
    // a non-redox reaction has no changes (an empty list, not null)
    const neutral = (await post({ reactants: ['CaCO3', 'HCl'], products: ['CaCl2', 'CO2', 'H2O'] })).json();
    expect(neutral.electrons).toBe(0);
    expect(neutral.oxidationStateChanges).toEqual([]);
  });

  it('a pH or medium sent with a species balance is named as not used, not dropped silently', async () => {
    const b = (await post({ reactants: ['H2', 'O2'], products: ['H2O'], pH: 7, medium: 'base' })).json();
    expect(b.equation).toBe('2H2 + O2 -> 2H2O');
    expect(b.notes.join(' ')).toMatch(/pH 7 and medium base not used.*species listed/);
    const plain = (await post({ reactants: ['H2', 'O2'], products: ['H2O'] })).json();
    expect(plain.notes).toBeUndefined();
  });

  it('"Fe2++" is refused as ambiguous (400 at the digit), not read as a dimer Fe2 with charge 2+', async () => {
    const r = await post({ reactants: ['Fe2++'], products: ['Fe3+', 'e-'] });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe('FORMULA_AMBIGUOUS_CHARGE');
    expect(p.errors[0].pointer).toBe('/reactants/0');
    expect(p.detail).toMatch(/"Fe2\+" or "Fe\^2\+"/);
  });

  it('a species on both sides is refused (422) naming both fields, not balanced as "NaCl -> NaCl"', async () => {
    const r = await post({ reactants: ['NaCl'], products: ['NaCl'] });
    expect(r.statusCode).toBe(422);
    expect(r.json().errors.map((e: { pointer: string }) => e.pointer)).toEqual(['/reactants/0', '/products/0']);
    const water = await post({ reactants: ['Fe2+', 'O2', 'H2O'], products: ['Fe(OH)3', 'H2O', 'H+'] });
    expect(water.statusCode).toBe(422);
    expect(water.json().detail).toMatch(/H2O is among both the reactants and the products/);
  });

  it.each([
    // a fractional hydrate (hemihydrate): refused, the formula in whole numbers suggested
    [['CaSO4·0.5H2O'], 'FORMULA_SYNTAX', /fractional hydrate multipliers are not supported.*\(CaSO4\)2·H2O/],
    // a hydroxo ion written without ^: both readings named
    [['FeOH2+'], 'FORMULA_AMBIGUOUS_CHARGE', /"FeOH\^2\+" \(count 1, charge 2\+\) or "FeOH2\^\+" \(count 2, charge 1\+\)/],
  ] as [string[], string, RegExp][])('%j is a 400 naming the field: %s', async (products, code, detail) => {
    const r = await post({ reactants: ['Fe3+', 'H2O'], products: [...products, 'H+'] });
    expect(r.statusCode).toBe(400);
    const p = r.json();
    expect(p.code).toBe(code);
    expect(p.errors[0].pointer).toBe('/products/0');
    expect(p.detail).toMatch(detail);
  });

  it('Fe3+ + H2O → FeOH^2+ + H+ written with ^ balances with no electrons (first hydrolysis of iron(III); Stumm & Morgan, from memory)', async () => {
    const r = await post({ reactants: ['Fe3+', 'H2O'], products: ['FeOH^2+', 'H+'] });
    expect(r.statusCode, r.body).toBe(200);
    expect(r.json()).toMatchObject({ equation: 'Fe3+ + H2O -> FeOH^2+ + H+', electrons: 0 });
  });

  it('a malformed formula is a 400 naming the field and the position', async () => {
    const r = await post({ reactants: ['Fe(OH3'], products: ['Fe3+'] });
    expect(r.statusCode).toBe(400);
    expect(r.headers['content-type']).toMatch(/problem\+json/);
    const p = r.json();
    expect(p.errors[0].pointer).toBe('/reactants/0');
    expect(typeof p.position).toBe('number');
    expect(p.caret).toContain('^');
  });

  it('an unknown element is a 400', async () => {
    const r = await post({ reactants: ['Xx2'], products: ['Xx'] });
    expect(r.statusCode).toBe(400);
    expect(r.json().code).toBe('FORMULA_UNKNOWN_ELEMENT');
  });

  it('species that cannot balance are a 422 saying why', async () => {
    const r = await post({ reactants: ['Fe2+'], products: ['Mn2+'] });
    expect(r.statusCode).toBe(422);
    expect(r.json().code).toBe('BALANCE_IMPOSSIBLE');
  });

  it('a non-unique balance is a 422 listing the independent sub-reactions', async () => {
    const r = await post({ reactants: ['H2', 'O2'], products: ['H2O', 'H2O2'] });
    expect(r.statusCode).toBe(422);
    const p = r.json();
    expect(p.code).toBe('BALANCE_NOT_UNIQUE');
    expect(p.params.subReactions.length).toBeGreaterThanOrEqual(2);
  });

  it('unknown fields and wrong types are refused with pointers', async () => {
    const r = await post({ reactants: 'Fe2+', prodcts: ['Fe3+'] });
    expect(r.statusCode).toBe(400);
    const pointers = r.json().errors.map((e: { pointer: string }) => e.pointer);
    expect(pointers).toEqual(expect.arrayContaining(['/reactants', '/prodcts']));
  });

  it('mixing both forms is refused', async () => {
    const r = await post({ reactants: ['H2'], products: ['H2'], oxidant: { from: 'MnO4-', to: 'MnO2' } });
    expect(r.statusCode).toBe(400);
  });
});
