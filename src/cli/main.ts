/**
 * The same domain functions from the command line (npm run cli -- <command> …).
 *
 *   balance "MnO4-:MnO2" "Fe2+:Fe(OH)3" [--pH 7.5 | --medium base]   redox reaction from two couples
 *   balance --species "H2S,Cl2" "S,H+,Cl-"                           any reaction from its species
 *   potential <oxidised> <reduced> [--pH 7] [--temperatureC 12]      E° and E of a couple
 *   dose <request.json | ->                                           POST /api/v1/doses body from a file or stdin
 *   verify [--data-dir reports] [--expect-record-hash H] [--expect-registry-hash H]
 *                                                                     walk the archive's hash chains and signatures;
 *                                                                     the hashes are heads written down after an earlier walk
 *
 * Output is JSON on stdout; an error prints its detail (and a caret under a bad formula
 * character) on stderr and exits with status 2. `verify` exits with status 1 when the archive
 * does not verify (the JSON says why), so a scheduled check can act on it. An option without
 * its value, or one the command does not take, is an error, never skipped.
 */
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { DomainError, isDomainError } from '../core/errors.js';
import { loadReferenceTables } from '../reference/load.js';
import { balanceService } from '../chemistry/balance/service.js';
import { buildDosingContext, computeDose, parseDoseRequest } from '../dosing/index.js';
import { couplePotential } from '../water/redox-service.js';
import { redoxDepsOf } from '../dosing/redox-deps.js';
import { isSha256Hex, openArchive } from '../archive/index.js';
import { verifySignedPdf } from '../sheets/verify.js';

function flag(args: string[], name: string): string | undefined {
  const i = args.indexOf(name);
  if (i < 0) return undefined;
  const v = args[i + 1];
  if (v === undefined || v.startsWith('--')) {
    throw new DomainError('VALIDATION_FAILED', { detail: `${name} needs a value${v === undefined ? '' : `; got the option ${v} instead`}.` });
  }
  args.splice(i, 2);
  return v;
}

/** After a command's options are taken: anything else that looks like an option is refused. */
function noOtherOptions(args: readonly string[], command: string, accepted: readonly string[]): void {
  const other = args.find((a) => a.startsWith('--'));
  if (other !== undefined) {
    throw new DomainError('VALIDATION_FAILED', {
      detail: `${command} does not take ${other}${accepted.length ? `; its options: ${accepted.join(', ')}` : ''}.`,
    });
  }
}

function num(text: string | undefined, name: string): number | undefined {
  if (text === undefined) return undefined;
  const n = Number(text);
  if (!Number.isFinite(n)) throw new DomainError('VALIDATION_FAILED', { detail: `${name} must be a number; got "${text}".` });
  return n;
}

function couple(text: string | undefined, role: string): { from: string; to: string } {
  const parts = (text ?? '').split(':');
  if (parts.length !== 2 || !parts[0] || !parts[1]) {
    throw new DomainError('VALIDATION_FAILED', { detail: `The ${role} couple must be written FROM:TO, e.g. "MnO4-:MnO2"; got "${text ?? ''}".` });
  }
  return { from: parts[0], to: parts[1] };
}

function redoxDeps() {
  const tables = loadReferenceTables();
  const dosing = buildDosingContext(tables);
  return { dosing, redox: redoxDepsOf(dosing) };
}

async function main(argv: string[]): Promise<unknown> {
  const [command, ...args] = argv;
  switch (command) {
    case 'balance': {
      const species = args.indexOf('--species');
      if (species >= 0) {
        args.splice(species, 1);
        noOtherOptions(args, 'balance --species', []);
        const [r, p] = args;
        return balanceService({ reactants: (r ?? '').split(','), products: (p ?? '').split(',') });
      }
      const pH = num(flag(args, '--pH'), '--pH');
      const medium = flag(args, '--medium');
      if (medium !== undefined && medium !== 'acid' && medium !== 'base') throw new DomainError('VALIDATION_FAILED', { detail: '--medium must be acid or base.' });
      noOtherOptions(args, 'balance', ['--pH', '--medium', '--species']);
      return balanceService({ oxidant: couple(args[0], 'oxidant'), reductant: couple(args[1], 'reductant'), pH, medium });
    }
    case 'potential': {
      const pH = num(flag(args, '--pH'), '--pH');
      const temperatureC = num(flag(args, '--temperatureC'), '--temperatureC');
      noOtherOptions(args, 'potential', ['--pH', '--temperatureC']);
      const [from, to] = args;
      if (!from || !to) throw new DomainError('VALIDATION_FAILED', { detail: 'Give the oxidised and the reduced form, e.g. potential MnO4- Mn2+.' });
      return couplePotential({ from, to, pH, temperatureC }, redoxDeps().redox);
    }
    case 'dose': {
      noOtherOptions(args, 'dose', []);
      const file = args[0];
      if (!file) throw new DomainError('VALIDATION_FAILED', { detail: 'Give a JSON file with the dose request, or - for standard input.' });
      const text = readFileSync(file === '-' ? 0 : resolve(file), 'utf8');
      const request = parseDoseRequest(JSON.parse(text));
      if (request.plantId !== undefined) {
        throw new DomainError('VALIDATION_FAILED', { detail: 'The command line takes flow and product in the request; plant profiles live in the service (POST /api/v1/doses).', fields: [{ pointer: '/plantId', message: 'not available from the command line' }] });
      }
      return computeDose(request, redoxDeps().dosing);
    }
    case 'verify': {
      const dataDir = resolve(flag(args, '--data-dir') ?? process.env['DATA_DIR'] ?? 'reports');
      const hash = (name: string): string | undefined => {
        const h = flag(args, name);
        if (h !== undefined && !isSha256Hex(h)) throw new DomainError('VALIDATION_FAILED', { detail: `${name} must be a SHA-256 in 64 lowercase hex digits; got "${h}".` });
        return h;
      };
      const expectedHead = { recordHash: hash('--expect-record-hash') };
      const expectedRegistryHead = { recordHash: hash('--expect-registry-hash') };
      noOtherOptions(args, 'verify', ['--data-dir', '--expect-record-hash', '--expect-registry-hash']);
      const archive = openArchive({ dataDir });
      try {
        return await archive.verifyArchive({ verifyPdfSignature: verifySignedPdf, expectedHead, expectedRegistryHead });
      } finally {
        archive.close();
      }
    }
    default:
      throw new DomainError('VALIDATION_FAILED', { detail: `Unknown command "${command ?? ''}"; commands: balance, potential, dose, verify.` });
  }
}

try {
  const argv = process.argv.slice(2);
  const out = await main(argv);
  process.stdout.write(JSON.stringify(out, (_k, v) => (typeof v === 'bigint' ? v.toString() : v), 2) + '\n');
  if (argv[0] === 'verify' && (out as { valid?: unknown }).valid !== true) process.exitCode = 1;
} catch (e) {
  if (isDomainError(e)) {
    process.stderr.write(`${e.code}: ${e.detail}\n`);
    const caret = e.caret();
    if (caret) process.stderr.write(caret + '\n');
    for (const f of e.fields) process.stderr.write(`  ${f.pointer || '(input)'}: ${f.message}\n`);
    process.exit(2);
  }
  if (e instanceof SyntaxError) {
    process.stderr.write(`The request is not valid JSON: ${e.message}\n`);
    process.exit(2);
  }
  throw e;
}
