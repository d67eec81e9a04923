/** Independent PDF tools (Debian poppler-utils and qpdf) for the sheet tests. */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const INSTALL = 'install them with: apt-get install -y poppler-utils qpdf';

/** Fails (does not skip) when a tool is missing. */
export function requireTools(...names: string[]): void {
  const missing = names.filter((name) => {
    try {
      execFileSync('sh', ['-c', `command -v ${name}`], { stdio: 'pipe', timeout: 5_000 });
      return false;
    } catch {
      return true;
    }
  });
  if (missing.length > 0) throw new Error(`The sheet tests need ${missing.join(', ')} (poppler-utils, qpdf); ${INSTALL}`);
}

const dir = mkdtempSync(join(tmpdir(), 'oxd-sheets-'));
let counter = 0;

/** Write the PDF to a temporary file and return its path. */
export function pdfFile(pdf: Buffer, name = 'sheet'): string {
  const path = join(dir, `${name}-${++counter}.pdf`);
  writeFileSync(path, pdf);
  return path;
}

/** Run a tool and return stdout + stderr (a non-zero exit throws, with the output). */
export function run(tool: string, args: string[]): string {
  return execFileSync(tool, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'], timeout: 30_000 });
}

/** Run a tool and return its output whatever the exit status (pdfsig exits 0 even on a bad digest). */
export function runAny(tool: string, args: string[]): { status: number; output: string } {
  try {
    return { status: 0, output: run(tool, args) };
  } catch (e) {
    const err = e as { status?: number; stdout?: string; stderr?: string };
    return { status: err.status ?? -1, output: `${err.stdout ?? ''}${err.stderr ?? ''}` };
  }
}

/** pdftotext of the whole file or one page, with runs of white space collapsed. */
export function pdfText(path: string, page?: number): string {
  const args = page === undefined ? [path, '-'] : ['-f', String(page), '-l', String(page), path, '-'];
  return run('pdftotext', args).replace(/\s+/g, ' ');
}
