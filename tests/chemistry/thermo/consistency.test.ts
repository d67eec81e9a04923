/**
 * The consistency report of the repository tables: every tabled couple that can be derived a
 * second way, with the discrepancy; known disagreements (shared/README §3) must show.
 */
import { describe, expect, it } from 'vitest';
import { consistencyReport } from '../../../src/chemistry/thermo/consistency.js';
import { buildLedger } from '../../../src/chemistry/thermo/ledger.js';
import { loadTables } from '../../../src/reference/load.js';
import { redox, tables } from './small-tables.js';

const report = consistencyReport(buildLedger(loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria'])));
const entry = (id: string) => {
  const e = report.entries.find((x) => x.rowId === id);
  if (!e) throw new Error(`no consistency entry for ${id}`);
  return e;
};

describe('consistency report, small table', () => {
  it('a table that agrees with itself is not flagged; one that does not is', () => {
    const ok = consistencyReport(
      buildLedger(
        tables([
          redox('a', 'MnO4- + 4H+ + 3e- = MnO2(s) + 2H2O', 3, '1.70'),
          redox('b', 'MnO2(s) + 4H+ + 2e- = Mn2+ + 2H2O', 2, '1.22'),
          redox('c', 'MnO4- + 8H+ + 5e- = Mn2+ + 4H2O', 5, '1.508'),
        ]),
      ),
    );
    expect(ok.entries.map((e) => [e.rowId, e.flagged])).toEqual([
      ['a', false],
      ['b', false],
      ['c', false],
    ]);
    expect(ok.entries.every((e) => Math.abs(e.discrepancyMV) < 0.5)).toBe(true);
  });

  it('a row is never derived from itself or from a row stating the same reaction', () => {
    const r = consistencyReport(buildLedger(tables([redox('a', 'Fe3+ + e- = Fe2+', 1, '0.771'), redox('b', '2Fe3+ + 2e- = 2Fe2+', 2, '0.770', { source: 'src-b' })])));
    expect(r.entries).toEqual([]);
    expect([...r.underivable].sort()).toEqual(['a', 'b']);
    expect(r.duplicates[0]!.spreadMV).toBeCloseTo(1, 9);
  });
});

describe('consistency report of the repository tables (shared/README §3)', () => {
  it('CRC MnO4-/MnO2 (acid) 1.679 vs 1.696 derived from the same handbook 1.507 and 1.224', () => {
    const e = entry('crc-mno4-mno2-acid');
    expect(e.tabledV).toBe(1.679);
    expect(e.derivedV).toBeCloseTo((5 * 1.507 - 2 * 1.224) / 3, 12);
    expect(e.discrepancyMV).toBeCloseTo(-16.7, 1);
    expect(e.flagged).toBe(true);
    expect(e.derivation.map((d) => [d.rowId, d.coefficient])).toEqual([
      ['crc-mno4-mn2', '1'],
      ['crc-mno2-mn2', '-1'],
    ]);
  });

  it('CRC OCl-/Cl- (base) 0.81 is flagged, and its derivation from HOCl/Cl-, the HOCl pKa and Kw is listed (about 67 mV)', () => {
    const e = entry('crc-ocl-cl-base');
    expect(e.flagged).toBe(true);
    const viaAcid = e.otherDerivations.find((o) => o.derivation.some((d) => d.rowId === 'morris-hocl'));
    expect(viaAcid!.derivation.map((d) => d.rowId).sort()).toEqual(['crc-hocl-cl', 'harned-owen-kw', 'morris-hocl']);
    expect(viaAcid!.derivedV).toBeCloseTo(0.877, 3);
    expect(viaAcid!.discrepancyMV).toBeLessThan(-60);
    expect(e.maxDiscrepancyMV).toBeGreaterThan(60);
  });

  it.each([
    // [row, flagged?] — O2/OH- (base) follows from O2/H2O (acid) and Kw; the CRC H2O2 value does not follow from O2/H2O2 and O2/H2O
    ['crc-o2-oh-base', false],
    ['crc-ho2-oh-base', false],
    ['bratsch-h2o2-h2o', false],
    ['crc-h2o2-h2o', true],
    ['crc-mno4-mn2', true],
  ])('%s flagged: %s', (id, flagged) => {
    expect(entry(id).flagged).toBe(flagged);
  });

  it('lists reactions tabled by several sources with their spread', () => {
    const d = report.duplicates.find((x) => x.rows.some((r) => r.rowId === 'crc-ocl-cl-base'))!;
    expect(d.spreadMV).toBeCloseTo(80, 6);
    const mno2 = report.duplicates.find((x) => x.rows.some((r) => r.rowId === 'crc-mno4-mno2-acid'))!;
    expect(mno2.rows.map((r) => r.valueV).sort()).toEqual([1.679, 1.695, 1.7]);
  });

  it('entries come largest discrepancy first and use a 5 mV threshold', () => {
    expect(report.thresholdMV).toBe(5);
    const sizes = report.entries.map((e) => Math.abs(e.discrepancyMV));
    expect([...sizes].sort((a, b) => b - a)).toEqual(sizes);
    for (const e of report.entries) expect(e.flagged).toBe(Math.abs(e.discrepancyMV) > 5);
  });
});
