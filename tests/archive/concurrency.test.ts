/**
 * Concurrency and crash safety of appends.
 *  - many async tasks in one process, and two connections in one process, interleaving;
 *  - several worker processes appending at the same instant (start barrier): BEGIN IMMEDIATE takes
 *    the write lock before reading the chain head, so no two records share a predecessor;
 *  - the kill test: a child appends in a loop, printing each id right after its commit returns;
 *    it is SIGKILLed mid-burst; the archive must open, verify, and hold every printed id.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { openArchive, type Archive } from '../../src/archive/index.js';
import { APPEND_LOOP, runChild } from './fixtures/child.js';
import { doseSheetInput, ensureAuthor, fakeVerifyPdf, openTestArchive, tempDataDir } from './fixtures/archive-fixture.js';

const SECRET = '11'.repeat(32); // the secret openTestArchive and append-loop.ts use

const cleanups: (() => void)[] = [];
afterEach(() => {
  while (cleanups.length) cleanups.pop()!();
});
function dir(): string {
  const t = tempDataDir('concurrency');
  cleanups.push(t.cleanup);
  return t.dir;
}
function open(d: string): Archive {
  const a = openTestArchive(d);
  cleanups.unshift(() => a.close());
  return a;
}

/** The chain read back in seq order: every link and the set of ids. */
function chainOf(a: Archive): { ids: Set<string>; linked: boolean; seqs: number[] } {
  const rows = a.db.prepare('SELECT seq, id, prev_hash, record_hash FROM sheets ORDER BY seq').all() as { seq: number; id: string; prev_hash: string; record_hash: string }[];
  let linked = rows.length === 0 || rows[0]!.prev_hash === '0'.repeat(64);
  for (let i = 1; i < rows.length; i++) linked &&= rows[i]!.prev_hash === rows[i - 1]!.record_hash;
  return { ids: new Set(rows.map((r) => r.id)), linked, seqs: rows.map((r) => r.seq) };
}

describe('concurrent appends', () => {
  it('25 async tasks in one process (each awaiting at random before appending) make an unbroken chain', async () => {
    const a = open(dir());
    const author = ensureAuthor(a);
    const ids = await Promise.all(
      Array.from({ length: 25 }, async (_, i) => {
        await new Promise((r) => setTimeout(r, (i * 7) % 13));
        return a.appendSheet(doseSheetInput(author)).id;
      }),
    );
    const chain = chainOf(a);
    expect(chain.linked).toBe(true);
    expect(chain.seqs).toEqual(Array.from({ length: 25 }, (_, i) => i + 1));
    expect([...chain.ids].sort()).toEqual([...ids].sort());
    expect(await a.verifyArchive({ verifyPdfSignature: fakeVerifyPdf })).toMatchObject({ valid: true, records: 25 });
  });

  it('two connections to the same file, appending alternately, share one chain', async () => {
    const d = dir();
    const a = open(d);
    const author = ensureAuthor(a);
    const b = open(d);
    for (let i = 0; i < 10; i++) (i % 2 ? b : a).appendSheet(doseSheetInput(author));
    expect(chainOf(a).linked).toBe(true);
    expect((await b.verifyArchive()).records).toBe(10);
  });

  it('4 worker processes × 8 appends, started at the same instant, make an unbroken chain of 32', async () => {
    const d = dir();
    const setup = openArchive({ dataDir: d, signerKeySecret: SECRET });
    ensureAuthor(setup);
    setup.close();
    const goFile = join(d, 'go');
    const workers = 4;
    let ready = 0;
    let release: () => void;
    const allReady = new Promise<void>((r) => (release = r));
    const running = Array.from({ length: workers }, () =>
      runChild({
        script: APPEND_LOOP,
        args: ['--data-dir', d, '--count', '8', '--pdf-bytes', '20000', '--go-file', goFile, '--jitter-ms', '4'],
        onLine: (line) => {
          if (line === 'ready' && ++ready === workers) release();
        },
        timeoutMs: 30_000,
      }),
    );
    await Promise.race([allReady, ...running]); // a worker that dies before "ready" fails the checks below instead of hanging
    writeFileSync(goFile, String(Date.now() + 100)); // every worker starts at this instant
    const outcomes = await Promise.all(running);
    for (const o of outcomes) {
      expect(o.stderr).toBe('');
      expect(o).toMatchObject({ code: 0, sawDone: true });
      expect(o.ids).toHaveLength(8);
    }
    const a = open(d);
    const chain = chainOf(a);
    expect(chain.linked).toBe(true);
    expect(chain.seqs).toEqual(Array.from({ length: 32 }, (_, i) => i + 1));
    for (const o of outcomes) for (const id of o.ids) expect(chain.ids.has(id)).toBe(true);
    // the workers really interleaved: some worker's records are not one contiguous block
    const seqOf = new Map((a.db.prepare('SELECT id, seq FROM sheets').all() as { id: string; seq: number }[]).map((r) => [r.id, r.seq]));
    const interleaved = outcomes.some((o) => {
      const s = o.ids.map((id) => seqOf.get(id)!);
      return Math.max(...s) - Math.min(...s) > 7;
    });
    expect(interleaved).toBe(true);
    expect(await a.verifyArchive({ verifyPdfSignature: fakeVerifyPdf })).toMatchObject({ valid: true, records: 32, firstBrokenId: null });
  }, 60_000);
});

describe('kill test', () => {
  it('SIGKILL mid-burst, three times: the archive opens, verifies and holds every printed id', async () => {
    const d = dir();
    const printed: string[] = [];
    for (const [round, delayMs] of [[1, 0], [2, 7], [3, 23]] as const) {
      const o = await runChild({
        script: APPEND_LOOP,
        args: ['--data-dir', d, '--pdf-bytes', '60000'],
        killAfterIds: 15 * round,
        killDelayMs: delayMs,
        timeoutMs: 20_000,
      });
      expect(o.signal, `round ${round}: killed, not finished (${o.stderr})`).toBe('SIGKILL');
      expect(o.ids.length).toBeGreaterThanOrEqual(15 * round);
      printed.push(...o.ids);

      const a = openArchive({ dataDir: d, signerKeySecret: SECRET });
      try {
        const v = await a.verifyArchive({ verifyPdfSignature: fakeVerifyPdf });
        expect(v).toMatchObject({ valid: true, firstBrokenId: null, problems: [] });
        const chain = chainOf(a);
        const missing = printed.filter((id) => !chain.ids.has(id));
        expect(missing, `round ${round}: printed but not stored`).toEqual([]);
        expect(v.records).toBeGreaterThanOrEqual(printed.length);
        // at most one append per round whose commit returned but whose id was not yet printed
        expect(v.records - printed.length).toBeLessThanOrEqual(round);
      } finally {
        a.close();
      }
    }
  }, 90_000);
});
