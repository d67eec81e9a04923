import { DomainError } from '../core/errors.js';

/**
 * Physical constants the water-side physics needs, passed in by the caller
 * (the shell reads them from tables/constants.json). No function in src/water
 * holds a value of R or F of its own.
 */
export interface SourcedNumber {
  readonly value: number;
  /** Source id or citation the value comes from (e.g. "codata-2018"). */
  readonly source: string;
}

export interface PhysicalConstants {
  /** Molar gas constant R, J/(mol·K). */
  readonly gasConstant: SourcedNumber;
  /** Faraday constant F, C/mol. */
  readonly faraday: SourcedNumber;
  /** 0 °C in kelvin (273.15 K, exact by definition of the Celsius scale). */
  readonly zeroCelsiusK: SourcedNumber;
}

/** Lowest and highest temperature (°C) the water-side relations accept: liquid water at 1 atm. */
export const LIQUID_WATER_RANGE_C = { min: 0, max: 100 } as const;

function checkPositive(n: SourcedNumber, pointer: string, name: string): void {
  if (!Number.isFinite(n.value) || n.value <= 0) {
    throw new DomainError('CONDITIONS_OUT_OF_RANGE', {
      detail: `The constant ${name} must be a positive finite number; got ${String(n.value)}.`,
      fields: [{ pointer, message: `${name} must be a positive finite number` }],
    });
  }
}

/** Throws CONDITIONS_OUT_OF_RANGE if a constant is missing or not positive. */
export function checkConstants(c: PhysicalConstants): void {
  checkPositive(c.gasConstant, '/constants/gasConstant/value', 'R');
  checkPositive(c.faraday, '/constants/faraday/value', 'F');
  checkPositive(c.zeroCelsiusK, '/constants/zeroCelsiusK/value', '0 °C in K');
}

/**
 * Throws CONDITIONS_OUT_OF_RANGE unless 0 ≤ temperatureC ≤ 100 (liquid water at 1 atm).
 * `pointer` names the field in the caller's input.
 */
export function checkTemperatureC(temperatureC: number, pointer = '/temperatureC'): void {
  if (!Number.isFinite(temperatureC) || temperatureC < LIQUID_WATER_RANGE_C.min || temperatureC > LIQUID_WATER_RANGE_C.max) {
    throw new DomainError('CONDITIONS_OUT_OF_RANGE', {
      detail: `Temperature ${String(temperatureC)} °C is outside liquid water; accepted: ${LIQUID_WATER_RANGE_C.min} to ${LIQUID_WATER_RANGE_C.max} °C.`,
      params: { temperatureC, min: LIQUID_WATER_RANGE_C.min, max: LIQUID_WATER_RANGE_C.max },
      fields: [{ pointer, message: `temperature must be between ${LIQUID_WATER_RANGE_C.min} and ${LIQUID_WATER_RANGE_C.max} °C` }],
    });
  }
}

/** Throws QUANTITY_OUT_OF_RANGE unless 0 ≤ pH ≤ 14. */
export function checkPH(pH: number, pointer = '/pH'): void {
  if (!Number.isFinite(pH) || pH < 0 || pH > 14) {
    throw new DomainError('QUANTITY_OUT_OF_RANGE', {
      detail: `pH ${String(pH)} is outside the accepted range 0 to 14.`,
      params: { pH, min: 0, max: 14 },
      fields: [{ pointer, message: 'pH must be between 0 and 14' }],
    });
  }
}

/** Absolute temperature, K. */
export function kelvin(temperatureC: number, constants: PhysicalConstants): number {
  return temperatureC + constants.zeroCelsiusK.value;
}

/** RT/F at the temperature, V. */
export function thermalVoltageV(temperatureC: number, constants: PhysicalConstants): number {
  return (constants.gasConstant.value * kelvin(temperatureC, constants)) / constants.faraday.value;
}

/**
 * The Nernst slope RT ln10 / F (V per decade, per electron), computed from R and F at the
 * actual temperature — 0.05916 V at 25 °C, not a fixed 0.0591.
 */
export function nernstSlopeV(temperatureC: number, constants: PhysicalConstants): number {
  return thermalVoltageV(temperatureC, constants) * Math.LN10;
}
