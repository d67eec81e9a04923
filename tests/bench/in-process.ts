/**
 * Figures measured inside one process: balances per second of a 10-species reaction, and the
 * time of one signed dosing sheet (compute + render + sign + archive) against a bare one-page
 * pdfkit document with the same embedded font.
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { parseFormula } from '../../src/chemistry/formula/index.js';
import { balanceReaction } from '../../src/chemistry/balance/index.js';
import { createServices } from '../../src/http/services.js';
import { issueDoseSheet } from '../../src/http/issue-sheet.js';
import { renderBareDocument } from '../../src/sheets/pdf.js';
import { benchBodies } from './bodies.js';

/**
 * 10 species, one unique balance: the classic hexacyanoferrate–permanganate exercise with
 * sodium permanganate, so sodium appears as NaHSO4 among the products.
 */
const REACTANTS = ['K4Fe(CN)6', 'NaMnO4', 'H2SO4'];
const PRODUCTS = ['KHSO4', 'NaHSO4', 'Fe2(SO4)3', 'MnSO4', 'HNO3', 'CO2', 'H2O'];

function timeLoop(f: () => void, ms: number): number {
  for (let i = 0; i < 200; i++) f();
  const t0 = performance.now();
  let n = 0;
  while (performance.now() - t0 < ms) {
    f();
    n++;
  }
  return (performance.now() - t0) / n;
}

async function timeAsync(f: () => Promise<unknown>, n: number): Promise<number> {
  for (let i = 0; i < 5; i++) await f();
  const t0 = performance.now();
  for (let i = 0; i < n; i++) await f();
  return (performance.now() - t0) / n;
}

export async function measureInProcess() {
  const reactants = REACTANTS.map((t) => parseFormula(t));
  const products = PRODUCTS.map((t) => parseFormula(t));
  const balanceMs = timeLoop(() => balanceReaction({ reactants, products }), 1000);

  const services = await createServices({ dataDir: mkdtempSync(join(tmpdir(), 'oxd-bench-sheets-')), bootstrapToken: 'bench-admin-token-000000000000' });
  const user = services.archive.authenticate('bench-admin-token-000000000000')!;
  const body = benchBodies().dose;
  let i = 0;
  const sheet = () => {
    // A new pH each time so the dose is really computed (no result memo hit).
    i++;
    const sample = { ...body.sample, pH: 7 + (i % 1000) / 1000 };
    return issueDoseSheet(services, user, { ...body, sample, sampledAt: '2026-12-01T07:30:00+01:00' } as Parameters<typeof issueDoseSheet>[2]);
  };
  const n = Number(process.env['BENCH_SHEETS'] ?? 60);
  const bareMs = await timeAsync(() => renderBareDocument(), n);
  const sheetMs = await timeAsync(sheet, n);
  const bareMs2 = await timeAsync(() => renderBareDocument(), n);
  services.close();
  const bare = (bareMs + bareMs2) / 2;
  return { balanceMs, sheetMs, bareMs: bare, sheetRatio: sheetMs / bare, sheetsPerSecond: 1000 / sheetMs, barePerSecond: 1000 / bare };
}
