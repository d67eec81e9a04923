import { describe, expect, it } from 'vitest';
import { DomainError } from '../../../src/core/errors.js';
import { parseFormula } from '../../../src/chemistry/formula/parse.js';
import { ELEMENT_SYMBOLS, IUPAC_ELEMENTS } from '../../../src/chemistry/formula/tokens.js';

function fails(text: string, options?: { elements?: ReadonlySet<string> }): DomainError {
  try {
    parseFormula(text, options);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error(`expected ${JSON.stringify(text)} to fail`);
}

describe('element set', () => {
  it('holds the 118 IUPAC symbols, each once', () => {
    expect(ELEMENT_SYMBOLS.length).toBe(118);
    expect(IUPAC_ELEMENTS.size).toBe(118);
    // spot checks at the ends of the periods
    expect(ELEMENT_SYMBOLS[0]).toBe('H');
    expect(ELEMENT_SYMBOLS[25]).toBe('Fe');
    expect(ELEMENT_SYMBOLS[117]).toBe('Og');
  });
});

describe('parseFormula: edge cases', () => {
  it.each([
    // [text, composition, charge, phase, text kept (ASCII: Unicode forms are written out in plain text)]
    ['e-', {}, -1, null, 'e-'],
    ['e^-', {}, -1, null, 'e-'],
    ['H+', { H: 1 }, 1, null, 'H+'],
    ['OH-', { O: 1, H: 1 }, -1, null, 'OH-'],
    ['  Fe2+  ', { Fe: 1 }, 2, null, 'Fe2+'],
    ['Fe+++', { Fe: 1 }, 3, null, 'Fe+++'],
    ['SO4--', { S: 1, O: 4 }, -2, null, 'SO4--'],
    ['H₂O', { H: 2, O: 1 }, 0, null, 'H2O'],
    ['SO₄²⁻', { S: 1, O: 4 }, -2, null, 'SO4^2-'], // "SO42-" would be ambiguous: the ^ form
    ['MnO₄-', { Mn: 1, O: 4 }, -1, null, 'MnO4-'],
    ['MnO4−', { Mn: 1, O: 4 }, -1, null, 'MnO4-'], // U+2212 minus
    ['Fe³⁺', { Fe: 1 }, 3, null, 'Fe3+'],
    ['O₂⁻', { O: 2 }, -1, null, 'O2^-'], // superoxide: "O2-" reads as the oxide ion O^2-
    // a subscript is always a count; the plain text needs ^ where plain digits would read as a charge
    ['Fe₂+', { Fe: 2 }, 1, null, 'Fe2^+'], // "Fe2+" is Fe^2+
    ['Fe₂++', { Fe: 2 }, 2, null, 'Fe2^2+'], // "Fe2++" is ambiguous
    ['Hg₂²⁺', { Hg: 2 }, 2, null, 'Hg2^2+'], // mercury(I), a dimer
    ['Hg₂++ (aq)', { Hg: 2 }, 2, 'aq', 'Hg2^2+ (aq)'],
    ['Fe2+ (aq)', { Fe: 1 }, 2, 'aq', 'Fe2+ (aq)'],
    ['CuSO4 · 5H2O', { Cu: 1, S: 1, O: 9, H: 10 }, 0, null, 'CuSO4 . 5H2O'],
  ] as const)('%s', (text, composition, charge, phase, kept) => {
    const s = parseFormula(text);
    expect(s.composition).toEqual(composition);
    expect(s.charge).toBe(charge);
    expect(s.phase).toBe(phase);
    expect(s.text).toBe(kept);
    // the plain text reads back as the same species
    expect(parseFormula(kept)).toEqual(s);
  });
});

describe('parseFormula: the notation', () => {
  it.each([
    // ^ form
    ['MnO4^-', { Mn: 1, O: 4 }, -1, null],
    ['MnO4^2-', { Mn: 1, O: 4 }, -2, null],
    ['SO4^2-', { S: 1, O: 4 }, -2, null],
    ['Fe^3+', { Fe: 1 }, 3, null],
    ['NH4^+', { N: 1, H: 4 }, 1, null],
    ['HPO4^2-', { H: 1, P: 1, O: 4 }, -2, null],
    // one trailing sign: the digits are a count
    ['MnO4-', { Mn: 1, O: 4 }, -1, null],
    ['NH4+', { N: 1, H: 4 }, 1, null],
    ['HCO3-', { H: 1, C: 1, O: 3 }, -1, null],
    ['ClO2-', { Cl: 1, O: 2 }, -1, null],
    ['NO3-', { N: 1, O: 3 }, -1, null],
    ['H2PO4-', { H: 2, P: 1, O: 4 }, -1, null],
    ['Fe(OH)2+', { Fe: 1, O: 2, H: 2 }, 1, null],
    // the hydroxo and halo complexes written with ^ (either reading), and the counts the OH/halide rule leaves alone
    ['FeOH^2+', { Fe: 1, O: 1, H: 1 }, 2, null],
    ['FeOH2^+', { Fe: 1, O: 1, H: 2 }, 1, null],
    ['FeOH+', { Fe: 1, O: 1, H: 1 }, 1, null],
    ['AuCl4-', { Au: 1, Cl: 4 }, -1, null],
    ['NH2-', { N: 1, H: 2 }, -1, null],
    ['H2PO4-', { H: 2, P: 1, O: 4 }, -1, null],
    ['ClO2-', { Cl: 1, O: 2 }, -1, null],
    // repeated signs: one digit after a formula of several elements, or after ")", stays a count
    ['SO4--', { S: 1, O: 4 }, -2, null],
    ['Cr2O7--', { Cr: 2, O: 7 }, -2, null],
    ['HPO4--', { H: 1, P: 1, O: 4 }, -2, null],
    ['Fe(OH)2++', { Fe: 1, O: 2, H: 2 }, 2, null],
    ['Fe++', { Fe: 1 }, 2, null],
    ['Fe+++(aq)', { Fe: 1 }, 3, 'aq'],
    ['Fe2^2+', { Fe: 2 }, 2, null],
    ['Hg2^2+', { Hg: 2 }, 2, null],
    ['O2^2-', { O: 2 }, -2, null], // peroxide
    ['OCl-', { O: 1, Cl: 1 }, -1, null],
    // monatomic ion: one symbol, one digit, a sign: the digit is the charge
    ['Fe2+', { Fe: 1 }, 2, null],
    ['Fe3+', { Fe: 1 }, 3, null],
    ['Mn2+', { Mn: 1 }, 2, null],
    ['Ca2+', { Ca: 1 }, 2, null],
    ['S2-', { S: 1 }, -2, null],
    ['Cl-', { Cl: 1 }, -1, null],
    // neutral, groups, hydrates, phases
    ['H2O', { H: 2, O: 1 }, 0, null],
    ['O3', { O: 3 }, 0, null],
    ['Fe(OH)3', { Fe: 1, O: 3, H: 3 }, 0, null],
    ['Fe(OH)3(s)', { Fe: 1, O: 3, H: 3 }, 0, 's'],
    // the solid labels of thermodynamic tables (crystalline, amorphous; NBS tables notation) read as (s)
    ['Fe(OH)3(cr)', { Fe: 1, O: 3, H: 3 }, 0, 's'],
    ['Fe(OH)3(am)', { Fe: 1, O: 3, H: 3 }, 0, 's'],
    ['Fe2O3 (cr)', { Fe: 2, O: 3 }, 0, 's'],
    ['Fe2(SO4)3', { Fe: 2, S: 3, O: 12 }, 0, null],
    ['K4[Fe(CN)6]', { K: 4, Fe: 1, C: 6, N: 6 }, 0, null],
    ['K4Fe(CN)6', { K: 4, Fe: 1, C: 6, N: 6 }, 0, null],
    ['Ca3(PO4)2', { Ca: 3, P: 2, O: 8 }, 0, null],
    ['[Fe(H2O)6]^3+', { Fe: 1, H: 12, O: 6 }, 3, null],
    ['CuSO4·5H2O', { Cu: 1, S: 1, O: 9, H: 10 }, 0, null],
    ['Ca(OCl)2.4H2O', { Ca: 1, O: 6, Cl: 2, H: 8 }, 0, null],
    ['Na2CO3*10H2O', { Na: 2, C: 1, O: 13, H: 20 }, 0, null],
    ['Fe2+(aq)', { Fe: 1 }, 2, 'aq'],
    ['MnO4-(aq)', { Mn: 1, O: 4 }, -1, 'aq'],
    ['O2(g)', { O: 2 }, 0, 'g'],
    ['H2O(l)', { H: 2, O: 1 }, 0, 'l'],
    ['SO4^2-(aq)', { S: 1, O: 4 }, -2, 'aq'],
    ['Co', { Co: 1 }, 0, null],
    ['CO', { C: 1, O: 1 }, 0, null],
    ['Cs+', { Cs: 1 }, 1, null],
  ] as const)('%s', (text, composition, charge, phase) => {
    const s = parseFormula(text);
    expect(s.composition).toEqual(composition);
    expect(s.charge).toBe(charge);
    expect(s.phase).toBe(phase);
  });
});

describe('parseFormula: oxidation states in Roman numerals are refused, not read as iodine and vanadium', () => {
  it.each([
    // [text, position of "(", the fix the message must offer]
    ['Fe(II)', 2, '"Fe2+" or "Fe^2+"'],
    ['Fe(III)', 2, '"Fe3+" or "Fe^3+"'],
    ['Cu(I)', 2, '"Cu+" or "Cu^+"'],
    ['Mn(IV)', 2, 'the species as a formula'],
    // arsenic(III) is H3AsO3 in water: no bare As3+ is offered
    ['As(III)', 2, '"H3AsO3" for arsenic(III)'],
    ['Cr(VI)', 2, 'the species as a formula'],
    ['Fe(II)(aq)', 2, '"Fe2+" or "Fe^2+"'],
  ])('%s', (text, position, fix) => {
    const e = fails(text);
    expect(e.code).toBe('FORMULA_SYNTAX');
    expect(e.position).toBe(position);
    expect(e.detail).toMatch(/oxidation state in Roman numerals/);
    expect(e.detail).toContain(fix);
  });
  it.each([
    // [text, position of the numeral, the atoms it would have read as, the fix offered]
    ['FeIII', 2, 'FeI3', '"Fe3+" or "Fe^3+"'],
    ['FeII', 2, 'FeI2', '"Fe2+" or "Fe^2+"'],
    ['MnVII', 2, 'MnVI2', '"MnO4-" for manganese(VII)'],
    ['MnIV', 2, 'MnIV', 'the species as a formula'],
    ['AsIII', 2, 'AsI3', '"H3AsO3" for arsenic(III)'],
    ['AsV', 2, 'AsV', '"H2AsO4-" for arsenic(V)'],
    ['FeII(aq)', 2, 'FeI2', '"Fe2+" or "Fe^2+"'],
  ])('without parentheses too: %s', (text, position, read, fix) => {
    const e = fails(text);
    expect(e.code).toBe('FORMULA_SYNTAX');
    expect(e.position).toBe(position);
    expect(e.detail).toMatch(/oxidation state in Roman numerals/);
    expect(e.detail).toContain(`as atoms it would be ${read}`);
    expect(e.detail).toContain(fix);
  });
  it.each([
    ['CuI', { Cu: 1, I: 1 }],
    ['AgI', { Ag: 1, I: 1 }],
    ['FeI2', { Fe: 1, I: 2 }],
    ['CH3COOH', { C: 2, H: 4, O: 2 }],
    ['Ca(IO3)2', { Ca: 1, I: 2, O: 6 }],
    ['Fe(I2)', { Fe: 1, I: 2 }],
    ['KI', { K: 1, I: 1 }],
    ['V2O5', { V: 2, O: 5 }],
  ])('groups that only start with I or V still read: %s', (text, composition) => {
    expect(parseFormula(text).composition).toEqual(composition);
  });
});

describe('parseFormula: errors carry the formula and the position of the bad character', () => {
  it.each([
    // [text, code, position, words the detail must contain]
    ['', 'FORMULA_EMPTY', 0, 'empty'],
    ['   ', 'FORMULA_EMPTY', 0, 'empty'],
    ['Fe(OH3', 'FORMULA_SYNTAX', 6, 'a closing parenthesis ")" is missing at the end for the one opened at position 2'],
    ['Fe(OH]3', 'FORMULA_SYNTAX', 5, 'does not close the "(" opened at position 2'],
    ['Fe)', 'FORMULA_SYNTAX', 2, 'no matching opening bracket'],
    ['()', 'FORMULA_SYNTAX', 1, 'empty'],
    ['Fe#', 'FORMULA_SYNTAX', 2, 'the character "#" at position 2'],
    ['fe2+', 'FORMULA_SYNTAX', 0, 'did you mean "Fe"?'],
    ['H0', 'FORMULA_SYNTAX', 1, 'count at position 1 is 0'],
    ['H02', 'FORMULA_SYNTAX', 1, 'starts with 0'],
    ['2H2O', 'FORMULA_SYNTAX', 0, 'coefficients belong in an equation'],
    ['Mn O4', 'FORMULA_SYNTAX', 2, 'space at position 2'],
    // a number after the sign: the fix is spelled with the formula typed
    ['Fe+2', 'FORMULA_SYNTAX', 3, 'the number "2" at position 3 follows the sign; the number of a charge is written before its sign: write "Fe2+" or "Fe^2+"'],
    ['Fe^+2', 'FORMULA_SYNTAX', 4, 'write "Fe2+" or "Fe^2+"'],
    ['Fe-3', 'FORMULA_SYNTAX', 3, 'write "Fe3-" or "Fe^3-"'],
    ['Fe+2(aq)', 'FORMULA_SYNTAX', 3, 'write "Fe2+(aq)" or "Fe^2+(aq)"'],
    ['SO4-2', 'FORMULA_SYNTAX', 4, 'write "SO4^2-" or "SO4--"'],
    ['MnO4-2', 'FORMULA_SYNTAX', 5, 'write "MnO4^2-" or "MnO4--"'],
    ['Fe2+3', 'FORMULA_SYNTAX', 4, 'follows the charge "2+"; a charge is written once, its number before the sign: write "Fe2+" or "Fe^2+" for charge 2+, "Fe3+" or "Fe^3+" for charge 3+'],
    ['Fe^2+3', 'FORMULA_SYNTAX', 5, 'follows the charge "^2+"'],
    ['Fe+2Cl', 'FORMULA_SYNTAX', 3, 'the number of a charge is written before its sign (e.g.'],
    // a charge in brackets: not an empty bracket
    ['Fe(2+)', 'FORMULA_SYNTAX', 2, 'the parentheses at position 2 hold a charge, "2+", and no element symbol; a charge is written after the formula without brackets: write "Fe2+" or "Fe^2+"'],
    ['Fe(+2)', 'FORMULA_SYNTAX', 2, 'write "Fe2+" or "Fe^2+"'],
    ['Fe(3+)(aq)', 'FORMULA_SYNTAX', 2, 'write "Fe3+(aq)" or "Fe^3+(aq)"'],
    ['SO4(2-)', 'FORMULA_SYNTAX', 3, 'write "SO4^2-" or "SO4--"'],
    ['MnO4(-)', 'FORMULA_SYNTAX', 4, 'write "MnO4-" or "MnO4^-"'],
    ['Fe[3+]', 'FORMULA_SYNTAX', 2, 'the square brackets at position 2 hold a charge'],
    ['Fe(2)', 'FORMULA_SYNTAX', 2, 'hold only "2", with no element symbol'],
    ['Fe()', 'FORMULA_SYNTAX', 3, 'the parenthesis opened at position 2 is empty'],
    ['Fe(s)2', 'FORMULA_SYNTAX', 5, 'the phase label comes last'],
    ['Fe^', 'FORMULA_SYNTAX', 3, 'after "^" at position 2 a charge is expected'],
    ['Fe^2', 'FORMULA_SYNTAX', 4, 'after "^" at position 2 a charge is expected'],
    ['H2O.', 'FORMULA_SYNTAX', 4, 'after the hydrate dot'],
    ['SO4+-', 'FORMULA_SYNTAX', 4, 'mixes + and -'],
    ['Fe2+Cl', 'FORMULA_SYNTAX', 4, 'follows the charge'],
    ['Xx2', 'FORMULA_UNKNOWN_ELEMENT', 0, 'the symbol "Xx" at position 0 is not an element symbol'],
    ['CL2', 'FORMULA_UNKNOWN_ELEMENT', 1, 'did you mean "Cl"'],
    ['NaQ', 'FORMULA_UNKNOWN_ELEMENT', 2, '"Q"'],
    // a hydrate multiplier written as a decimal: refused, with the formula in whole numbers (hemihydrate CaSO4·0.5H2O is (CaSO4)2·H2O)
    ['CaSO4·0.5H2O', 'FORMULA_SYNTAX', 6, 'fractional hydrate multipliers are not supported; write it in whole numbers, e.g. "(CaSO4)2·H2O"'],
    ['CaSO4.0.5H2O', 'FORMULA_SYNTAX', 6, '"(CaSO4)2.H2O"'],
    ['CaSO4·1.5H2O', 'FORMULA_SYNTAX', 6, 'the hydrate multiplier "1.5" at position 6 is a fraction; fractional hydrate multipliers are not supported; write it in whole numbers, e.g. "(CaSO4)2·3H2O"'],
    ['MgSO4·0.25H2O', 'FORMULA_SYNTAX', 6, '"(MgSO4)4·H2O"'],
    ['Fe(OH)3(c)', 'FORMULA_SYNTAX', 7, '"(c)" at position 7 is not a phase label this service reads; the phase labels are (s), (l), (g) and (aq), with (cr) and (am) read as (s)'],
    ['SO42-', 'FORMULA_AMBIGUOUS_CHARGE', 2, '"SO4^2-" (count 4, charge 2-) or "SO42^-" (count 42, charge 1-)'],
    ['MnO42-', 'FORMULA_AMBIGUOUS_CHARGE', 3, '"MnO4^2-"'],
    ['HPO42-', 'FORMULA_AMBIGUOUS_CHARGE', 3, '"HPO4^2-"'],
    ['S22-', 'FORMULA_AMBIGUOUS_CHARGE', 1, '"S2^2-"'],
    ['[Fe(H2O)6]3+', 'FORMULA_AMBIGUOUS_CHARGE', 10, '"[Fe(H2O)6]^3+"'],
    // a metal with one OH or halide, then 2 or 3 and one sign: FeOH^2+ (hydroxo-iron(III)) or FeOH2^+?
    // (both kinds of ion exist: AlF^2+ and AlF2^+, FeCl^2+ and FeCl2^+; Stumm & Morgan, from memory)
    ['FeOH2+', 'FORMULA_AMBIGUOUS_CHARGE', 4, '"FeOH^2+" (count 1, charge 2+) or "FeOH2^+" (count 2, charge 1+)'],
    ['AlOH2+', 'FORMULA_AMBIGUOUS_CHARGE', 4, '"AlOH^2+" (count 1, charge 2+) or "AlOH2^+" (count 2, charge 1+)'],
    ['AlF2+', 'FORMULA_AMBIGUOUS_CHARGE', 3, '"AlF^2+" (count 1, charge 2+) or "AlF2^+" (count 2, charge 1+)'],
    ['FeCl2+', 'FORMULA_AMBIGUOUS_CHARGE', 4, 'the digit "2" at position 4 before the sign can be read two ways'],
    ['CuCl2-', 'FORMULA_AMBIGUOUS_CHARGE', 4, '"CuCl2^-" (count 2, charge 1-) or "CuCl^2-" (count 1, charge 2-)'],
    // digits before a repeated sign where a single sign would not read them as a plain count
    ['Fe2++', 'FORMULA_AMBIGUOUS_CHARGE', 2, 'the digit "2" at position 2 before the repeated sign "++" can be read two ways'],
    ['Fe2++', 'FORMULA_AMBIGUOUS_CHARGE', 2, 'Write "Fe2+" or "Fe^2+" for count 1 and charge 2+; "Fe2^2+" for count 2 and charge 2+'],
    ['Fe2++(aq)', 'FORMULA_AMBIGUOUS_CHARGE', 2, 'Write "Fe2+(aq)" or "Fe^2+(aq)" for count 1 and charge 2+; "Fe2^2+(aq)" for count 2 and charge 2+'],
    ['Fe2+++', 'FORMULA_AMBIGUOUS_CHARGE', 2, '"Fe2^3+" for count 2 and charge 3+'],
    ['Hg2++', 'FORMULA_AMBIGUOUS_CHARGE', 2, '"Hg2^2+" for count 2 and charge 2+'],
    ['O2--', 'FORMULA_AMBIGUOUS_CHARGE', 1, '"O2-" or "O^2-" for count 1 and charge 2-; "O2^2-" for count 2 and charge 2-'],
    ['S2--', 'FORMULA_AMBIGUOUS_CHARGE', 1, '"S2^2-" for count 2 and charge 2-'],
    ['SO42--', 'FORMULA_AMBIGUOUS_CHARGE', 2, 'Write "SO4^2-" or "SO4--" for count 4 and charge 2-; "SO42^2-" for count 42 and charge 2-'],
    ['Fe22++', 'FORMULA_AMBIGUOUS_CHARGE', 2, '"Fe2^2+" for count 2 and charge 2+; "Fe22^2+" for count 22 and charge 2+'],
    ['[Fe(H2O)6]3++', 'FORMULA_AMBIGUOUS_CHARGE', 10, '"[Fe(H2O)6]^3+" or "[Fe(H2O)6]+++" for count 1 and charge 3+; "[Fe(H2O)6]3^2+" for count 3 and charge 2+'],
  ] as const)('%j → %s at %i', (text, code, position, words) => {
    const e = fails(text);
    expect(e.code).toBe(code);
    expect(e.position).toBe(position);
    expect(e.text).toBe(text.trim());
    expect(e.detail).toContain(words);
    if (text.trim() !== '') expect(e.detail).toContain(`"${text.trim()}"`);
  });

  it('names both readings of an ambiguous charge in params and suggests the ^ form', () => {
    const e = fails('SO42-');
    expect(e.params['readings']).toEqual(['SO4^2-', 'SO42^-']);
    expect(e.detail).toContain('Write the charge with ^');
  });

  it.each([
    ['Fe2++', ['Fe^2+', 'Fe2^2+'], [{ Fe: 1 }, { Fe: 2 }], [2, 2]],
    ['Hg2++', ['Hg^2+', 'Hg2^2+'], [{ Hg: 1 }, { Hg: 2 }], [2, 2]],
    ['O2--', ['O^2-', 'O2^2-'], [{ O: 1 }, { O: 2 }], [-2, -2]], // oxide or peroxide
    ['SO42--', ['SO4^2-', 'SO42^2-'], [{ S: 1, O: 4 }, { S: 1, O: 42 }], [-2, -2]],
    ['[Fe(H2O)6]3++', ['[Fe(H2O)6]^3+', '[Fe(H2O)6]3^2+'], [{ Fe: 1, H: 12, O: 6 }, { Fe: 3, H: 36, O: 18 }], [3, 2]],
  ] as const)('%s names its readings in params, each of which reads back as the species it describes', (text, readings, compositions, charges) => {
    const e = fails(text);
    expect(e.params['readings']).toEqual(readings);
    readings.forEach((r, i) => {
      const s = parseFormula(r);
      expect(s.composition).toEqual(compositions[i]);
      expect(s.charge).toBe(charges[i]);
    });
  });

  it.each(['Fe+2', 'Fe^+2', 'Fe-3', 'Fe+2(aq)', 'SO4-2', 'MnO4-2', 'Fe2+3', 'Fe(2+)', 'Fe(+2)', 'Fe(3+)(aq)', 'SO4(2-)', 'MnO4(-)', 'Fe[3+]', 'Fe2++', 'Fe2++(aq)', 'O2--', 'SO42--', 'Fe22++', '[Fe(H2O)6]3++'])(
    '%s: every spelling the message offers reads without error and keeps the elements typed',
    (text) => {
      const e = fails(text);
      const offered = [...e.detail.slice(e.detail.search(/[Ww]rite /)).matchAll(/"([^"]+)"/g)].map((m) => m[1]!);
      expect(offered.length).toBeGreaterThan(0);
      const typed = new Set(text.match(/[A-Z][a-z]?/g));
      for (const o of offered) {
        const s = parseFormula(o);
        expect(new Set(Object.keys(s.composition))).toEqual(typed);
        expect(s.charge).not.toBe(0);
      }
    },
  );

  it('a repeated sign after one element and one digit is refused for every element and digit, the ^ form read as a count', () => {
    for (const symbol of ['H', 'O', 'S', 'Fe', 'Mn', 'Hg', 'Cu']) {
      for (let d = 1; d <= 9; d++) {
        for (const signs of ['++', '--', '+++']) {
          expect(fails(`${symbol}${d}${signs}`).code).toBe('FORMULA_AMBIGUOUS_CHARGE');
          const s = parseFormula(`${symbol}${d}^${signs.length}${signs[0]}`);
          expect(s.composition).toEqual({ [symbol]: d });
          expect(s.charge).toBe(signs.length * (signs[0] === '+' ? 1 : -1));
        }
      }
    }
  });

  it('draws a caret under the bad character', () => {
    expect(fails('Fe(OH]3').caret()).toBe('Fe(OH]3\n     ^');
  });

  it('refuses an element that is not in the table passed by the caller', () => {
    const elements = new Set(['H', 'O', 'Fe']);
    expect(parseFormula('Fe(OH)3', { elements }).composition).toEqual({ Fe: 1, O: 3, H: 3 });
    const e = fails('MnO4-', { elements });
    expect(e.code).toBe('FORMULA_UNKNOWN_ELEMENT');
    expect(e.position).toBe(0);
    expect(e.detail).toContain('atomic-weights table in use has no entry');
  });
});
