/** Request bodies the benchmark sends: an invented sample, real chemistry. */
export function benchBodies() {
  return {
    cell: {
      oxidant: { from: 'MnO4-', to: 'MnO2' },
      reductant: { from: 'Mn2+', to: 'MnO2' },
      pH: 7.2,
      temperatureC: 12,
      concentrations: { 'MnO4-': { value: 1.5, unit: 'mg/L' }, 'Mn2+': { value: 0.4, unit: 'mg/L' } },
      tdsMgPerL: 300,
    },
    dose: {
      oxidant: 'potassium-permanganate',
      flow: { value: 4500, unit: 'm3/d' },
      sample: {
        pH: 7.2,
        temperatureC: 12,
        iron: { value: 1.8, unit: 'mg/L' },
        manganese: { value: 0.45, unit: 'mg/L' },
        alkalinity: { value: 180, unit: 'mg/L' },
        tds: { value: 420, unit: 'mg/L' },
      },
      backgroundDemand: { value: 0.2, unit: 'mg/L' },
      targetResidual: { value: 0.05, unit: 'mg/L' },
      product: { strength: { value: 2, unit: '% w/v' } },
      contactTime: { value: 20, unit: 'min' },
    },
  };
}
