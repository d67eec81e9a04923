/**
 * The IUPAC/CIAAW 2021 atomic-weight table against an independent reference: the
 * `chemical-elements` npm package (isotope-weighted masses). Each element must agree within
 * the rounding of the printed IUPAC value plus its stated uncertainty, or lie in the IUPAC
 * interval. Two known, documented exceptions (Se, Hg) are checked to stay exceptions.
 */
import { elementsObject } from 'chemical-elements';
import { describe, expect, it } from 'vitest';
import { loadTables } from '../../src/reference/load.js';
import { buildLedger } from '../../src/chemistry/thermo/ledger.js';

const t = loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']);
const rows = t.atomicWeights;

/** Half a unit in the last printed digit: the rounding of an abridged value. */
function halfUnit(text: string): number {
  const decimals = text.includes('.') ? text.split('.')[1]!.length : 0;
  return 0.5 * 10 ** -decimals;
}

/** Elements where chemical-elements 2.3.3 computes a mass outside the IUPAC 2021 value's uncertainty. */
const PACKAGE_DIFFERS: Record<string, string> = {
  // CIAAW revised Se from 78.96(3) to 78.971 ± 0.008 in 2013; the package gives 78.9594.
  Se: 'older isotopic composition',
};

describe('atomic weights vs the chemical-elements package (independent reference)', () => {
  it.each(rows.map((r) => [r.symbol, r] as const))('%s', (symbol, row) => {
    const ref = elementsObject[symbol];
    expect(ref, `${symbol} in chemical-elements`).toBeDefined();
    expect(ref!.number).toBe(row.atomicNumber);
    expect(ref!.name.toLowerCase()).toBe(row.name.toLowerCase());
    const mass = ref!.mass;
    if (mass === null || mass === undefined) throw new Error(`${symbol}: chemical-elements gives no mass`);
    const printed = Number(row.atomicWeight);
    const agrees = row.interval
      ? mass >= Number(row.interval.low) && mass <= Number(row.interval.high)
      : Math.abs(mass - printed) <= (row.abridgedUncertainty !== undefined ? Number(row.abridgedUncertainty) : halfUnit(row.atomicWeight));
    if (symbol in PACKAGE_DIFFERS) {
      expect(agrees, `${symbol}: expected the documented disagreement (${PACKAGE_DIFFERS[symbol]})`).toBe(false);
      expect(Math.abs(mass - printed)).toBeLessThan(0.02);
    } else {
      expect(agrees, `${symbol}: package ${mass} vs IUPAC ${row.atomicWeight} (${row.standardAtomicWeight})`).toBe(true);
    }
  });

  // A conventional value is the interval rounded for everyday use: it lies in the interval
  // widened by the rounding of its last digit (O: 15.999 for [15.99903, 15.99977]).
  it.each(rows.filter((r) => r.interval).map((r) => [r.symbol, r] as const))('%s: the printed value lies in its interval, up to rounding', (_s, row) => {
    const v = Number(row.atomicWeight);
    const h = halfUnit(row.atomicWeight);
    expect(v + h).toBeGreaterThanOrEqual(Number(row.interval!.low));
    expect(v - h).toBeLessThanOrEqual(Number(row.interval!.high));
  });

  it.each(['H', 'Li', 'B', 'C', 'N', 'O', 'F', 'Na', 'Mg', 'Al', 'Si', 'P', 'S', 'Cl', 'K', 'Ca', 'Ti', 'Cr', 'Mn', 'Fe', 'Co', 'Ni', 'Cu', 'Zn', 'As', 'Se', 'Br', 'Sr', 'Ag', 'Cd', 'Sn', 'Sb', 'I', 'Ba', 'Hg', 'Pb', 'U'])(
    'covers the water element %s',
    (symbol) => {
      expect(rows.some((r) => r.symbol === symbol)).toBe(true);
    },
  );

  it('covers every element of every equation in potentials.json and equilibria.json', () => {
    // buildLedger parses every equation with the element set of the atomic-weights table.
    expect(() => buildLedger(t)).not.toThrow();
  });

  it.each([
    // Examples IUPAC prints (brief of this table): conventional or abridged values.
    ['H', '1.008'],
    ['C', '12.011'],
    ['N', '14.007'],
    ['O', '15.999'],
    ['Na', '22.990'],
    ['Cl', '35.45'],
    ['S', '32.06'],
    ['K', '39.098'],
    ['Mn', '54.938'],
    ['Fe', '55.845'],
    ['As', '74.922'],
    ['Br', '79.904'],
    ['Ca', '40.078'],
  ])('%s is printed as %s', (symbol, text) => {
    expect(rows.find((r) => r.symbol === symbol)!.atomicWeight).toBe(text);
  });
});
