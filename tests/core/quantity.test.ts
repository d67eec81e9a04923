/**
 * src/core/quantity.ts: units crossing the HTTP boundary. Each US customary factor is derived
 * here from its definition rather than copied: the US gallon is 231 in³ and the inch 0.0254 m
 * exactly; the avoirdupois pound is 0.45359237 kg exactly (NIST SP 811, 2008 edition,
 * appendix B.8 and B.9). Metric factors follow from the SI prefixes.
 */
import { describe, expect, it } from 'vitest';
import { Dec } from '../../src/core/decimal.js';
import { DomainError } from '../../src/core/errors.js';
import { UNIT_FACTORS, cToF, fromBaseDec, isUnitOf, temperatureToC, toBase, toBaseDec, unitsOf } from '../../src/core/quantity.js';

/** Litres per US gallon from 231 in³ and 0.0254 m per inch: 231 × 0.0254³ × 1000. */
const GALLON_L = new Dec(231).times(new Dec('0.0254').pow(3)).times(1000);
const POUND_KG = new Dec('0.45359237');

const factor = (kind: keyof typeof UNIT_FACTORS, unit: string) => new Dec((UNIT_FACTORS[kind] as Record<string, string>)[unit]!);

describe('US customary factors, derived from NIST SP 811 definitions', () => {
  it('the gallon is 3.785411784 L exactly', () => {
    expect(GALLON_L.toString()).toBe('3.785411784');
    expect(factor('volume', 'gal').equals(GALLON_L)).toBe(true);
  });

  it('flows: MGD, gpm and gal/d in m3/d', () => {
    // 1 MGD = 10^6 gal/d = 10^6 × gallon L / 1000 m3/d
    expect(factor('flow', 'MGD').equals(GALLON_L.times(1e6).dividedBy(1000))).toBe(true);
    // 1 gpm = 1440 gal/d
    expect(factor('flow', 'gpm').equals(GALLON_L.times(1440).dividedBy(1000))).toBe(true);
    expect(factor('flow', 'gal/d').equals(GALLON_L.dividedBy(1000))).toBe(true);
    // common practice: 1 MGD ≈ 694.4 gpm
    expect(factor('flow', 'MGD').dividedBy(factor('flow', 'gpm')).toDecimalPlaces(1).toString()).toBe('694.4');
  });

  it('solution feed: gal/d and gal/h in L/h; mass: lb and lb/d', () => {
    expect(factor('solutionRate', 'gal/h').equals(GALLON_L)).toBe(true);
    expect(factor('solutionRate', 'gal/d').equals(GALLON_L.dividedBy(24))).toBe(true);
    expect(factor('mass', 'lb').equals(POUND_KG)).toBe(true);
    expect(factor('massRate', 'lb/d').equals(POUND_KG)).toBe(true);
  });

  it('the operator rule of thumb "8.34 lb per MG per mg/L" follows from the gallon and the pound', () => {
    // common practice: lb/d = mg/L × MGD × 8.34; here 1 mg/L × 1 MGD in kg/d, then in lb/d
    const kgPerDay = toBaseDec('flow', { value: 1, unit: 'MGD' }).times(1).dividedBy(1000); // m3/d × g/m3 → kg/d
    const lbPerDay = fromBaseDec('massRate', kgPerDay, 'lb/d');
    expect(lbPerDay.toDecimalPlaces(2).toString()).toBe('8.35'); // 8.3454…; the rule's 8.34 is rounded down
    expect(lbPerDay.toNumber()).toBeCloseTo(8.3454, 4);
  });
});

describe('metric factors, from the SI prefixes', () => {
  it('flows in m3/d', () => {
    expect(factor('flow', 'm3/h').toNumber()).toBe(24);
    expect(factor('flow', 'L/s').equals(new Dec(86400).dividedBy(1000))).toBe(true);
    expect(factor('flow', 'L/min').equals(new Dec(1440).dividedBy(1000))).toBe(true);
    expect(factor('flow', 'ML/d').toNumber()).toBe(1000);
  });

  it('concentration, time, density and solution rates', () => {
    expect(factor('concentration', 'g/m3').toNumber()).toBe(1);
    expect(factor('concentration', 'µg/L').equals(factor('concentration', 'ug/L'))).toBe(true);
    expect(factor('time', 'h').toNumber()).toBe(60);
    expect(factor('time', 's').times(60).toDecimalPlaces(30).toNumber()).toBe(1);
    expect(factor('density', 'kg/m3').toNumber()).toBe(0.001);
    expect(factor('solutionRate', 'mL/min').equals(new Dec(60).dividedBy(1000))).toBe(true);
    expect(factor('solutionRate', 'L/d').times(24).toDecimalPlaces(30).toNumber()).toBe(1);
  });

  it('round trips every unit of every kind through the base unit', () => {
    for (const kind of Object.keys(UNIT_FACTORS) as (keyof typeof UNIT_FACTORS)[]) {
      for (const unit of unitsOf(kind)) {
        const base = toBaseDec(kind, { value: 12.5, unit });
        expect(fromBaseDec(kind, base, unit).toDecimalPlaces(20).toNumber()).toBe(12.5);
        expect(isUnitOf(kind, unit)).toBe(true);
      }
    }
  });
});

describe('temperature', () => {
  it('°F and K to °C, and back', () => {
    expect(temperatureToC({ value: 212, unit: '°F' })).toBe(100);
    expect(temperatureToC({ value: 32, unit: 'F' })).toBe(0);
    expect(temperatureToC({ value: 298.15, unit: 'K' })).toBe(25);
    expect(temperatureToC({ value: 12, unit: 'C' })).toBe(12);
    expect(cToF(25)).toBe(77);
    expect(cToF(-40)).toBe(-40);
  });
});

describe('unknown units', () => {
  it('name the field and list the accepted units', () => {
    let caught: unknown;
    try {
      toBase('flow', { value: 1, unit: 'cfs' }, '/flow');
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(DomainError);
    const err = caught as DomainError;
    expect(err.code).toBe('UNIT_UNKNOWN');
    expect(err.fields[0]!.pointer).toBe('/flow/unit');
    expect(err.fields[0]!.message).toContain('MGD');
    expect(() => temperatureToC({ value: 1, unit: 'R' }, '/sample/temperature')).toThrow(/not a temperature unit/);
  });
});
