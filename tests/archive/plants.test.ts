import { createHash } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import type { Archive } from '../../src/archive/index.js';
import { openTestArchive, tempDataDir, caught } from './fixtures/archive-fixture.js';

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function fresh(): Archive {
  const t = tempDataDir('plants');
  const archive = openTestArchive(t.dir);
  cleanups.push(() => {
    archive.close();
    t.cleanup();
  });
  return archive;
}

/** An invented demo plant profile (shape owned by src/dosing; here only stored). */
const DEMO = {
  id: 'demo-riverside',
  name: 'Riverside demo plant (invented)',
  flow: { value: 4000, unit: 'm3/d' },
  contactVolume: { value: 250, unit: 'm3' },
  products: [{ oxidant: 'potassium-permanganate', purity: 0.97 }],
};

describe('plant profile versions', () => {
  it('saving a new plant makes version 1 with the SHA-256 of its canonical JSON', () => {
    const a = fresh();
    const saved = a.savePlant(DEMO, { createdBy: 'usr_eng' });
    expect(saved).toMatchObject({ plantId: 'demo-riverside', version: 1, changed: true, createdBy: 'usr_eng', profile: DEMO });
    const row = a.db.prepare('SELECT profile_json, sha256 FROM plant_versions').get() as { profile_json: string; sha256: string };
    // canonical JSON: keys sorted, no whitespace (RFC 8785 ordering)
    expect(row.profile_json.startsWith('{"contactVolume":{"unit":"m3","value":250},"flow":')).toBe(true);
    expect(row.sha256).toBe(createHash('sha256').update(row.profile_json).digest('hex'));
  });

  it('a changed profile is a new version; the old one stays readable', () => {
    const a = fresh();
    a.savePlant(DEMO, { createdBy: 'usr_eng' });
    const v2 = a.savePlant({ ...DEMO, flow: { value: 4500, unit: 'm3/d' } }, { createdBy: 'usr_eng' });
    expect(v2).toMatchObject({ version: 2, changed: true });
    expect(a.getPlant('demo-riverside').version).toBe(2);
    expect(a.getPlant<typeof DEMO>('demo-riverside', 1).profile.flow.value).toBe(4000);
    expect(a.plantHistory('demo-riverside').map((p) => p.version)).toEqual([1, 2]);
  });

  it('saving the same profile again (even with keys in another order) appends nothing', () => {
    const a = fresh();
    a.savePlant(DEMO, { createdBy: 'usr_eng' });
    const reordered = { products: DEMO.products, flow: { unit: 'm3/d', value: 4000 }, name: DEMO.name, contactVolume: DEMO.contactVolume, id: DEMO.id };
    const again = a.savePlant(reordered, { createdBy: 'usr_other' });
    expect(again).toMatchObject({ version: 1, changed: false, createdBy: 'usr_eng' });
    expect(a.plantHistory('demo-riverside')).toHaveLength(1);
  });

  it('seedPlant stores the demo plant only when absent and never overwrites a later version', () => {
    const a = fresh();
    expect(a.seedPlant(DEMO)).toMatchObject({ version: 1, changed: true, createdBy: 'system:seed' });
    a.savePlant({ ...DEMO, name: 'renamed by the site' }, { createdBy: 'usr_eng' });
    expect(a.seedPlant(DEMO)).toMatchObject({ version: 2, changed: false });
    expect(a.getPlant<typeof DEMO>('demo-riverside').profile.name).toBe('renamed by the site');
  });

  it('listPlants gives the latest version of each plant, by id', () => {
    const a = fresh();
    a.savePlant({ ...DEMO, id: 'zeta-plant' }, { createdBy: 'x' });
    a.savePlant(DEMO, { createdBy: 'x' });
    a.savePlant({ ...DEMO, name: 'v2' }, { createdBy: 'x' });
    expect(a.listPlants().map((p) => [p.plantId, p.version])).toEqual([
      ['demo-riverside', 2],
      ['zeta-plant', 1],
    ]);
  });

  it.each([
    ['no id', { name: 'x' }],
    ['path trick', { id: '../etc/passwd' }],
    ['upper case', { id: 'Demo' }],
    ['trailing hyphen', { id: 'demo-' }],
    ['too long', { id: 'a'.repeat(65) }],
  ])('refuses a profile with %s (ID_INVALID at /id)', (_n, profile) => {
    const e = caught(() => fresh().savePlant(profile, { createdBy: 'x' }));
    expect(e.code).toBe('ID_INVALID');
    expect(e.fields[0]?.pointer).toBe('/id');
  });

  it('an unknown plant or version is PLANT_NOT_FOUND', () => {
    const a = fresh();
    expect(caught(() => a.getPlant('nowhere')).code).toBe('PLANT_NOT_FOUND');
    a.savePlant(DEMO, { createdBy: 'x' });
    expect(caught(() => a.getPlant('demo-riverside', 7)).code).toBe('PLANT_NOT_FOUND');
  });
});
