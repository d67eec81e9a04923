/**
 * Plant profiles (src/dosing/plant.ts): a residual target belongs to an oxidant, or to the
 * oxidants on its dose basis (the chlorine products share "as Cl2": one OCl- or one Cl2 takes
 * 2 e-, so a residual as Cl2 is the same free chlorine whichever product carries it, White's
 * Handbook 5th ed., memory); a profile's residual is never added to another oxidant's dose.
 * The demo profile (tables/demo/demo-plant.json) and the profiles below are invented.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { computeDose, parseDoseRequest, parsePlantProfile, type DoseResult, type PlantProfile } from '../../src/dosing/index.js';
import { plantProfileWarnings, plantResidualFor } from '../../src/dosing/plant.js';
import { isDomainError, type DomainError } from '../../src/core/errors.js';
import { context } from './fixture.js';

const demo = parsePlantProfile(JSON.parse(readFileSync(new URL('../../tables/demo/demo-plant.json', import.meta.url), 'utf8')));
const sample = { pH: 7.4, temperatureC: 11, iron: { value: 1.2, unit: 'mg/L' } };
const dose = (oxidant: string, plant: PlantProfile, extra: Record<string, unknown> = {}): DoseResult =>
  computeDose(parseDoseRequest({ plantId: plant.id, oxidant, sample, ...extra }), context, { plant });
const residualTerm = (r: DoseResult) => r.terms.find((t) => t.term === 'residual')!;
const flag = (r: DoseResult, code: string) => r.flags.find((f) => f.code === code);

/** An invented profile with the given products and targets. */
const profile = (products: string[], targets: PlantProfile['targets']): PlantProfile =>
  parsePlantProfile({
    id: 'invented-plant',
    name: 'Invented plant',
    invented: true,
    flow: { value: 2500, unit: 'm3/d' },
    contactVolume: { value: 60, unit: 'm3' },
    products: products.map((oxidant) => ({ oxidant, strength: oxidant === 'potassium-permanganate' ? { value: 2, unit: '% w/w' } : { value: 12.5, unit: '% w/v' } })),
    pumps: [],
    targets,
    preferredUnits: 'SI',
  });

describe('the demo plant: residual by oxidant (1.0 mg/L as Cl2 for hypochlorite, 0 as KMnO4 for permanganate)', () => {
  it.each([
    ['sodium-hypochlorite', 1, 'targets.residualByOxidant.sodium-hypochlorite'],
    ['chlorine-gas', 1, 'targets.residualByOxidant.sodium-hypochlorite'],
    ['calcium-hypochlorite', 1, 'targets.residualByOxidant.sodium-hypochlorite'],
    ['potassium-permanganate', 0, 'targets.residualByOxidant.potassium-permanganate'],
    ['sodium-permanganate', 0, 'targets.residualByOxidant.potassium-permanganate'],
  ])('%s takes %s mg/L from %s (its own entry or one on the same basis)', (oxidant, value, entry) => {
    const r = dose(oxidant, demo);
    expect(residualTerm(r).value.value).toBe(value);
    expect(residualTerm(r).reason).toContain(entry);
    expect(r.plant!.fromPlant).toContain('targetResidual');
    expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')).toBeUndefined();
  });

  it.each(['ozone', 'chlorine-dioxide', 'hydrogen-peroxide', 'oxygen'])('%s: no profile residual (it was set for other oxidants), a warning naming targetResidual (the dose is not the one the profile led the operator to expect)', (oxidant) => {
    const r = dose(oxidant, demo);
    expect(residualTerm(r).value.value).toBe(0);
    expect(r.plant!.fromPlant).not.toContain('targetResidual');
    const f = flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toMatch(/set for another oxidant/);
    expect(f.message).toContain('targetResidual');
    expect(f.message).toContain(`targets.residualByOxidant.${oxidant}`);
  });

  it('chlorine dioxide no longer trips the MRDL flag (0.8 mg/L as ClO2, 40 CFR 141.65) with a hypochlorite residual of 1 mg/L', () => {
    const r = dose('chlorine-dioxide', demo);
    expect(r.flags.map((f) => f.code)).not.toContain('RESIDUAL_ABOVE_MRDL');
  });

  it('ozone: the dose is the iron demand only, 1.2 × 47.997 / (2 × 55.845) = 0.5157 mg/L as O3 (IUPAC 2021 atomic weights), not + 1 mg/L', () => {
    expect(dose('ozone', demo).dose.value).toBeCloseTo((1.2 * 3 * 15.999) / (2 * 55.845), 10);
  });

  it('a residual the request gives wins, and no flag is raised', () => {
    const r = dose('ozone', demo, { targetResidual: { value: 0.2, unit: 'mg/L' } });
    expect(residualTerm(r).value.value).toBe(0.2);
    expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')).toBeUndefined();
  });
});

describe('the general targets.residual (no oxidant named)', () => {
  const hypoOnly = profile(['sodium-hypochlorite'], { residual: { value: 0.8, unit: 'mg/L' } });
  const mixed = profile(['sodium-hypochlorite', 'potassium-permanganate'], { residual: { value: 0.8, unit: 'mg/L' } });

  it('a plant whose products all dose as Cl2 (the README tour plant): read as Cl2, applied to the chlorine products', () => {
    for (const ox of ['sodium-hypochlorite', 'chlorine-gas']) {
      const r = dose(ox, hypoOnly);
      expect(residualTerm(r).value.value, ox).toBe(0.8);
      expect(residualTerm(r).reason).toMatch(/targets\.residual, the plant's residual target, read as Cl2/);
    }
  });

  it('the same plant dosing permanganate: not applied (it is a chlorine residual), flag says it was read as Cl2', () => {
    const r = dose('potassium-permanganate', hypoOnly);
    expect(residualTerm(r).value.value).toBe(0);
    expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!.message).toMatch(/read as Cl2, the basis of every product/);
  });

  it('products on two bases and no residualByOxidant: the residual names no oxidant, so it is applied to none', () => {
    for (const ox of ['sodium-hypochlorite', 'potassium-permanganate', 'ozone']) {
      const r = dose(ox, mixed);
      expect(residualTerm(r).value.value, ox).toBe(0);
      expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!.message).toMatch(/names no oxidant and the profile's products dose as Cl2 and KMnO4/);
    }
  });

  it('two entries on one basis that disagree are not chosen between', () => {
    const p = profile(['sodium-hypochlorite'], { residualByOxidant: { 'sodium-hypochlorite': { value: 1, unit: 'mg/L' }, 'chlorine-gas': { value: 0.5, unit: 'mg/L' } } });
    const r = dose('calcium-hypochlorite', p);
    expect(residualTerm(r).value.value).toBe(0);
    expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!.message).toMatch(/residual targets for the oxidants dosed as Cl2 disagree/);
    // two that agree (1000 µg/L = 1 mg/L) are one residual
    const q = profile(['sodium-hypochlorite'], { residualByOxidant: { 'sodium-hypochlorite': { value: 1, unit: 'mg/L' }, 'chlorine-gas': { value: 1000, unit: 'ug/L' } } });
    expect(residualTerm(dose('calcium-hypochlorite', q)).value.value).toBe(1);
  });

  it('a profile without residual targets: no residual, and no plant flag', () => {
    const r = dose('ozone', profile(['sodium-hypochlorite'], {}));
    expect(residualTerm(r).value.value).toBe(0);
    expect(flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')).toBeUndefined();
  });

  it('without the oxidant table an entry is matched by oxidant id only (plantResidualFor with identity bases)', () => {
    expect(plantResidualFor(demo, 'chlorine-gas', (id) => id).value).toBeUndefined();
    expect(plantResidualFor(demo, 'sodium-hypochlorite', (id) => id).value).toEqual({ value: 1.0, unit: 'mg/L' });
  });
});

describe('plant products and bounds', () => {
  const refusal = (fn: () => unknown): DomainError => {
    try {
      fn();
    } catch (e) {
      if (isDomainError(e)) return e;
      throw e;
    }
    throw new Error('accepted');
  };

  it('a profile product of a gas (ozone) stored before profiles refused it is not merged: no solution rate, no refusal', () => {
    // built without parsePlantProfile, as an archive written by an earlier build may hold it
    const p: PlantProfile = { ...profile([], {}), products: [{ oxidant: 'ozone', strength: { value: 12.5, unit: '% w/v' } }] };
    const r = dose('ozone', p);
    expect(r.plant!.fromPlant).not.toContain('product');
    expect(r.feed!.solutionRate).toBeNull();
    expect(r.feed!.generator).not.toBeNull();
  });

  it('a profile strength in % w/w outside the tabled densities is refused at /product/strength, saying the value came from the profile', () => {
    const p = parsePlantProfile({ ...profile([], {}), products: [{ oxidant: 'sodium-hypochlorite', strength: { value: 1, unit: '% w/w' } }] });
    const e = refusal(() => dose('sodium-hypochlorite', p));
    expect(e.code).toBe('DENSITY_NOT_TABLED');
    expect(e.fields[0]).toMatchObject({ pointer: '/product/strength', message: expect.stringContaining('(value from plant profile "invented-plant")') });
  });

  it.each([
    ['flow 1e308 MGD', { flow: { value: 1e308, unit: 'MGD' } }, '/flow/value'],
    ['contact volume of 100 days', { contactVolume: { value: 250000, unit: 'm3' } }, '/contactVolume/value'],
    ['pump of 1e-300 L/h', { pumps: [{ id: 'p1', oxidant: 'sodium-hypochlorite', ratedCapacity: { value: 1e-300, unit: 'L/h' } }] }, '/pumps/0/ratedCapacity/value'],
    ['product stock 1e308 L', { products: [{ oxidant: 'sodium-hypochlorite', strength: { value: 12.5, unit: '% w/v' }, stock: { value: 1e308, unit: 'L' } }] }, '/products/0/stock/value'],
    ['batch volume 1e9 m3', { products: [{ oxidant: 'potassium-permanganate', strength: { value: 2, unit: '% w/w' }, batchVolume: { value: 1e9, unit: 'm3' } }] }, '/products/0/batchVolume/value'],
    ['residual for ozone of 2000 mg/L', { targets: { residualByOxidant: { ozone: { value: 2000, unit: 'mg/L' } } } }, '/targets/residualByOxidant/ozone/value'],
  ])('a new profile with %s is PLANT_INVALID naming %s', (_n, change, pointer) => {
    const e = refusal(() => parsePlantProfile({ ...profile([], {}), ...change }));
    expect(e.code).toBe('PLANT_INVALID');
    expect(e.fields.map((f) => f.pointer)).toContain(pointer);
  });

  // The limits of tables/strength-limits.json, the same as a dose request's: hypochlorite refused above 200 g/L available
  // chlorine (a third above the 15 trade % row, White's Handbook 5th ed., memory; common practice); potassium permanganate
  // above its 22.2 g per 100 g water at 60 °C (Perry's 8th ed. solubility table, memory); calcium hypochlorite above roughly
  // 21 g per 100 mL water (CRC Handbook 97th ed., memory).
  it.each([
    ['hypochlorite 500 g/L', { oxidant: 'sodium-hypochlorite', strength: { value: 500, unit: 'g/L' } }, /above 200 g\/L.*source operator-practice.*whites-handbook-5/],
    ['hypochlorite 30 % w/v', { oxidant: 'sodium-hypochlorite', strength: { value: 30, unit: '% w/v' } }, /30 % w\/v \(300 g\/L\)/],
    ['permanganate 25 % w/v (33.33 g per 100 g water)', { oxidant: 'potassium-permanganate', strength: { value: 25, unit: '% w/v' } }, /22\.2 g KMnO4 per 100 g water that dissolve at 60 °C.*perry-8-solubility/],
    ['calcium hypochlorite 65 % w/w', { oxidant: 'calcium-hypochlorite', strength: { value: 65, unit: '% w/w' } }, /roughly 21 g per 100 mL.*crc-97-inorganic-constants.*products\[1\]\.purity/],
  ])('a profile product of %s is PLANT_INVALID naming /products/1/strength/value, with the limit and its source', (_n, product, message) => {
    const good = { oxidant: 'sodium-permanganate', strength: { value: 20, unit: '% w/w' } };
    const e = refusal(() => parsePlantProfile({ ...profile([], {}), products: [good, product] }));
    expect(e.code).toBe('PLANT_INVALID');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/products/1/strength/value']);
    expect(e.fields[0]!.message).toMatch(message);
  });

  it('permanganate 8 % w/v is possible in a warm tank (9.0 g per 100 g water at 30 °C, Perry\'s 8th ed., memory): the profile is stored, and the dose at 11 °C warns', () => {
    const p = parsePlantProfile({ ...profile([], {}), products: [{ oxidant: 'potassium-permanganate', strength: { value: 8, unit: '% w/v' } }] });
    const f = flag(dose('potassium-permanganate', p), 'STRENGTH_ABOVE_SOLUBILITY')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toMatch(/11 °C, the sample temperature/);
  });

  it('a profile stored before the limit (500 g/L hypochlorite) is refused by the dose, naming the field and that the value came from the profile', () => {
    const p: PlantProfile = { ...profile([], {}), products: [{ oxidant: 'sodium-hypochlorite', strength: { value: 500, unit: 'g/L' } }] };
    const e = refusal(() => dose('sodium-hypochlorite', p));
    expect(e.code).toBe('QUANTITY_OUT_OF_RANGE');
    expect(e.fields[0]).toMatchObject({ pointer: '/product/strength/value', message: expect.stringContaining('(value from plant profile "invented-plant")') });
  });

  it.each([
    ['chlorine-gas', /chlorinator rated in mass per time/],
    ['ozone', /generated on site and transferred to the water as a gas/],
    ['oxygen', /aeration/],
  ])('a profile product for %s (fed as a gas) is PLANT_INVALID naming /products/0/strength, as the dose route refuses product for it', (oxidant, message) => {
    const e = refusal(() => parsePlantProfile({ ...profile([], {}), products: [{ oxidant, strength: { value: 5, unit: '% w/w' }, stock: { value: 900, unit: 'kg' } }] }));
    expect(e.code).toBe('PLANT_INVALID');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/products/0/strength']);
    expect(e.fields[0]!.message).toMatch(message);
    expect(e.fields[0]!.message).toContain(`targets.residualByOxidant.${oxidant}`);
  });

  it.each(['chlorine-gas', 'ozone', 'oxygen'])('a metering pump in L/h for %s is PLANT_INVALID naming /pumps/0/ratedCapacity', (oxidant) => {
    const e = refusal(() => parsePlantProfile({ ...profile([], {}), pumps: [{ id: 'p1', oxidant, ratedCapacity: { value: 10, unit: 'L/h' } }] }));
    expect(e.code).toBe('PLANT_INVALID');
    expect(e.fields.map((f) => f.pointer)).toEqual(['/pumps/0/ratedCapacity']);
    expect(e.fields[0]!.message).toMatch(/rated in L\/h does not apply/);
  });

  it('a purity for a solution product is stored with a warning (it is not used in doses); for permanganate (a solid) it is kept and used', () => {
    const p = parsePlantProfile({ ...profile([], {}), products: [{ oxidant: 'sodium-hypochlorite', strength: { value: 12.5, unit: '% w/v' }, purity: { value: 90, unit: '%' } }] });
    const w = plantProfileWarnings(p, context.oxidants);
    expect(w.map((x) => [x.code, x.pointer])).toEqual([['PURITY_NOT_APPLICABLE', '/products/0/purity']]);
    const ok = parsePlantProfile({ ...profile([], {}), products: [{ oxidant: 'potassium-permanganate', strength: { value: 2, unit: '% w/w' }, purity: { value: 97, unit: '%' } }] });
    expect(ok.products[0]!.purity?.value).toBe(97);
    expect(plantProfileWarnings(ok, context.oxidants)).toEqual([]);
  });

  it("a contact time in the request is used over the plant's contact volume, and the note says what the volume would give (60 m3 ÷ 2500 m3/d = 34.6 min)", () => {
    const p = profile(['sodium-hypochlorite'], {});
    const r = dose('sodium-hypochlorite', p, { contactTime: { value: 5, unit: 'min' } });
    expect(r.contact!.availableMinutes).toBe(5);
    // the invented profile: 60 m3 at 2500 m3/d → 60 / 2500 × 1440 = 34.56 min
    expect(r.notes.find((n) => n.startsWith('Contact:'))).toMatch(/5 min, was used; the contact volume \(from plant profile "invented-plant"\) ÷ flow would give 34\.6 min/);
  });

  it('a residual target above the MRDL (4.0 mg/L as Cl2 and 0.8 mg/L as ClO2, 40 CFR 141.65(a)) is stored with a warning naming its field', () => {
    const p = profile(['sodium-hypochlorite'], { residualByOxidant: { 'sodium-hypochlorite': { value: 5, unit: 'mg/L' }, 'chlorine-dioxide': { value: 1, unit: 'mg/L' } } });
    const w = plantProfileWarnings(p, context.oxidants, context.limits).filter((x) => x.code === 'RESIDUAL_ABOVE_MRDL');
    expect(w.map((x) => x.pointer).sort()).toEqual(['/targets/residualByOxidant/chlorine-dioxide', '/targets/residualByOxidant/sodium-hypochlorite']);
    expect(w.find((x) => x.pointer.endsWith('sodium-hypochlorite'))!.message).toMatch(/5 mg\/L as Cl2 is above the US EPA MRDL 4\.0 mg\/L/);
    // the general target applies to each product without its own: 4.5 mg/L for the hypochlorite product
    const general = profile(['sodium-hypochlorite'], { residual: { value: 4.5, unit: 'mg/L' } });
    expect(plantProfileWarnings(general, context.oxidants, context.limits).map((x) => [x.code, x.pointer])).toContainEqual(['RESIDUAL_ABOVE_MRDL', '/targets/residual']);
    // at the demo plant's 1.0 mg/L, none
    expect(plantProfileWarnings(demo, context.oxidants, context.limits).map((x) => x.code)).not.toContain('RESIDUAL_ABOVE_MRDL');
  });

  it('a dose request refuses a metering pump for a gas (400 at /pump); a purity for a solution is not used, with a warning, and the feed is the same as without it', () => {
    const base = { flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } };
    for (const oxidant of ['chlorine-gas', 'ozone', 'oxygen']) {
      const e = refusal(() => computeDose(parseDoseRequest({ ...base, oxidant, pump: { ratedCapacity: { value: 10, unit: 'L/h' } } }), context));
      expect(e.fields.map((f) => f.pointer)).toEqual(['/pump']);
    }
    for (const oxidant of ['sodium-hypochlorite', 'sodium-permanganate', 'hydrogen-peroxide']) {
      const withPurity = computeDose(parseDoseRequest({ ...base, oxidant, product: { strength: { value: 10, unit: '% w/v' }, purity: { value: 90, unit: '%' } } }), context);
      const without = computeDose(parseDoseRequest({ ...base, oxidant, product: { strength: { value: 10, unit: '% w/v' } } }), context);
      expect(withPurity.flags.find((f) => f.code === 'PURITY_NOT_APPLICABLE')!.message).toMatch(/was not used/);
      expect(withPurity.feed!.solutionRate!.value).toBe(without.feed!.solutionRate!.value);
    }
  });

  it('a solid product may be given by its purity alone (the mass of solid to feed); a solution product needs its strength', () => {
    const base = { flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7.2, temperatureC: 12, iron: { value: 1, unit: 'mg/L' } } };
    // Ca(OCl)2 tablets at 70 % available chlorine: 0.6348 mg Cl2/mg Fe × 1 mg/L × 1000 m3/d = 0.6348 kg/d as Cl2 ÷ 0.70
    const r = computeDose(parseDoseRequest({ ...base, oxidant: 'calcium-hypochlorite', product: { purity: { value: 70, unit: '%' } } }), context);
    expect(r.feed!.productMassRate!.value).toBeCloseTo(r.feed!.massRate.value / 0.7, 9);
    expect(r.flags.map((f) => f.code)).not.toContain('PURITY_DEFAULT_USED');
    const e = refusal(() => computeDose(parseDoseRequest({ ...base, oxidant: 'sodium-hypochlorite', product: { purity: { value: 90, unit: '%' } } }), context));
    expect(e.fields.map((f) => f.pointer)).toContain('/product/strength');
  });

  it('a pump for chlorine dioxide (generated, fed as a solution) is still accepted', () => {
    const p = parsePlantProfile({ ...profile([], {}), pumps: [{ id: 'p1', oxidant: 'chlorine-dioxide', ratedCapacity: { value: 10, unit: 'L/h' } }] });
    expect(p.pumps.map((x) => x.oxidant)).toEqual(['chlorine-dioxide']);
  });

  it('the demo profile (and so the existing residual shapes) still loads', () => {
    expect(demo.targets.residual).toEqual({ value: 1.0, unit: 'mg/L' });
    expect(Object.keys(demo.targets.residualByOxidant ?? {})).toEqual(['sodium-hypochlorite', 'potassium-permanganate']);
  });
});

describe('a residual target no product of the profile can carry: a warning naming what the target is for', () => {
  it('a chlorine-gas plant (no product entries: a gas has no strength) with a general targets.residual: 0 mg/L residual and a warning saying the target names no oxidant and no product is listed', () => {
    const p = profile([], { residual: { value: 1, unit: 'mg/L' } });
    const r = dose('chlorine-gas', p);
    expect(residualTerm(r).value.value).toBe(0);
    const f = flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toMatch(/targets\.residual 1 mg\/L names no oxidant and the profile lists no product/);
    expect(f.message).toContain('targets.residualByOxidant.chlorine-gas');
  });

  it('ozone at a plant whose only product is permanganate: the target is read as KMnO4 and the warning says so', () => {
    const r = dose('ozone', profile(['potassium-permanganate'], { residual: { value: 0.05, unit: 'mg/L' } }));
    const f = flag(r, 'PLANT_RESIDUAL_FOR_OTHER_OXIDANT')!;
    expect(f.severity).toBe('warning');
    expect(f.message).toMatch(/read as KMnO4, the basis of every product of the profile.*None is for ozone \(as O3\)/);
  });
});
