/**
 * The reference couple of the potentials table: the standard hydrogen electrode, E°(H+/H2) = 0
 * at all temperatures by definition (IUPAC Gold Book, "standard hydrogen electrode",
 * https://doi.org/10.1351/goldbook.S05917). Every other E° is relative to it, so the row must
 * give exactly 0 at every temperature and take no part in deriving any other row.
 */
import { describe, expect, it } from 'vitest';
import { loadReferenceTables } from '../../src/reference/load.js';
import { buildLedger } from '../../src/chemistry/thermo/ledger.js';
import { standardPotential } from '../../src/chemistry/thermo/derive.js';
import { consistencyReport } from '../../src/chemistry/thermo/consistency.js';

const tables = loadReferenceTables();
const ledger = buildLedger(tables);

describe('the hydrogen reference couple H+/H2(g)', () => {
  it('is a row of its own, stored as published ("0"), with its IUPAC source resolved', () => {
    const row = tables.potentials.find((r) => r.id === 'iupac-h-h2');
    expect(row).toMatchObject({ halfReaction: '2H+ + 2e- = H2(g)', electrons: 2, medium: 'acid', potentialV: '0', dEdTmVPerK: '0' });
    const source = tables.sources.find((s) => s.id === row?.source);
    expect(source).toMatchObject({ kind: 'standard', access: 'read' });
    expect(source?.title).toContain('standard hydrogen electrode');
  });

  it.each([
    ['2H+ + 2e- = H2(g)', 25],
    ['2H+ + 2e- = H2(g)', 5],
    ['H+ + e- = 1/2 H2(g)', 25],
    ['H2(g) = 2H+ + 2e-', 40],
  ] as const)('%s at %i °C: E° = 0 V (zero at all temperatures), tabled, no value held at 25 °C', (equation, temperatureC) => {
    const r = standardPotential(equation, ledger, { temperatureC, basis: 'acid' });
    expect(r.usedValue).toBe('tabled');
    expect(r.standardPotentialV).toBe(0);
    expect(r.standardPotentialAtTemperatureV).toBe(0);
    expect(r.derivation.map((d) => d.rowId)).toEqual(['iupac-h-h2']);
    expect(r.notes.filter((n) => /held/.test(n))).toEqual([]);
  });

  it('the reduction of water in base follows through Kw: −0.828 V (CRC electrochemical series prints −0.8277 V; from memory)', () => {
    const r = standardPotential('2H2O + 2e- = H2(g) + 2OH-', ledger);
    expect(r.usedValue).toBe('derived');
    expect(r.derivation.map((d) => d.rowId)).toContain('iupac-h-h2');
    expect(Math.abs(r.standardPotentialV - -0.8277)).toBeLessThan(0.001);
  });

  it('dissolved H2 (written without (g)) is another species, with another E°: still not derivable, not given 0', () => {
    let code: unknown = null;
    try {
      standardPotential('2H+ + 2e- = H2', ledger);
    } catch (e) {
      code = (e as { code?: unknown }).code;
    }
    expect(code).toBe('POTENTIAL_NOT_DERIVABLE');
  });

  it('takes part in no derivation of another row: the consistency report lists it as underivable and no entry uses it', () => {
    const report = consistencyReport(ledger);
    expect(report.underivable).toContain('iupac-h-h2');
    for (const e of report.entries) {
      const used = [e.derivation, ...e.otherDerivations.map((o) => o.derivation)].flat().map((d) => d.rowId);
      expect(used, e.rowId).not.toContain('iupac-h-h2');
    }
  });
});
