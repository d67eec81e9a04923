/**
 * The direction of imports (DEVELOPERS.md, "Layout"):
 *   core ← reference ← chemistry ← water ← dosing ← jar-tests ; sheets and archive use the domain;
 *   http and cli use everything; nothing imports http or cli.
 * The domain never imports the HTTP, PDF or storage libraries, nor the file system, so it
 * stays pure and can be tested with small explicit tables.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative, resolve, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const src = join(root, 'src');

function walk(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    return statSync(p).isDirectory() ? walk(p) : p.endsWith('.ts') ? [p] : [];
  });
}

const IMPORT_RE = /(?:^|\n)\s*(?:import|export)\s[^'"]*?from\s+['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)|(?:^|\n)\s*import\s+['"]([^'"]+)['"]/g;

function importsOf(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const out: string[] = [];
  for (const m of text.matchAll(IMPORT_RE)) out.push((m[1] ?? m[2] ?? m[3])!);
  return out;
}

function layerOf(file: string): string {
  return relative(src, file).split('/')[0]!;
}

/** Which src layers each layer may import (besides itself). */
const ALLOWED: Record<string, string[]> = {
  core: [], // arithmetic, errors, quantities: depends on nothing of ours
  reference: ['core'], // table schemas and the loader
  chemistry: ['core', 'reference'],
  water: ['core', 'reference', 'chemistry'],
  dosing: ['core', 'reference', 'chemistry', 'water'],
  'jar-tests': ['core', 'reference', 'chemistry', 'water', 'dosing'],
  sheets: ['core', 'reference', 'chemistry', 'water', 'dosing', 'jar-tests'], // renders domain results
  archive: ['core', 'reference', 'chemistry', 'water', 'dosing', 'jar-tests'], // stores domain results; signature checks are passed in
  http: ['core', 'reference', 'chemistry', 'water', 'dosing', 'jar-tests', 'sheets', 'archive'],
  cli: ['core', 'reference', 'chemistry', 'water', 'dosing', 'jar-tests', 'sheets', 'archive'],
};

const DOMAIN = new Set(['core', 'reference', 'chemistry', 'water', 'dosing', 'jar-tests']);
/** Libraries of the shell: the domain must not depend on them (pure functions over explicit data). */
const SHELL_PACKAGES = /^(fastify|@fastify\/|fastify-|pdfkit|fontkit|better-sqlite3|@signpdf\/|node-forge|node:fs|fs$|fs\/|node:child_process|node:net|node:http)/;
/** The one file of the domain that reads the tables from disk. */
const FS_ALLOWED = new Set(['reference/load.ts']);

const files = walk(src);

describe('import direction', () => {
  it('finds the source files', () => {
    expect(files.length).toBeGreaterThan(5);
  });

  it.each(files.map((f) => [relative(src, f), f]))('%s imports only what its layer may', (_name, file) => {
    const layer = layerOf(file);
    const allowed = ALLOWED[layer];
    expect(allowed, `unknown layer folder src/${layer}: add it to DEVELOPERS.md and this test`).toBeDefined();
    const bad: string[] = [];
    for (const spec of importsOf(file)) {
      if (spec.startsWith('.')) {
        const target = resolve(dirname(file), spec);
        if (!target.startsWith(src)) {
          bad.push(`${spec} (outside src/)`);
          continue;
        }
        const tLayer = layerOf(target);
        if (tLayer !== layer && !allowed!.includes(tLayer)) bad.push(`${spec} (src/${tLayer} is not allowed from src/${layer})`);
      } else if (DOMAIN.has(layer) && SHELL_PACKAGES.test(spec) && !FS_ALLOWED.has(relative(src, file))) {
        bad.push(`${spec} (the domain must not depend on shell libraries)`);
      }
    }
    expect(bad).toEqual([]);
  });
});
