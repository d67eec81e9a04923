import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const cli = (args: string[]) => spawnSync(process.execPath, ['--import', 'tsx', 'src/cli/main.ts', ...args], { cwd: root, encoding: 'utf8', timeout: 60_000 });

describe('command line', () => {
  it('balances a redox reaction from two couples (textbook: 2MnO4- + 3Mn2+ + 2H2O → 5MnO2 + 4H+ in acid)', () => {
    const r = cli(['balance', 'MnO4-:MnO2', 'Mn2+:MnO2', '--medium', 'acid']);
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout).equation).toBe('2MnO4- + 3Mn2+ + 2H2O -> 5MnO2 + 4H+');
  });

  it('prints the bad character of a formula and exits 2', () => {
    const r = cli(['balance', '--species', 'Fe(OH3', 'Fe3+']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/FORMULA_SYNTAX/);
    expect(r.stderr).toMatch(/\^/);
  });

  it('computes a dose from a request file with the same answer as the library', () => {
    const dir = mkdtempSync(join(tmpdir(), 'oxd-cli-'));
    const file = join(dir, 'req.json');
    writeFileSync(file, JSON.stringify({ oxidant: 'chlorine-gas', flow: { value: 1000, unit: 'm3/d' }, sample: { pH: 7, temperatureC: 15, iron: { value: 1, unit: 'mg/L' } } }));
    const out = JSON.parse(execFileSync(process.execPath, ['--import', 'tsx', 'src/cli/main.ts', 'dose', file], { cwd: root, encoding: 'utf8', timeout: 60_000 }));
    // Cl2 + 2Fe2+ → 2Cl- + 2Fe3+ (as Fe(OH)3): 70.90 / (2 × 55.845) = 0.635 mg Cl2 per mg Fe (US EPA 1999: 0.64)
    expect(out.demand[0].ratio).toBeCloseTo(70.9 / (2 * 55.845), 2);
    expect(out.dose.basis).toBe('as Cl2');
  });

  it('verify walks an archive, answers both heads, and checks heads passed back; a malformed head exits 2', () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'oxd-cli-verify-'));
    const first = cli(['verify', '--data-dir', dataDir]);
    expect(first.status, first.stderr).toBe(0);
    const v = JSON.parse(first.stdout);
    expect(v.valid).toBe(true);
    expect(v.registryHead.recordHash).toMatch(/^[0-9a-f]{64}$/);
    const again = cli(['verify', '--data-dir', dataDir, '--expect-record-hash', v.head.recordHash, '--expect-registry-hash', v.registryHead.recordHash]);
    expect(again.status, again.stderr).toBe(0);
    expect(JSON.parse(again.stdout).valid).toBe(true);
    const missing = cli(['verify', '--data-dir', dataDir, '--expect-registry-hash', 'f'.repeat(64)]);
    expect(JSON.parse(missing.stdout)).toMatchObject({ valid: false, problems: [expect.objectContaining({ check: 'registry-head' })] });
    expect(missing.status).toBe(1); // a scheduled check can act on it
    const bad = cli(['verify', '--data-dir', dataDir, '--expect-record-hash', 'nothex']);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/--expect-record-hash must be a SHA-256/);
    // an option without its value, or one verify does not take, is refused, never skipped
    for (const args of [
      ['verify', '--data-dir', dataDir, '--expect-record-hash'],
      ['verify', '--expect-registry-hash', '--data-dir', dataDir],
      ['verify', '--data-dir', dataDir, '--expect-records', '99'],
    ]) {
      const r = cli(args);
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(/needs a value|does not take --expect-records/);
    }
  });

  it('an unknown command says which commands exist', () => {
    const r = cli(['frobnicate']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/balance, potential, dose, verify/);
  });
});
