/**
 * The loader fails fast naming file, row, column and reason; the real tables load and every
 * source id resolves.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DomainError } from '../../src/core/errors.js';
import { DEFAULT_TABLES_DIR, loadTables } from '../../src/reference/load.js';

const SOURCES = {
  table: 'sources',
  description: 'test sources',
  rows: [{ id: 'src-a', kind: 'handbook', author: 'A', title: 'T', publication: 'P', edition: '', tableOrEquation: 'Table 1', year: 2000, preference: 1, access: 'read' }],
};

function goodRow(extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    id: 'fe3-fe2',
    halfReaction: 'Fe3+ + e- = Fe2+',
    electrons: 1,
    medium: null,
    potentialV: '0.771',
    dEdTmVPerK: null,
    uncertaintyV: null,
    source: 'src-a',
    note: '',
    ...extra,
  };
}

const dirs: string[] = [];
function tempTables(potentials: unknown, sources: unknown = SOURCES): string {
  const dir = mkdtempSync(join(tmpdir(), 'oxd-tables-'));
  dirs.push(dir);
  writeFileSync(join(dir, 'sources.json'), JSON.stringify(sources));
  if (potentials !== undefined) {
    writeFileSync(join(dir, 'potentials.json'), typeof potentials === 'string' ? potentials : JSON.stringify(potentials));
  }
  return dir;
}
afterAll(() => {
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

function table(rows: unknown[]): unknown {
  return { table: 'potentials', description: 'test', rows };
}

function loadError(dir: string): DomainError {
  try {
    loadTables(['potentials'], dir);
  } catch (e) {
    if (e instanceof DomainError) return e;
    throw e;
  }
  throw new Error('expected TABLE_INVALID');
}

describe('loadTables rejects a bad table, naming file, row, column and reason', () => {
  it.each([
    // [case, rows or raw text, expected params, reason fragment]
    ['missing file', undefined, { file: 'potentials.json' }, 'file not found'],
    ['not JSON', '{"table": "potentials",', { file: 'potentials.json' }, 'not valid JSON'],
    ['wrong table name', { table: 'potential', description: 'x', rows: [] }, { file: 'potentials.json', column: 'table' }, ''],
    ['value as a number, not text', table([goodRow(), goodRow({ id: 'mno4', potentialV: 1.507 })]), { file: 'potentials.json', row: 1, id: 'mno4', column: 'potentialV' }, 'expected string'],
    ['value text that is not a number', table([goodRow({ potentialV: '0,771' })]), { row: 0, id: 'fe3-fe2', column: 'potentialV' }, 'decimal number'],
    ['unknown source', table([goodRow({ source: 'nowhere' })]), { row: 0, id: 'fe3-fe2', column: 'source' }, '"nowhere" is not an id in tables/sources.json'],
    ['dE/dT source unknown', table([goodRow({ dEdTmVPerK: '1.175', dEdTSource: 'nowhere' })]), { row: 0, column: 'dEdTSource' }, 'not an id'],
    ['dE/dT without its source', table([goodRow({ dEdTmVPerK: '1.175' })]), { row: 0, column: 'dEdTSource' }, 'needs the source'],
    ['two values', table([goodRow({ logK: '13.02' })]), { row: 0, column: 'logK' }, 'exactly one of potentialV, logK or peStandard'],
    ['no value', table([goodRow({ potentialV: undefined })]), { row: 0, column: 'potentialV' }, 'found none'],
    ['unknown column', table([goodRow({ potentialMV: '771' })]), { row: 0, column: 'potentialMV' }, 'unknown column'],
    ['duplicate id', table([goodRow(), goodRow()]), { row: 1, id: 'fe3-fe2', column: 'id' }, 'duplicate id, already used by row 0'],
    ['electrons not an integer', table([goodRow({ electrons: 1.5 })]), { row: 0, column: 'electrons' }, ''],
  ] as const)('%s', (_case, potentials, params, reason) => {
    const err = loadError(tempTables(potentials));
    expect(err.code).toBe('TABLE_INVALID');
    expect(err.params).toMatchObject(params);
    expect(String(err.params.reason)).toContain(reason);
    expect(err.detail).toContain('tables/potentials.json');
    if ('column' in params) expect(err.detail).toContain(`column "${params.column}"`);
    if ('row' in params) {
      expect(err.detail).toContain(`row ${params.row}`);
      expect(err.fields[0]!.pointer).toBe(`/rows/${params.row}/${params.column}`);
    }
  });

  it('checks the sources table itself', () => {
    const bad = { ...SOURCES, rows: [{ ...SOURCES.rows[0], kind: 'blog' }] };
    const err = (() => {
      try {
        loadTables([], tempTables(table([goodRow()]), bad));
      } catch (e) {
        return e as DomainError;
      }
      throw new Error('expected an error');
    })();
    expect(err.params).toMatchObject({ file: 'sources.json', row: 0, id: 'src-a', column: 'kind' });
  });

  it('accepts a good small table', () => {
    const t = loadTables(['potentials'], tempTables(table([goodRow()])));
    expect(t.potentials.map((r) => r.id)).toEqual(['fe3-fe2']);
  });
});

describe('the repository tables', () => {
  const t = loadTables(['atomicWeights', 'constants', 'potentials', 'equilibria']);

  it('default folder is the repository tables/', () => {
    expect(JSON.parse(readFileSync(join(DEFAULT_TABLES_DIR, 'potentials.json'), 'utf8')).table).toBe('potentials');
  });

  it.each([
    ['atomicWeights', 37],
    ['constants', 4],
    ['potentials', 40],
    ['equilibria', 15],
  ] as const)('%s has at least %i rows, each with a resolved source', (name, min) => {
    expect(t[name].length).toBeGreaterThanOrEqual(min);
    const ids = new Set(t.sources.map((s) => s.id));
    for (const row of t[name]) expect(ids.has(row.source)).toBe(true);
  });

  it('every row taken from memory says so in its note, every source says how it was read', () => {
    const memorySources = new Set(t.sources.filter((s) => s.access === 'memory').map((s) => s.id));
    for (const row of [...t.potentials, ...t.equilibria, ...t.atomicWeights]) {
      if (memorySources.has(row.source)) expect(row.note ?? '', `${'id' in row ? row.id : row.symbol}`).toMatch(/memory/i);
    }
  });
});
