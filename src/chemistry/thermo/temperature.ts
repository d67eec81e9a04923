/**
 * Standard Gibbs energies away from 25 °C, row by row, as the tables allow:
 *   potential rows   E°(T) = E°(25 °C) + dE°/dT · (T − 298.15 K)  where a table gives dE°/dT
 *   log K rows       log K(T) from the row's expression, else van 't Hoff with its ΔH°
 *   anything else    held at its 25 °C value (ΔG° taken as constant) — and the answer says so.
 * The RT ln10 / F factor is computed from R and F (constants.json) at the actual temperature.
 */
import { DomainError } from '../../core/errors.js';
import { expressionLog10K, nernstSlopeV, type LedgerConstants, type LedgerRow } from './ledger.js';

export type TemperatureBasis = 'standard' | 'dEdT' | 'expression' | 'vant-hoff' | 'held';

export interface RowAtTemperature {
  /** g = −ΔG°/F in V for the row as written, at T. */
  readonly g: number;
  readonly basis: TemperatureBasis;
  /** A sentence for the answer when the row was held at 25 °C or used outside its stated range. */
  readonly note: string | null;
}

/**
 * A dE°/dT or a van 't Hoff ΔH° is the slope at 25 °C: used more than this far from 25 °C (K),
 * the linear correction is an extrapolation and the answer says so.
 */
export const LINEAR_TEMPERATURE_SPAN_K = 25;

/** Lowest and highest temperatures the service accepts (liquid water at about 1 atm). */
export const TEMPERATURE_RANGE_C = { min: 0, max: 100 } as const;

export function checkTemperatureC(temperatureC: number, pointer = '/temperatureC'): void {
  if (!Number.isFinite(temperatureC) || temperatureC < TEMPERATURE_RANGE_C.min || temperatureC > TEMPERATURE_RANGE_C.max) {
    throw new DomainError('CONDITIONS_OUT_OF_RANGE', {
      detail: `The temperature ${String(temperatureC)} °C is outside ${TEMPERATURE_RANGE_C.min}–${TEMPERATURE_RANGE_C.max} °C, the range of liquid water the tables cover; give the water temperature in °C.`,
      params: { temperatureC, min: TEMPERATURE_RANGE_C.min, max: TEMPERATURE_RANGE_C.max },
      fields: [{ pointer, message: `must be between ${TEMPERATURE_RANGE_C.min} and ${TEMPERATURE_RANGE_C.max} °C` }],
    });
  }
}

/** g of a row at temperature T (K). At 298.15 K this is exactly the 25 °C value. */
export function rowAtTemperature(row: LedgerRow, temperatureK: number, constants: LedgerConstants): RowAtTemperature {
  const T25 = constants.T25;
  const atStandard = Math.abs(temperatureK - T25) < 1e-9;
  const k = nernstSlopeV(constants, temperatureK);
  const k25 = nernstSlopeV(constants, T25);
  const tC = (temperatureK - constants.T0).toFixed(1);

  if (row.gExact) {
    const g25 = row.gExact.toNumber();
    if (atStandard) return { g: g25, basis: 'standard', note: null };
    if (row.dEdTVPerK !== null) {
      const n = row.electronCoefficient.neg().toNumber();
      const far = Math.abs(temperatureK - T25) > LINEAR_TEMPERATURE_SPAN_K;
      return {
        g: g25 + n * row.dEdTVPerK * (temperatureK - T25),
        basis: 'dEdT',
        note: far ? `${row.id}: its dE°/dT is the slope at 25 °C; at ${tC} °C, more than ${LINEAR_TEMPERATURE_SPAN_K} K away, the linear correction is an extrapolation (an estimate).` : null,
      };
    }
    return { g: g25, basis: 'held', note: `${row.id}: no dE°/dT in the tables; E° held at its 25 °C value at ${tC} °C.` };
  }

  const logK25 = row.log10K25!;
  if (atStandard) return { g: k25 * logK25, basis: 'standard', note: null };
  if (row.temperature) {
    const t = row.temperature;
    const f = expressionLog10K(t, temperatureK);
    const logK = row.expressionIsAbsolute ? f : logK25 + (f - expressionLog10K(t, T25));
    const tempC = temperatureK - constants.T0;
    const outside =
      (t.validFromC !== undefined && tempC < t.validFromC - 1e-9) || (t.validToC !== undefined && tempC > t.validToC + 1e-9);
    return {
      g: k * logK,
      basis: 'expression',
      note: outside ? `${row.id}: its temperature expression is stated for ${t.validFromC ?? '?'}–${t.validToC ?? '?'} °C; used at ${tC} °C.` : null,
    };
  }
  if (row.deltaHJPerMol !== null) {
    const logK = logK25 - (row.deltaHJPerMol / (constants.R * Math.LN10)) * (1 / temperatureK - 1 / T25);
    const far = Math.abs(temperatureK - T25) > LINEAR_TEMPERATURE_SPAN_K;
    return {
      g: k * logK,
      basis: 'vant-hoff',
      note: far ? `${row.id}: van 't Hoff with its ΔH° at 25 °C taken as constant; at ${tC} °C, more than ${LINEAR_TEMPERATURE_SPAN_K} K away, that is an extrapolation (an estimate).` : null,
    };
  }
  return {
    g: k25 * logK25,
    basis: 'held',
    note: `${row.id}: no temperature dependence in the tables; its ΔG° is held at the 25 °C value at ${tC} °C.`,
  };
}
