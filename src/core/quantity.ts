import { DomainError } from './errors.js';
import { Dec, dec, type Dec as DecT } from './decimal.js';

/**
 * Quantities cross the HTTP boundary as { value, unit } with a closed list of units per kind.
 * Conversion factors are exact by definition (the US gallon is 231 in³ = 3.785411784 L;
 * the avoirdupois pound is 0.45359237 kg; both from NIST SP 811, 2008, appendix B).
 */
export interface Quantity {
  readonly value: number;
  readonly unit: string;
}

/** Factor to the base unit of each kind, as exact decimal text. */
export const UNIT_FACTORS = {
  /** base mg/L */
  concentration: { 'mg/L': '1', 'ug/L': '0.001', 'µg/L': '0.001', 'g/m3': '1', 'g/L': '1000', ppm: '1', ppb: '0.001' },
  /** base m3/d */
  flow: {
    'm3/d': '1',
    'm3/h': '24',
    'L/s': '86.4',
    'L/min': '1.44',
    'ML/d': '1000',
    MGD: '3785.411784',
    gpm: '5.45099296896',
    'gal/d': '0.003785411784',
  },
  /** base L */
  volume: { L: '1', mL: '0.001', m3: '1000', gal: '3.785411784', ML: '1000000' },
  /** base kg/d */
  massRate: { 'kg/d': '1', 'kg/h': '24', 'g/h': '0.024', 'lb/d': '0.45359237' },
  /** base kg */
  mass: { kg: '1', g: '0.001', lb: '0.45359237', t: '1000' },
  /** base min */
  time: { s: '0.01666666666666666666666666666666666666667', min: '1', h: '60', d: '1440' },
  /** base kg/L */
  density: { 'kg/L': '1', 'g/mL': '1', 'g/cm3': '1', 'kg/m3': '0.001' },
  /** base L/h (solution feed and pump capacity) */
  solutionRate: { 'L/h': '1', 'mL/min': '0.06', 'L/d': '0.04166666666666666666666666666666666666667', 'gal/d': '0.157725491', 'gal/h': '3.785411784' },
} as const;

export type QuantityKind = keyof typeof UNIT_FACTORS | 'temperature';
export const TEMPERATURE_UNITS = ['°C', 'C', '°F', 'F', 'K'] as const;

export const BASE_UNIT: Record<QuantityKind, string> = {
  concentration: 'mg/L',
  flow: 'm3/d',
  volume: 'L',
  massRate: 'kg/d',
  mass: 'kg',
  time: 'min',
  density: 'kg/L',
  solutionRate: 'L/h',
  temperature: '°C',
};

export function unitsOf(kind: QuantityKind): readonly string[] {
  if (kind === 'temperature') return TEMPERATURE_UNITS;
  return Object.keys(UNIT_FACTORS[kind]);
}

function unknownUnit(kind: QuantityKind, unit: string, pointer: string): DomainError {
  const accepted = unitsOf(kind).join(', ');
  return new DomainError('UNIT_UNKNOWN', {
    detail: `"${unit}" is not a ${kind} unit; accepted: ${accepted}`,
    params: { kind, unit, accepted: unitsOf(kind) },
    fields: [{ pointer: pointer + '/unit', message: `"${unit}" is not a ${kind} unit; accepted: ${accepted}` }],
  });
}

/** Convert to the kind's base unit, exactly (Decimal). `pointer` names the field for errors. */
export function toBaseDec(kind: QuantityKind, q: Quantity, pointer = ''): DecT {
  if (kind === 'temperature') return dec(temperatureToC(q, pointer));
  const table = UNIT_FACTORS[kind] as Record<string, string>;
  const f = table[q.unit];
  if (f === undefined) throw unknownUnit(kind, q.unit, pointer);
  return dec(q.value).times(f);
}

export function toBase(kind: QuantityKind, q: Quantity, pointer = ''): number {
  return toBaseDec(kind, q, pointer).toNumber();
}

/** Convert a base-unit value to another unit of the same kind. */
export function fromBaseDec(kind: Exclude<QuantityKind, 'temperature'>, baseValue: DecT | number, unit: string): DecT {
  const table = UNIT_FACTORS[kind] as Record<string, string>;
  const f = table[unit];
  if (f === undefined) throw unknownUnit(kind, unit, '');
  return dec(baseValue).dividedBy(f);
}

export function isUnitOf(kind: QuantityKind, unit: string): boolean {
  return unitsOf(kind).includes(unit);
}

/** Temperature in °C from °C, °F or K. */
export function temperatureToC(q: Quantity, pointer = ''): number {
  switch (q.unit) {
    case '°C':
    case 'C':
      return q.value;
    case '°F':
    case 'F':
      return new Dec(q.value).minus(32).times(5).dividedBy(9).toNumber();
    case 'K':
      return new Dec(q.value).minus('273.15').toNumber();
    default:
      throw unknownUnit('temperature', q.unit, pointer);
  }
}

export function cToF(temperatureC: number): number {
  return new Dec(temperatureC).times(9).dividedBy(5).plus(32).toNumber();
}
