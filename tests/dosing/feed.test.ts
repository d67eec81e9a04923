/**
 * Feed arithmetic (src/dosing/feed.ts), computed by hand below. Conversion factors are the exact
 * definitions of NIST SP 811 (2008) appendix B: 1 US gal = 3.785411784 L, 1 lb = 0.45359237 kg.
 */
import { describe, expect, it } from 'vitest';
import { Dec } from '../../src/core/decimal.js';
import { computeFeed, densitySeries, interpolateDensity, LB_PER_MG_L_MG_EXACT, type FeedInput } from '../../src/dosing/feed.js';
import { isDomainError } from '../../src/core/errors.js';
import { context, oxidant } from './fixture.js';

const feed = (o: string, doseMgPerL: number, flowM3PerD: number, extra: Partial<FeedInput> = {}) =>
  computeFeed({
    oxidant: oxidant(o),
    doseMgPerL: new Dec(doseMgPerL),
    flowM3PerD: new Dec(flowM3PerD),
    conversion: context.conversions.get(o)!,
    temperatureC: 12,
    ...extra,
  });

describe('pounds formula', () => {
  it('the exact factor is 3.785411784 / 0.45359237 = 8.345404452 lb per (mg/L · MG); 8.34 is the conventional one', () => {
    expect(LB_PER_MG_L_MG_EXACT.toSignificantDigits(10).toString()).toBe('8.345404452');
  });
});

describe('sodium hypochlorite, 2.0 mg/L as Cl2 at 4000 m3/d, 12.5 trade % (% w/v), 1.17 kg/L, 10 L/h pump, 2000 L stock', () => {
  const r = feed('sodium-hypochlorite', 2.0, 4000, {
    product: { strength: { value: 12.5, unit: '% w/v' }, density: { value: 1.17, unit: 'kg/L' } },
    pump: { ratedCapacity: { value: 10, unit: 'L/h' } },
    stock: { value: 2000, unit: 'L' },
  });
  it('mass rate: 2.0 g/m3 × 4000 m3/d = 8000 g/d = 8.00 kg/d as Cl2; 8.0 / 0.45359237 = 17.637 lb/d', () => {
    expect(r.massRate.value).toBe(8);
    expect(r.massRate.basis).toBe('as Cl2');
    expect(r.massRateUS.value).toBeCloseTo(8 / 0.45359237, 12);
    expect(r.massRateUS.rounded).toBe('17.6');
  });
  it('conventional formula: 2.0 × (4000 / 3785.411784 MGD) × 8.34 = 17.626 lb/d (0.07 % below the exact figure)', () => {
    expect(r.poundsFormula.conventionalLbPerD.value).toBeCloseTo(2 * (4000 / 3785.411784) * 8.34, 10);
  });
  it('NaOCl fed: 8.0 kg/d × 74.439 / 70.90 = 8.399 kg/d (one Cl per NaOCl)', () => {
    expect(r.compoundMassRate.value).toBeCloseTo((8 * (22.99 + 15.999 + 35.45)) / 70.9, 10);
    expect(r.compoundMassRate.rounded).toBe('8.40');
  });
  it('solution: 125 g/L available chlorine; 8000 g/d ÷ 125 g/L = 64 L/d = 2.667 L/h = 44.44 mL/min = 16.91 gal/d', () => {
    expect(r.strength!.gramsPerL.value).toBe(125);
    expect(r.solutionRate!.value).toBeCloseTo(64 / 24, 12);
    expect(r.solutionRate!.rounded).toBe('2.67');
    expect(r.solutionRateMLPerMin!.rounded).toBe('44.4');
    expect(r.solutionRateGalPerD!.value).toBeCloseTo(64 / 3.785411784, 10);
  });
  it('pump at 2.667 / 10 = 26.7 % of rated capacity; 64 L/d × 1.17 = 74.88 kg/d of solution; 2000 L ÷ 64 L/d = 31.25 d → "31.2" (half to even)', () => {
    expect(r.pump!.settingPercent.rounded).toBe('26.7');
    expect(r.productMassRate!.value).toBeCloseTo(74.88, 10);
    expect(r.daysOfSupply!.value).toBeCloseTo(31.25, 12);
    expect(r.daysOfSupply!.rounded).toBe('31.2');
  });
});

describe('hypochlorite strength is never assumed silently', () => {
  it('% w/w without density: the density is interpolated between the tabled rows and a warning says so; 10.7 % w/w lies between 12.5 trade % (12.5 / 1.17 = 10.684 % w/w, 1.17 kg/L) and 15 trade % (15 / 1.21 = 12.397 % w/w, 1.21 kg/L)', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 10.7, unit: '% w/w' } } });
    const [w1, w2] = [12.5 / 1.17, 15 / 1.21];
    const rho = 1.17 + ((1.21 - 1.17) * (10.7 - w1)) / (w2 - w1); // 1.170379
    expect(r.flags.find((f) => f.code === 'DENSITY_INTERPOLATED')?.severity).toBe('warning');
    expect(r.strength!.density!.from).toBe('table');
    expect(r.strength!.density!.value).toBeCloseTo(rho, 12);
    expect(r.strength!.gramsPerL.value).toBeCloseTo(10.7 * rho * 10, 10);
  });
  it('no strength at all: the nominal 12.5 trade % is used with a warning', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000);
    expect(r.flags.map((f) => f.code)).toContain('STRENGTH_DEFAULT_USED');
    expect(r.strength!.gramsPerL.value).toBe(125);
  });
});

describe('potassium permanganate batch solution', () => {
  it('1.0 mg/L at 4000 m3/d, 97 %, 2 % w/w batch in 500 L at 12 °C: 4.0 kg/d KMnO4, 4.124 kg/d product, 20 g/L, 8.333 L/h, 10.31 kg per batch, 2.04 g/100 g water < 4.8 solubility', () => {
    const r = feed('potassium-permanganate', 1.0, 4000, {
      product: { strength: { value: 2, unit: '% w/w' }, purity: { value: 97, unit: '%' } },
      batch: { volume: { value: 500, unit: 'L' } },
    });
    expect(r.massRate.value).toBe(4); // 1.0 g/m3 × 4000 m3/d = 4000 g/d
    expect(r.productMassRate!.value).toBeCloseTo(4 / 0.97, 10); // solid at 97 %
    expect(r.flags.map((f) => f.code)).toContain('DENSITY_ASSUMED_WATER'); // said, not silent
    expect(r.strength!.gramsPerL.value).toBe(20); // 2 % × 1.00 kg/L × 10
    expect(r.solutionRate!.value).toBeCloseTo(4000 / 20 / 24, 10); // 8.333 L/h
    const b = r.batch!;
    expect(b.productKg.value).toBeCloseTo((20 * 500) / 1000 / 0.97, 10); // 10 kg KMnO4 ÷ 0.97
    expect(b.gramsPer100gWater.value).toBeCloseTo((10000 * 100) / (500000 - 10000), 10); // 2.041
    // solubility at 12 °C, linear between 10 °C (4.4) and 20 °C (6.4): 4.4 + 0.2 × 2.0 = 4.8 (Perry's, memory)
    expect(b.solubilityGPer100gWater!.value).toBeCloseTo(4.8, 10);
    expect(b.withinSolubility).toBe(true);
    expect(b.lastsDays!.value).toBeCloseTo(500 / ((4000 / 20 / 24) * 24), 10); // 2.5 d
  });
  it('a 5 % w/w batch at 5 °C needs 5.26 g per 100 g water, above the 3.615 the table gives (2.83 + 0.5 × 1.57): danger', () => {
    const r = feed('potassium-permanganate', 1.0, 4000, {
      product: { strength: { value: 5, unit: '% w/w' }, density: { value: 1.03, unit: 'kg/L' } },
      batch: { volume: { value: 500, unit: 'L' }, temperatureC: 5 },
    });
    expect(r.batch!.gramsPer100gWater.value).toBeCloseTo((5 * 100) / 95, 10);
    expect(r.batch!.solubilityGPer100gWater!.value).toBeCloseTo(3.615, 10);
    expect(r.flags.find((f) => f.code === 'BATCH_ABOVE_SOLUBILITY')?.severity).toBe('danger');
  });
});

describe('pumps', () => {
  it.each([
    // 8000 g/d ÷ 125 g/L ÷ 24 = 2.667 L/h
    [2, 'PUMP_OVER_CAPACITY', 'danger'], // 133 % of 2 L/h
    [100, 'PUMP_SETTING_LOW', 'warning'], // 2.67 % of 100 L/h (below about 5 %, common practice)
  ] as const)('rated %s L/h → %s', (rated, code, severity) => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 12.5, unit: '% w/v' } }, pump: { ratedCapacity: { value: rated, unit: 'L/h' } } });
    expect(r.flags.find((f) => f.code === code)?.severity).toBe(severity);
  });
  it('capacity in gal/d: 24 gal/d = 24 × 3.785411784 / 24 L/h = 3.785 L/h → 2.667 / 3.785 = 70.4 %', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 12.5, unit: '% w/v' } }, pump: { ratedCapacity: { value: 24, unit: 'gal/d' } } });
    expect(r.pump!.settingPercent.value).toBeCloseTo((64 / 24 / 3.785411784) * 100, 8);
  });
});

describe('gases and generated oxidants', () => {
  it('chlorine gas: no solution rate, 8.0 kg/d = 17.6 lb/d for the chlorinator; stock in kg lasts 68 kg ÷ 8 kg/d = 8.5 d', () => {
    const r = feed('chlorine-gas', 2.0, 4000, { stock: { value: 68, unit: 'kg' } });
    expect(r.solutionRate).toBeNull();
    expect(r.massRateUS.rounded).toBe('17.6');
    expect(r.daysOfSupply!.value).toBeCloseTo(8.5, 12);
  });
  it('ozone: 1.5 mg/L × 3000 m3/d = 4.5 kg/d = 187.5 g/h to transfer, labelled as not the generator setting; no solution rate', () => {
    const r = feed('ozone', 1.5, 3000);
    expect(r.solutionRate).toBeNull();
    expect(r.generator!.output.value).toBe(4.5);
    expect(r.generator!.outputGPerH.value).toBe(187.5);
    // the generator must make more than the water takes up: output = transferred ÷ transfer efficiency
    expect(r.generator!.label).toBe('Ozone to transfer (not the generator setting)');
    expect(r.generator!.note).toMatch(/divided by the contactor's measured transfer efficiency/);
    expect(feed('chlorine-dioxide', 1, 1000).generator!.label).toBe('Generator output');
  });
  it('oxygen: mass rate only, with the aeration note', () => {
    const r = feed('oxygen', 0.3, 1000);
    expect(r.solutionRate).toBeNull();
    expect(r.notes.join(' ')).toMatch(/saturation/);
  });
});

/**
 * Density of a product by strength: straight-line interpolation between the rows of
 * tables/oxidants.json that carry a density, never beyond them. Hypochlorite rows: 5, 10, 12.5
 * and 15 trade % at 1.07, 1.14, 1.17 and 1.21 kg/L (White's Handbook 5th ed., from memory;
 * verify). Outside check, read: Powell Fabrication, "Specific Gravity of Sodium Hypochlorite"
 * (powellfab.com technical information) prints 1.168 at 120 g/L for the older tables (0.73 %
 * excess NaOH), about 1.160 for continuous-process bleach (0.2 % excess) and about 1.157 with none.
 */
describe('density by strength (tabled rows, interpolated, never extrapolated)', () => {
  const hypo = oxidant('sodium-hypochlorite');
  const errorOf = (fn: () => unknown) => {
    try {
      fn();
    } catch (e) {
      if (isDomainError(e)) return e;
      throw e;
    }
    throw new Error('no error thrown');
  };

  it('5 % w/w hypochlorite (the reviewer\'s case): 5 trade % is 5 / 1.07 = 4.673 % w/w, 10 trade % is 10 / 1.14 = 8.772 % w/w → 1.0756 kg/L and 53.78 g/L, not 58.5 g/L at the 12.5 trade % density', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 5, unit: '% w/w' } } });
    const [w1, w2] = [5 / 1.07, 10 / 1.14];
    const rho = 1.07 + ((1.14 - 1.07) * (5 - w1)) / (w2 - w1);
    expect(rho).toBeCloseTo(1.07559, 5);
    expect(r.strength!.density!.value).toBeCloseTo(rho, 12);
    expect(r.strength!.gramsPerL.value).toBeCloseTo(5 * rho * 10, 10);
    expect(r.strength!.gramsPerL.rounded).toBe('53.8');
    // 8000 g/d ÷ 53.78 g/L ÷ 24 h/d
    expect(r.solutionRate!.value).toBeCloseTo(8000 / (5 * rho * 10) / 24, 10);
    const flag = r.flags.find((f) => f.code === 'DENSITY_INTERPOLATED')!;
    expect(flag.source).toBe('whites-handbook-5');
    expect(flag.message).toMatch(/interpolated linearly by strength/);
    expect(flag.message).toMatch(/5 trade %.*10 trade %/);
    expect(flag.message).toMatch(/from memory/);
  });

  it('the hypochlorite rows agree with the specific gravity Powell Fabrication prints at 120 g/L (read): 1.14 + 0.03 × 20 / 25 = 1.164, within 1.157 to 1.168', () => {
    const hit = interpolateDensity(densitySeries(hypo), 'gramsPerL', new Dec(120))!;
    expect(hit.density.toNumber()).toBeCloseTo(1.164, 12);
    expect(hit.density.toNumber()).toBeGreaterThanOrEqual(1.157);
    expect(hit.density.toNumber()).toBeLessThanOrEqual(1.168);
  });

  it('the rows rise with strength, each below the 2.0 kg/L the request schema allows', () => {
    for (const id of ['sodium-hypochlorite', 'sodium-permanganate', 'hydrogen-peroxide']) {
      const s = densitySeries(oxidant(id));
      expect(s.length, id).toBeGreaterThanOrEqual(2);
      for (let i = 1; i < s.length; i++) expect(s[i]!.density.greaterThan(s[i - 1]!.density), id).toBe(true);
    }
  });

  it('a tabled strength takes its own row: 12.5 / 1.17 % w/w → 1.17 kg/L exactly', () => {
    const hit = interpolateDensity(densitySeries(hypo), 'massPercent', new Dec(12.5).dividedBy('1.17'))!;
    expect(hit.density.toString()).toBe('1.17');
  });

  it.each([
    ['1 % w/w (diluted on site, below 4.673)', 1],
    ['13 % w/w (above 15 / 1.21 = 12.397)', 13],
  ])('hypochlorite %s without a density is refused naming /product/strength and /product/density', (_n, value) => {
    const e = errorOf(() => feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value, unit: '% w/w' } } }));
    expect(e.code).toBe('DENSITY_NOT_TABLED');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/product/strength', '/product/density']);
    expect(e.detail).toMatch(/4\.673 to 12\.40 % w\/w available chlorine as Cl2/);
    expect(e.detail).toMatch(/not extrapolated/);
  });

  it('with a density given nothing is interpolated: 1 % w/w × 1.01 kg/L × 10 = 10.1 g/L', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 1, unit: '% w/w' }, density: { value: 1.01, unit: 'kg/L' } } });
    expect(r.strength!.gramsPerL.value).toBeCloseTo(10.1, 12);
    expect(r.flags.map((f) => f.code)).not.toContain('DENSITY_INTERPOLATED');
  });

  it('hydrogen peroxide 40 % w/w between the 35 % (1.13) and 50 % (1.20) rows: 1.13 + 0.07 × 5 / 15 = 1.1533 kg/L (CRC concentrative properties, memory: about 1.15 at 20 °C); 10 % w/w is refused', () => {
    const r = feed('hydrogen-peroxide', 1.0, 1000, { product: { strength: { value: 40, unit: '% w/w' } } });
    expect(r.strength!.density!.value).toBeCloseTo(1.13 + (0.07 * 5) / 15, 12);
    expect(r.flags.find((f) => f.code === 'DENSITY_INTERPOLATED')!.source).toBe('crc-97-concentrative');
    expect(errorOf(() => feed('hydrogen-peroxide', 1.0, 1000, { product: { strength: { value: 10, unit: '% w/w' } } })).fields[0]!.pointer).toBe('/product/strength');
    // the 27.5 % technical grade is a tabled row (1.10, CRC, memory); 30 % lies between it and 35 %: 1.10 + 0.03 × 2.5 / 7.5 = 1.11
    expect(feed('hydrogen-peroxide', 1.0, 1000, { product: { strength: { value: 27.5, unit: '% w/w' } } }).strength!.density!.value).toBeCloseTo(1.1, 12);
    expect(feed('hydrogen-peroxide', 1.0, 1000, { product: { strength: { value: 30, unit: '% w/w' } } }).strength!.density!.value).toBeCloseTo(1.11, 12);
  });

  it('% w/v needs no density for the solution rate; inside the rows the density is still given for the mass fed (info): 11 trade % = 110 g/L → 1.14 + 0.03 × 10 / 25 = 1.152 kg/L, 9.549 % w/w', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 11, unit: '% w/v' } } });
    expect(r.strength!.gramsPerL.value).toBe(110);
    expect(r.strength!.density!.value).toBeCloseTo(1.152, 12);
    expect(r.strength!.massFraction!.value).toBeCloseTo(110 / 1152 * 100, 10);
    expect(r.flags.find((f) => f.code === 'DENSITY_INTERPOLATED')!.severity).toBe('info');
    // 64 L/d × 1.152 kg/L
    expect(r.productMassRate!.value).toBeCloseTo((8000 / 110) * 1.152, 10);
  });

  it('% w/v outside the rows: no density and no product mass, as before (the solution rate does not need one)', () => {
    const r = feed('sodium-hypochlorite', 2.0, 4000, { product: { strength: { value: 1, unit: '% w/v' } } });
    expect(r.strength!.density).toBeNull();
    expect(r.productMassRate).toBeNull();
    expect(r.solutionRate!.value).toBeCloseTo(8000 / 10 / 24, 10);
  });
});

describe('feed figures stay numbers', () => {
  it('a batch stronger than its solution can hold is refused naming /product/strength/value: 1200 g/L at 1.0 kg/L', () => {
    expect(() => feed('potassium-permanganate', 1.0, 1000, { product: { strength: { value: 1200, unit: 'g/L' }, density: { value: 1.0, unit: 'kg/L' } }, batch: { volume: { value: 500, unit: 'L' } } })).toThrow(
      expect.objectContaining({ code: 'QUANTITY_OUT_OF_RANGE', fields: [expect.objectContaining({ pointer: '/product/strength/value' })] }),
    );
  });
  it('a dose of practically nothing against a large stock: days of supply beyond a number is null with a note, never Infinity', () => {
    const r = feed('chlorine-gas', 1e-300, 0.001, { stock: { value: 1e7, unit: 'kg' } });
    expect(r.daysOfSupply).toBeNull();
    expect(r.notes.join(' ')).toMatch(/longer than can be stated/);
  });
});

describe('densities: questioned when unlike the table or below water, said when unknown, named when tabled', () => {
  it('12.5 % w/w hypochlorite at 0.9 kg/L is below water: warned, the given value is used', () => {
    const r = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 12.5, unit: '% w/w' }, density: { value: 0.9, unit: 'kg/L' } } });
    expect(r.flags.find((f) => f.code === 'DENSITY_BELOW_WATER')!.severity).toBe('warning');
    expect(r.strength!.density!.value).toBe(0.9);
  });
  it('35 % w/w peroxide given 1.05 kg/L: 7.08 % below the tabled 1.13 kg/L (CRC row) is questioned; 1.12 kg/L is not; 1.00 kg/L is water', () => {
    // |1.05 − 1.13| / 1.13 = 0.0708 > 0.05 (common practice tolerance); |1.12 − 1.13| / 1.13 = 0.009
    const far = feed('hydrogen-peroxide', 1, 1000, { product: { strength: { value: 35, unit: '% w/w' }, density: { value: 1.05, unit: 'kg/L' } } });
    const f = far.flags.find((x) => x.code === 'DENSITY_UNLIKE_TABLE')!;
    expect(f.message).toMatch(/7\.08 % below the 1\.13 kg\/L/);
    const water = feed('hydrogen-peroxide', 1, 1000, { product: { strength: { value: 35, unit: '% w/w' }, density: { value: 1.0, unit: 'kg/L' } } });
    expect(water.flags.map((x) => x.code)).toContain('DENSITY_BELOW_WATER');
    const near = feed('hydrogen-peroxide', 1, 1000, { product: { strength: { value: 35, unit: '% w/w' }, density: { value: 1.12, unit: 'kg/L' } } });
    expect(near.flags.map((x) => x.code)).not.toContain('DENSITY_UNLIKE_TABLE');
  });
  it('12.5 % w/w hypochlorite (above the strongest row, 15 trade % at 12.4 % w/w and 1.21 kg/L) given 1.05 kg/L: a stronger solution cannot be lighter', () => {
    const r = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 12.5, unit: '% w/w' }, density: { value: 1.05, unit: 'kg/L' } } });
    expect(r.flags.find((f) => f.code === 'DENSITY_UNLIKE_TABLE')!.message).toMatch(/below the 1\.21 kg\/L the table gives for 15 trade %/);
    const ok = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 12.5, unit: '% w/w' }, density: { value: 1.22, unit: 'kg/L' } } });
    expect(ok.flags.map((f) => f.code)).not.toContain('DENSITY_UNLIKE_TABLE');
  });
  it('4 trade % hypochlorite (40 g/L, below the 50 to 150 g/L rows): solution rate given, mass figures not, and a flag says why', () => {
    const r = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 4, unit: '% w/v' } } });
    expect(r.solutionRate).not.toBeNull();
    expect(r.strength!.density).toBeNull();
    expect(r.flags.find((f) => f.code === 'DENSITY_UNKNOWN')!.message).toMatch(/outside the 50 to 150 g\/L/);
  });
  it('125 g/L hypochlorite matches the 12.5 trade % row: the tabled density is used and named as such (not interpolated)', () => {
    const r = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 125, unit: 'g/L' } } });
    expect(r.flags.map((f) => f.code)).toContain('DENSITY_DEFAULT_USED');
    expect(r.flags.map((f) => f.code)).not.toContain('DENSITY_INTERPOLATED');
    expect(r.strength!.density!.value).toBe(1.17);
  });
  it('a density from a plant profile is said to come from it', () => {
    const r = feed('sodium-hypochlorite', 2, 1000, { product: { strength: { value: 12.5, unit: '% w/v' }, density: { value: 1.17, unit: 'kg/L' } }, productFromPlant: 'demo-groundwater' });
    expect(r.strength!.density).toMatchObject({ from: 'plant profile', note: 'density from the plant profile "demo-groundwater"' });
  });
});

describe('a solid product without a solution strength: the mass of product to feed', () => {
  it('calcium hypochlorite, 2 mg/L as Cl2 at 1000 m3/d, default 65 % available chlorine (AWWA B300, from memory): 2 kg/d as Cl2 ÷ 0.65 = 3.077 kg/d of granules', () => {
    const r = feed('calcium-hypochlorite', 2, 1000);
    expect(r.productMassRate!.value).toBeCloseTo(2 / 0.65, 9);
    expect(r.flags.map((f) => f.code)).toEqual(expect.arrayContaining(['STRENGTH_NEEDED', 'PURITY_DEFAULT_USED']));
    expect(r.solutionRate).toBeNull();
  });
});
