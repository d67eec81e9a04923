/**
 * Site values of E° in a dose request (options.potentialOverrides): which form of the couple a
 * value is for, a formula that does not read, and a value no reaction of the dose uses.
 */
import { describe, expect, it } from 'vitest';
import { computeDose, parseDoseRequest, type DoseResult } from '../../src/dosing/index.js';
import { isDomainError } from '../../src/core/errors.js';
import { context } from './fixture.js';

const dose = (body: unknown): DoseResult => computeDose(parseDoseRequest(body), context);
const hypochlorite = (pH: number, overrides: unknown[]) => ({
  oxidant: 'sodium-hypochlorite',
  flow: { value: 4500, unit: 'm3/d' },
  sample: { pH, temperatureC: 25, iron: { value: 1.8, unit: 'mg/L' } },
  product: { strength: { value: 12.5, unit: '% w/v' } },
  options: { potentialOverrides: overrides },
});
/** RT ln10 / F at 298.15 K from the CODATA 2018 R and F (V). */
const S25 = (8.314462618 * 298.15 * Math.LN10) / 96485.33212;

describe('options.potentialOverrides', () => {
  it('a formula that does not read is a 400 naming the override and field, not a value dropped', () => {
    let caught: unknown;
    try {
      dose(hypochlorite(7.5, [{ from: 'Fe(OH3', to: 'Fe2+', standardPotentialV: 0.95, source: 'site study (invented)' }]));
    } catch (e) {
      caught = e;
    }
    expect(isDomainError(caught)).toBe(true);
    if (!isDomainError(caught)) return;
    expect(caught.fields.map((f) => f.pointer)).toEqual(['/options/potentialOverrides/0/from']);
    expect(caught.fields[0]!.message).toMatch(/Fe\(OH3.*parenthesis/);
  });

  it('a base-medium handbook value sent without a medium is refused, naming the override\'s medium, not read as the H+ form', () => {
    // OCl- + H2O + 2e- = Cl- + 2OH-, 0.89 V (Bratsch 1989, base medium): read as the H+ form it would be off by
    // (1/1)·s·pKw ≈ 0.83 V (m/n = 2 OH- per 2 e-; s = RT ln10/F, pKw ≈ 14.0 at 25 °C)
    let caught: unknown;
    try {
      dose(hypochlorite(8, [{ from: 'OCl-', to: 'Cl-', standardPotentialV: 0.89, source: 'Bratsch 1989, base medium' }]));
    } catch (e) {
      caught = e;
    }
    expect(isDomainError(caught) && caught.code).toBe('SITE_VALUE_MEDIUM_UNCLEAR');
    if (!isDomainError(caught)) return;
    expect(caught.fields.map((f) => f.pointer)).toEqual(['/options/potentialOverrides/0/medium']);
    expect(caught.detail).toMatch(/off by about 0\.8\d\d V/);
    expect(Math.abs((caught.params as { acidFormV: number; baseFormV: number }).acidFormV - (caught.params as { baseFormV: number }).baseFormV - S25 * 14)).toBeLessThan(0.01);
    // with the medium said, it is used, carried to no other form at pH 8
    const r = dose(hypochlorite(8, [{ from: 'OCl-', to: 'Cl-', standardPotentialV: 0.89, source: 'Bratsch 1989, base medium', medium: 'base' }]));
    expect(r.feasibility.every((f) => f.oxidantCouple.usedValue === 'override')).toBe(true);
    // an acid-form value near the acid-form E° needs no medium
    expect(() => dose(hypochlorite(8, [{ from: 'OCl-', to: 'Cl-', standardPotentialV: 1.7, source: 'site value (invented)' }]))).not.toThrow();
  });

  it('a value for a couple no reaction uses at this pH is named in a warning with the couples used (HOCl/Cl- at pH 7.5, where OCl-/Cl- is used)', () => {
    const r = dose(hypochlorite(7.5, [{ from: 'HOCl', to: 'Cl-', standardPotentialV: 1.49, source: 'site value (invented)' }]));
    const f = r.flags.filter((x) => x.code === 'POTENTIAL_OVERRIDE_NOT_USED');
    expect(f).toHaveLength(1);
    expect(f[0]!.severity).toBe('warning');
    expect(f[0]!.message).toMatch(/HOCl\/Cl-.*potentialOverrides\/0.*not used.*OCl-\/Cl-/);
    expect(r.feasibility[0]!.oxidantCouple.usedValue).not.toBe('override');
    // at pH 6.5 the same value is used and nothing is flagged
    const acid = dose(hypochlorite(6.5, [{ from: 'HOCl', to: 'Cl-', standardPotentialV: 1.49, source: 'site value (invented)' }]));
    expect(acid.flags.some((x) => x.code === 'POTENTIAL_OVERRIDE_NOT_USED')).toBe(false);
    expect(acid.feasibility[0]!.oxidantCouple.usedValue).toBe('override');
    expect(acid.feasibility[0]!.oxidantCouple.standardPotentialV).toBe(1.49);
  });

  it('a value is for the couple written with H+ unless it says base, and is carried to the base form through Kw', () => {
    // OCl- + 2H+ + 2e- → Cl- + H2O (acid form, m = 2, n = 2) to OCl- + H2O + 2e- → Cl- + 2OH-: E° − s·pKw
    const pKw = 4470.99 / 298.15 - 6.0875 + 0.01706 * 298.15; // Harned & Owen 1958, the Kw row used
    const acidForm = dose(hypochlorite(8, [{ from: 'OCl-', to: 'Cl-', standardPotentialV: 1.7, source: 'site value (invented)' }]));
    expect(acidForm.feasibility[0]!.oxidantCouple.usedValue).toBe('override');
    expect(acidForm.feasibility[0]!.oxidantCouple.standardPotentialV).toBeCloseTo(1.7 - S25 * pKw, 9);
    // said in a flag and in the couple's siteValue, not only in a note
    expect(acidForm.feasibility[0]!.oxidantCouple.siteValue).toMatchObject({ valueV: 1.7, medium: 'acid' });
    const carried = acidForm.flags.filter((f) => f.code === 'POTENTIAL_OVERRIDE_CARRIED');
    expect(carried).toHaveLength(1);
    expect(carried[0]!.message).toMatch(/written with H\+ \(acid\); at pH 8 .* carried .* medium: "base"/);
    const baseForm = dose(hypochlorite(8, [{ from: 'OCl-', to: 'Cl-', standardPotentialV: 0.877, source: 'site value (invented)', medium: 'base' }]));
    expect(baseForm.feasibility[0]!.oxidantCouple.standardPotentialV).toBe(0.877);
    expect(baseForm.feasibility[0]!.oxidantCouple.siteValue).toMatchObject({ medium: 'base', carriedV: null });
    expect(baseForm.flags.some((f) => f.code === 'POTENTIAL_OVERRIDE_CARRIED')).toBe(false);
    // the tables' disagreement is still said, and that the site value was used instead
    const disagree = acidForm.flags.find((f) => f.code === 'POTENTIAL_TABLES_DISAGREE' && /OCl-/.test(f.message));
    expect(disagree?.message).toMatch(/site value .* was used instead/);
  });
});
