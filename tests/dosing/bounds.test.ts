/**
 * Plausibility bounds (src/dosing/bounds.ts) through parseDoseRequest and computeDose: a reading
 * a raw drinking-water source cannot hold is refused naming the field, the value, the bound and
 * why; an unusual one gets a "check the lab reading" warning; flow, contact, strength, pump,
 * stock, batch, residual and demand are bounded so that no answer carries Infinity.
 *
 * The bounds are rules of thumb of operating practice (common practice), not published limits;
 * the tests check that they are applied, to the converted value, at the pointer of the request.
 * Unit factors: NIST SP 811 (2008) appendix B (1 US gal = 3.785411784 L, so 1 MGD = 3785.411784 m3/d).
 */
import { describe, expect, it } from 'vitest';
import { computeDose, parseDoseRequest, type DoseResult } from '../../src/dosing/index.js';
import { READING_BOUNDS } from '../../src/dosing/bounds.js';
import { isDomainError, type DomainError } from '../../src/core/errors.js';
import { context } from './fixture.js';

// Invented sample: a groundwater with a little iron.
const base = () => ({
  oxidant: 'sodium-hypochlorite',
  flow: { value: 1000, unit: 'm3/d' },
  sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } as Record<string, unknown>,
  product: { strength: { value: 12.5, unit: '% w/v' } } as Record<string, unknown>,
});
type Body = ReturnType<typeof base> & Record<string, unknown>;

const run = (body: unknown): DoseResult => computeDose(parseDoseRequest(body), context);
const refusal = (body: unknown): DomainError => {
  try {
    run(body);
  } catch (e) {
    if (isDomainError(e)) return e;
    throw e;
  }
  throw new Error('accepted');
};
const pointers = (e: DomainError) => e.fields.map((f) => f.pointer);

describe('readings: refused above the bound, warned in the band below it', () => {
  it.each(READING_BOUNDS.map((b) => [b.field, b.warnAbove, b.refuseAbove, b.flagCode] as const))('%s: warning above %s mg/L, refused above %s mg/L', (field, warn, refuse, flagCode) => {
    const at = (mg: number) => {
      const b = base() as Body;
      b.sample[field] = { value: mg, unit: 'mg/L' };
      return b;
    };
    // just above the refusal bound: refused, naming the field, the value, the bound and why
    const e = refusal(at(refuse * 1.01));
    expect(e.code).toBe('READING_IMPLAUSIBLE');
    expect(pointers(e)).toEqual([`/sample/${field}/value`]);
    expect(e.fields[0]!.message).toContain(`above ${refuse} mg/L`);
    expect(e.fields[0]!.message).toMatch(/common practice|Standard Methods|pure oxygen/);
    // at the bound: accepted, with the warning
    const r = run(at(refuse));
    expect(r.flags.find((f) => f.code === flagCode)?.severity).toBe('warning');
    // below the band: no warning
    expect(run(at(warn)).flags.map((f) => f.code)).not.toContain(flagCode);
  });

  it('the bound applies to the converted value: 150 000 µg/L iron (150 mg/L) is refused, 90 000 µg/L (90 mg/L) gets the warning', () => {
    const b = base() as Body;
    b.sample['iron'] = { value: 150000, unit: 'µg/L' };
    const e = refusal(b);
    expect(e.fields[0]!.message).toMatch(/iron 150 mg\/L as Fe \(given as 150000 µg\/L\) is above 100 mg\/L/);
    b.sample['iron'] = { value: 90000, unit: 'ug/L' };
    expect(run(b).flags.map((f) => f.code)).toContain('IRON_UNUSUALLY_HIGH');
  });

  it('the reviewer\'s iron 1e9 mg/L is refused (it was signed as a 635 000 000 mg/L dose), and 1e308 g/L (beyond a JSON number once converted) too, with the figure said', () => {
    const b = base() as Body;
    b.sample['iron'] = { value: 1e9, unit: 'mg/L' };
    expect(pointers(refusal(b))).toEqual(['/sample/iron/value']);
    b.sample['iron'] = { value: 1e308, unit: 'g/L' };
    const e = refusal(b);
    expect(e.fields[0]!.message).toContain('1.00e+311 mg/L');
    expect(e.params).toMatchObject({ readings: [{ field: 'iron', mgPerL: '1e+311', refusedAboveMgPerL: 100 }] });
  });

  it('two readings out of bounds are both named', () => {
    const b = base() as Body;
    b.sample['iron'] = { value: 500, unit: 'mg/L' };
    b.sample['manganese'] = { value: 60, unit: 'mg/L' };
    expect(pointers(refusal(b))).toEqual(['/sample/iron/value', '/sample/manganese/value']);
  });
});

describe('plant quantities: bounded so that no figure is infinite', () => {
  type Case = [name: string, mutate: (b: Body) => void, pointers: string[]];
  const cases: Case[] = [
    ['flow 1e308 MGD (gave null figures with "Infinity")', (b) => (b.flow = { value: 1e308, unit: 'MGD' }), ['/flow/value']],
    ['flow 1e-300 MGD', (b) => (b.flow = { value: 1e-300, unit: 'MGD' }), ['/flow/value']],
    ['flow 1e-300 MGD with contact volume 1e300 m3 (named /availableMinutes before)', (b) => { b.flow = { value: 1e-300, unit: 'MGD' }; b['contactVolume'] = { value: 1e300, unit: 'm3' }; }, ['/flow/value']],
    ['contact volume 1e300 m3 at 1 MGD: both request fields named', (b) => { b.flow = { value: 1, unit: 'MGD' }; b['contactVolume'] = { value: 1e300, unit: 'm3' }; }, ['/contactVolume/value', '/flow/value']],
    ['contact volume 200 000 m3 at 1000 m3/d = 200 days', (b) => (b['contactVolume'] = { value: 200000, unit: 'm3' }), ['/contactVolume/value', '/flow/value']],
    ['contact time 31 d', (b) => (b['contactTime'] = { value: 31, unit: 'd' }), ['/contactTime/value']],
    ['pump capacity 1e-300 L/h', (b) => (b['pump'] = { ratedCapacity: { value: 1e-300, unit: 'L/h' } }), ['/pump/ratedCapacity/value']],
    ['pump capacity 1e9 L/h', (b) => (b['pump'] = { ratedCapacity: { value: 1e9, unit: 'L/h' } }), ['/pump/ratedCapacity/value']],
    ['stock 1e308 L', (b) => (b['stock'] = { value: 1e308, unit: 'L' }), ['/stock/value']],
    ['stock 1e308 t', (b) => (b['stock'] = { value: 1e308, unit: 't' }), ['/stock/value']],
    ['strength 1e-300 g/L', (b) => (b.product = { strength: { value: 1e-300, unit: 'g/L' } }), ['/product/strength/value']],
    ['strength 0.001 % w/v', (b) => (b.product = { strength: { value: 0.001, unit: '% w/v' } }), ['/product/strength/value']],
    ['purity 1e-300 %', (b) => { b.oxidant = 'calcium-hypochlorite'; b.product = { strength: { value: 10, unit: 'g/L' }, purity: { value: 1e-300, unit: '%' } }; }, ['/product/purity/value']],
    ['batch volume 1e308 m3', (b) => { b.oxidant = 'potassium-permanganate'; b.product = { strength: { value: 2, unit: '% w/w' } }; b['batch'] = { volume: { value: 1e308, unit: 'm3' } }; }, ['/batch/volume/value']],
    ['target residual 1e308 mg/L', (b) => (b['targetResidual'] = { value: 1e308, unit: 'mg/L' }), ['/targetResidual/value']],
    ['background demand 2 g/L', (b) => (b['backgroundDemand'] = { value: 2, unit: 'g/L' }), ['/backgroundDemand/value']],
  ];
  it.each(cases)('%s → QUANTITY_OUT_OF_RANGE naming %j', (_name, mutate, expected) => {
    const b = base() as Body;
    mutate(b);
    const e = refusal(b);
    expect(e.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(pointers(e)).toEqual(expected);
    expect(pointers(e)).not.toContain('/availableMinutes');
  });

  /** Every number in the answer is finite and no rounded text is "Infinity" or "NaN". */
  const allFinite = (x: unknown, path = ''): string[] => {
    if (typeof x === 'number') return Number.isFinite(x) ? [] : [path];
    if (typeof x === 'string') return /^(-?Infinity|NaN)$/.test(x) ? [path] : [];
    if (Array.isArray(x)) return x.flatMap((v, i) => allFinite(v, `${path}/${i}`));
    if (x && typeof x === 'object') return Object.entries(x).flatMap(([k, v]) => allFinite(v, `${path}/${k}`));
    return [];
  };
  it.each([
    ['the largest flow with the strongest readings', { oxidant: 'sodium-hypochlorite', flow: { value: 1e7, unit: 'm3/d' }, contactVolume: { value: 1e5, unit: 'm3' }, sample: { pH: 7, temperatureC: 20, iron: { value: 100, unit: 'mg/L' }, manganese: { value: 50, unit: 'mg/L' }, ammoniaN: { value: 100, unit: 'mg/L' }, sulfide: { value: 100, unit: 'mg/L' }, toc: { value: 200, unit: 'mg/L' }, tds: { value: 70000, unit: 'mg/L' } }, backgroundDemand: { tocFactor: 100 }, targetResidual: { value: 1000, unit: 'mg/L' }, product: { strength: { value: 0.1, unit: 'g/L' } }, pump: { ratedCapacity: { value: 0.001, unit: 'L/h' } }, stock: { value: 1e7, unit: 'L' }, options: { ammoniaRatio: 'practical' } }],
    ['the smallest flow, a trace of iron and the largest stock and batch', { oxidant: 'potassium-permanganate', flow: { value: 0.001, unit: 'm3/d' }, contactVolume: { value: 0.001, unit: 'm3' }, sample: { pH: 7, temperatureC: 20, iron: { value: 1e-300, unit: 'mg/L' } }, product: { strength: { value: 2, unit: '% w/w' }, purity: { value: 10, unit: '%' } }, pump: { ratedCapacity: { value: 1e5, unit: 'L/h' } }, stock: { value: 1e7, unit: 'kg' }, batch: { volume: { value: 1000, unit: 'm3' } } }],
  ])('%s: every figure of the answer is a finite number', (_name, body) => {
    expect(allFinite(JSON.parse(JSON.stringify(run(body))))).toEqual([]);
  });
});

describe('a gas has no product strength', () => {
  it.each([
    ['ozone (generated on site as a gas) with 5 % w/w', 'ozone', { strength: { value: 5, unit: '% w/w' } }, /generated on site and transferred to the water as a gas/],
    ['ozone with g/L', 'ozone', { strength: { value: 10, unit: 'g/L' } }, /as a gas/],
    ['chlorine gas with 100 % w/w', 'chlorine-gas', { strength: { value: 100, unit: '% w/w' } }, /fed as a gas/],
    ['oxygen with 21 % w/w', 'oxygen', { strength: { value: 21, unit: '% w/w' } }, /fed as a gas/],
  ])('%s → VALIDATION_FAILED naming /product/strength', (_n, oxidant, product, why) => {
    const e = refusal({ ...base(), oxidant, product });
    expect(e.code).toBe('VALIDATION_FAILED');
    expect(pointers(e)).toEqual(['/product/strength']);
    expect(e.detail).toMatch(why);
    expect(e.detail).toMatch(/Remove product/);
  });
  it('chlorine dioxide, also generated on site but as a solution, keeps its solution rate from a g/L strength: 1.0 mg/L × 1000 m3/d = 1000 g/d ÷ 2 g/L ÷ 24 = 20.83 L/h', () => {
    const r = run({ ...base(), oxidant: 'chlorine-dioxide', sample: { pH: 7, temperatureC: 15 }, targetResidual: { value: 1.0, unit: 'mg/L' }, product: { strength: { value: 2, unit: 'g/L' } } });
    expect(r.feed!.solutionRate!.value).toBeCloseTo(1000 / 2 / 24, 10);
  });
});
