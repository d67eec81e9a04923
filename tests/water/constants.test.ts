import { describe, expect, it } from 'vitest';
import { checkPH, checkTemperatureC, kelvin, nernstSlopeV, thermalVoltageV } from '../../src/water/constants.js';
import { DomainError } from '../../src/core/errors.js';
import { CODATA_2018 } from './helpers.js';

describe('temperature and pH guards (edge cases first)', () => {
  it.each([-0.1, 100.1, Number.NaN, Infinity])('temperature %s °C is refused with a pointer', (t) => {
    try {
      checkTemperatureC(t, '/sample/temperatureC');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DomainError);
      expect((e as DomainError).code).toBe('CONDITIONS_OUT_OF_RANGE');
      expect((e as DomainError).fields[0]?.pointer).toBe('/sample/temperatureC');
    }
  });
  it.each([0, 100])('temperature %s °C (the ends of liquid water) is accepted', (t) => {
    expect(() => checkTemperatureC(t)).not.toThrow();
  });
  it.each([-0.01, 14.01, Number.NaN])('pH %s is refused', (pH) => {
    expect(() => checkPH(pH)).toThrow(/pH/);
  });
});

describe('Nernst slope RT ln10 / F from CODATA 2018 R and F', () => {
  // Hand arithmetic: R·T·ln10/F with R = 8.314462618, F = 96485.33212, ln 10 = 2.302585093.
  //   25 °C: 8.314462618 × 298.15 × 2.302585093 / 96485.33212 = 0.0591593 V (textbook 0.05916 V, e.g. Bard & Faulkner 2001, eq. 2.1.45 at 25 °C)
  //    5 °C: × 278.15 → 0.0551909 V
  //   30 °C: × 303.15 → 0.0601515 V
  it.each([
    [25, 0.0591593],
    [5, 0.0551909],
    [30, 0.0601515],
  ])('at %s °C the slope is %s V', (t, expected) => {
    expect(nernstSlopeV(t, CODATA_2018)).toBeCloseTo(expected, 6);
  });
  it('is proportional to the absolute temperature, not a fixed 0.0591', () => {
    const ratio = nernstSlopeV(30, CODATA_2018) / nernstSlopeV(5, CODATA_2018);
    expect(ratio).toBeCloseTo(kelvin(30, CODATA_2018) / kelvin(5, CODATA_2018), 12);
    expect(thermalVoltageV(25, CODATA_2018)).toBeCloseTo(0.025693, 6); // kT/e at 25 °C, 25.693 mV (CODATA-derived)
  });
});
