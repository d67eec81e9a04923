/**
 * Nothing is lost at HTTP level (issue 4): the real server (`node --import tsx src/http/server.ts`)
 * runs as a child process; a client process (tests/http/fixtures/sheet-client.ts, run with
 * runChild from tests/archive/fixtures/child.ts) keeps several sheet creations in flight and
 * prints the id of every 201 answer; the server is SIGKILLed mid-burst, restarted on the same
 * DATA_DIR, and every answered id must be in an archive that verifies.
 *
 * Why this holds: the archive commits each sheet (better-sqlite3, WAL, synchronous=FULL) before
 * the route answers 201, and SQLite's WAL recovery discards only frames of uncommitted
 * transactions (SQLite documentation, "Write-Ahead Logging"; from memory).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { REPO_ROOT, runChild } from '../archive/fixtures/child.js';

const CLIENT = resolve(REPO_ROOT, 'tests/http/fixtures/sheet-client.ts');
const TOKEN = 'kill-test-bootstrap-token-0123456789abcdef';
/** SIGKILL the server once this many 201 answers have been printed (plus a random 0–40 ms). */
const KILL_AFTER = 10;
const CONCURRENCY = 5;

const servers: ChildProcess[] = [];
afterAll(() => {
  for (const s of servers) if (s.exitCode === null && s.signalCode === null) s.kill('SIGKILL');
});

function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const srv = createServer();
    srv.once('error', rej);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      srv.close(() => res(port));
    });
  });
}

/** Start the real server; resolves once it prints its listening line. */
function startServer(dataDir: string, port: number): Promise<ChildProcess> {
  return new Promise((res, rej) => {
    const child = spawn(process.execPath, ['--import', 'tsx', 'src/http/server.ts'], {
      cwd: REPO_ROOT,
      env: { ...process.env, HOST: '127.0.0.1', PORT: String(port), DATA_DIR: dataDir, BOOTSTRAP_TOKEN: TOKEN, LOG_LEVEL: 'warn' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    servers.push(child);
    let out = '';
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      rej(new Error(`server did not start within 15 s:\n${out}`));
    }, 15_000);
    const onData = (chunk: Buffer) => {
      out += chunk.toString('utf8');
      if (/listening on http:\/\/127\.0\.0\.1:\d+/.test(out)) {
        clearTimeout(timer);
        res(child);
      }
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', (c: Buffer) => (out += c.toString('utf8')));
    child.once('exit', (code, signal) => {
      clearTimeout(timer);
      rej(new Error(`server exited (${code ?? signal}) before listening:\n${out}`));
    });
  });
}

function exited(child: ChildProcess): Promise<{ code: number | null; signal: NodeJS.Signals | null }> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve({ code: child.exitCode, signal: child.signalCode });
  return new Promise((res) => child.once('exit', (code, signal) => res({ code, signal })));
}

describe('SIGKILL of the real server in the middle of a burst of sheet creations', () => {
  it('after a restart on the same DATA_DIR the archive verifies and holds every sheet answered 201', async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'oxd-http-kill-'));
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const first = await startServer(dataDir, port);

    let answered = 0;
    let killedAt = -1;
    const status: string[] = [];
    let sent = NaN;
    let failed = NaN;
    const outcome = await runChild({
      script: CLIENT,
      env: { SHEET_CLIENT_URL: base, SHEET_CLIENT_TOKEN: TOKEN, SHEET_CLIENT_CONCURRENCY: String(CONCURRENCY), SHEET_CLIENT_MAX: '100' },
      timeoutMs: 20_000,
      onLine: (line) => {
        if (line.startsWith('status ')) status.push(line);
        if (line.startsWith('sent ')) sent = Number(line.slice(5));
        if (line.startsWith('failed ')) failed = Number(line.slice(7));
        if (!line.startsWith('committed ')) return;
        answered++;
        if (answered === KILL_AFTER) {
          setTimeout(() => {
            killedAt = answered;
            first.kill('SIGKILL');
          }, Math.random() * 40);
        }
      },
    });
    const died = await exited(first);
    expect(died.signal).toBe('SIGKILL');
    expect(outcome.sawDone, outcome.stderr).toBe(true);
    expect(status, outcome.stderr).toEqual([]);
    expect(outcome.ids.length).toBeGreaterThanOrEqual(KILL_AFTER);
    expect(killedAt).toBeGreaterThanOrEqual(KILL_AFTER);
    // requests were still in flight when the server died: the client saw them cut off
    expect(failed).toBeGreaterThanOrEqual(1);
    expect(sent).toBeGreaterThanOrEqual(outcome.ids.length + failed);

    const second = await startServer(dataDir, port);
    type ArchiveCheck = { valid: boolean; records: number; firstBrokenId: string | null; problems: unknown[] };
    const v = (await (await fetch(`${base}/api/v1/archive/verification`)).json()) as ArchiveCheck;
    expect(v, JSON.stringify(v.problems)).toMatchObject({ valid: true, firstBrokenId: null });
    // every answered sheet is there; at most the requests sent could be there
    expect(v.records).toBeGreaterThanOrEqual(outcome.ids.length);
    expect(v.records).toBeLessThanOrEqual(sent);
    for (const id of outcome.ids) {
      const r = await fetch(`${base}/api/v1/sheets/${id}`);
      expect(r.status, id).toBe(200);
      expect(((await r.json()) as { id: string }).id).toBe(id);
    }
    // and the restarted server keeps appending to the same chain
    const after = await fetch(`${base}/api/v1/sheets`, {
      method: 'POST',
      headers: { authorization: `Bearer ${TOKEN}`, 'content-type': 'application/json' },
      body: JSON.stringify({ plantId: 'demo-groundwater', oxidant: 'sodium-hypochlorite', sample: { pH: 7.3, temperatureC: 11, iron: { value: 0.7, unit: 'mg/L' } }, sampledAt: new Date().toISOString() }),
    });
    expect(after.status).toBe(201);
    const v2 = (await (await fetch(`${base}/api/v1/archive/verification`)).json()) as ArchiveCheck;
    expect(v2).toMatchObject({ valid: true, records: v.records + 1 });
    second.kill('SIGTERM');
    await exited(second);
  }, 40_000);
});
