import { describe, expect, it } from 'vitest';
import { autoRich, looksLikeFormula } from '../../src/sheets/model.js';
import { safetyBoxFromCautions, shortCitation, sourceLabeller } from '../../src/sheets/safety.js';
import { loadReferenceTables } from '../../src/reference/load.js';

describe('looksLikeFormula: which words of free text are typeset', () => {
  it.each([
    // edge cases first: words that must stay plain
    ['', false],
    ['pH', false],
    ['B603', false], // a standard's number (AWWA B603), not boron
    ['SP-02', false],
    ['MGD', false],
    ['NaOCl', false], // nothing to lower or raise
    ['RT/F', false],
    ['H2O', true],
    ['KMnO4', true],
    ['Fe2+', true],
    ['MnO4-', true],
    ['OCl-', true],
    ['3Fe(OH)3(s)', true],
    ['5e-', true],
    ['Ca(OCl)2', true],
  ])('%j → %s', (word, yes) => {
    expect(looksLikeFormula(word)).toBe(yes);
  });
});

describe('autoRich', () => {
  const marked = (s: string) => autoRich(s).map((r) => (r.formula ? `{${r.text}}` : r.text)).join('');
  it.each([
    ['2 % w/w as KMnO4 = 20 g/L KMnO4', '2 % w/w as {KMnO4} = 20 g/L {KMnO4}'],
    ['basic (OH-) because pH 7.2 > 7.', 'basic ({OH-}) because pH 7.2 > 7.'],
    ['(5/3 H+ per Fe in MnO4-)', '(5/3 {H+} per Fe in {MnO4-})'],
    ['AWWA B603, 4000 m3/d', 'AWWA B603, 4000 m³/d'],
    ['Cl2, HOCl and OCl-.', '{Cl2}, HOCl and {OCl-}.'],
    ['The tabled E° of OCl- + H2O + 2e- -> Cl- + 2OH- differs', 'The tabled E° of {OCl-} + {H2O} + {2e-} → {Cl-} + {2OH-} differs'],
  ])('%j', (text, expected) => {
    // the cache returns a copy: what one caller does with the runs does not reach the next
    (autoRich(text) as unknown[]).push('changed by a caller');
    expect(marked(text)).toBe(expected);
  });
});

describe('source labels', () => {
  it.each([
    ['U.S. Environmental Protection Agency, Office of Water (1999). Alternative Disinfectants and Oxidants Guidance Manual.', 'U.S. Environmental Protection Agency, Office of Water 1999'],
    ['W. R. Knocke, J. E. Van Benschoten, M. J. Kearney (1991). Kinetics of manganese and iron oxidation.', 'W. R. Knocke et al. 1991'],
    ['H. S. Harned, B. B. Owen (1958). The Physical Chemistry of Electrolytic Solutions.', 'H. S. Harned and B. B. Owen 1958'],
    ['A note without a year', 'A note without a year'],
  ])('%s', (citation, short) => {
    expect(shortCitation(citation)).toBe(short);
  });

  it('labels ids through the sources of a result and passes other text on', () => {
    const label = sourceLabeller([{ id: 'knocke-1991', citation: 'W. R. Knocke, J. E. Van Benschoten, M. J. Kearney (1991). Kinetics.' }]);
    expect(label('knocke-1991')).toBe('W. R. Knocke et al. 1991');
    expect(label('common practice')).toBe('common practice');
    expect(label('input')).toBe('the request');
  });
});

describe('safetyBoxFromCautions', () => {
  it('sorts caution rows into the four groups, leaves standing notes out and names the gaps', () => {
    const box = safetyBoxFromCautions({
      productName: 'Sodium hypochlorite',
      cautions: [
        { id: 'a', category: 'hazard', text: 'Strong oxidiser.', source: 's1' },
        { id: 'b', category: 'exposure-limit', text: 'Chlorine in air: limit.', source: 's2' },
        { id: 'c', category: 'incompatibility', text: 'Acids release Cl2.', source: 's1' },
        { id: 'd', category: 'standing', text: 'Local rules govern.', source: 's3' },
      ],
      sources: [{ id: 's1', citation: 'Agency (2007). Guide.' }],
    });
    expect(box.heading).toBe('Safety: sodium hypochlorite');
    expect(box.hazards).toHaveLength(2);
    expect(box.incompatibilities).toHaveLength(1);
    expect(box.ppe[0]).toContain('No protective equipment listed');
    expect(box.overdoseSigns[0]).toContain('No overdose signs listed');
    expect(box.sources).toEqual(['Agency 2007', 's2']);
    expect(JSON.stringify(box)).not.toContain('Local rules govern');
  });
});

describe('every oxidant product in the tables has a full safety box', () => {
  const tables = loadReferenceTables();
  const byId = new Map(tables.cautions.map((c) => [c.id, c]));
  it.each(tables.oxidants.map((o) => [o.id, o] as const))('%s: hazards, incompatibilities, protective equipment and overdose signs, each with a source', (_id, oxidant) => {
    const cautions = oxidant.cautions.map((id) => byId.get(id)!);
    expect(cautions.every((c) => c !== undefined && c.source.length > 0)).toBe(true);
    const box = safetyBoxFromCautions({ productName: oxidant.name, cautions });
    for (const group of [box.hazards, box.incompatibilities, box.ppe, box.overdoseSigns]) {
      expect(group.length).toBeGreaterThan(0);
      expect(JSON.stringify(group)).not.toMatch(/listed in the tables for this product/);
    }
  });
});
