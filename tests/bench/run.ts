/**
 * npm run bench — throughput measured in one run, in interleaved rounds, so that ratios are comparable
 * (absolute req/s varies about ±20 % between runs on the same machine).
 *
 * The server runs in a child process on 127.0.0.1 (port chosen by the OS); autocannon
 * drives it from this process, each route for a bounded time. In-process figures
 * (balances per second, signed sheets per second) are measured here too.
 */
import { spawn } from 'node:child_process';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import autocannon from 'autocannon';
import { benchBodies } from './bodies.js';
import { measureInProcess } from './in-process.js';

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, '../..');
const seconds = Number(process.env['BENCH_SECONDS'] ?? 3);
const rounds = Number(process.env['BENCH_ROUNDS'] ?? 5);
const connections = Number(process.env['BENCH_CONNECTIONS'] ?? 50);

async function startServer(): Promise<{ port: number; stop: () => void }> {
  const child = spawn(process.execPath, ['--import', 'tsx', join(here, 'server.ts')], {
    cwd: root,
    stdio: ['ignore', 'pipe', 'inherit'],
    env: { ...process.env, NODE_ENV: 'production' },
  });
  const port = await new Promise<number>((res, rej) => {
    let buf = '';
    const timer = setTimeout(() => rej(new Error('bench server did not start within 60 s')), 60_000);
    child.stdout!.on('data', (d: Buffer) => {
      buf += d.toString();
      const m = /BENCH_PORT (\d+)/.exec(buf);
      if (m) {
        clearTimeout(timer);
        res(Number(m[1]));
      }
    });
    child.on('exit', (code) => rej(new Error(`bench server exited with ${code}`)));
  });
  return { port, stop: () => child.kill('SIGTERM') };
}

interface Target {
  name: string;
  method: 'GET' | 'POST';
  path: string;
  body?: unknown;
  /** A new body for every request (defeats the result memo: the route computes each time). */
  vary?: (i: number) => unknown;
}

async function hit(port: number, t: Target, duration: number): Promise<number> {
  const opts: autocannon.Options = {
    url: `http://127.0.0.1:${port}${t.path}`,
    method: t.method,
    connections,
    duration,
    headers: { 'content-type': 'application/json' },
  };
  if (t.body !== undefined) opts.body = JSON.stringify(t.body);
  if (t.vary) {
    let i = 0;
    const vary = t.vary;
    opts.requests = [{ setupRequest: (req) => ({ ...req, body: JSON.stringify(vary(i++)) }) }];
  }
  const result = await autocannon(opts);
  const bad = result.non2xx + result.errors + result.timeouts;
  if (bad > 0) throw new Error(`${t.name}: ${bad} failed requests (non-2xx ${result.non2xx}, errors ${result.errors})`);
  return result.requests.average;
}

const fmt = (x: number, d = 0) => x.toLocaleString('en-US', { maximumFractionDigits: d, minimumFractionDigits: d });
const median = (xs: readonly number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
};

async function main(): Promise<void> {
  const server = await startServer();
  const bodies = benchBodies();
  const targets: Target[] = [
    { name: 'bare GET /health', method: 'GET', path: '/health' },
    { name: 'POST, same bytes, no schema', method: 'POST', path: '/bench/echo-cells-raw', body: bodies.cell },
    { name: 'echo cells (zod type provider)', method: 'POST', path: '/bench/echo-cells-zod', body: bodies.cell },
    { name: 'echo cells (JSON Schema, Fastify compiled)', method: 'POST', path: '/bench/echo-cells', body: bodies.cell },
    { name: 'POST /api/v1/cells/evaluate', method: 'POST', path: '/api/v1/cells/evaluate', body: bodies.cell },
    {
      name: 'POST /api/v1/cells/evaluate, new pH each',
      method: 'POST',
      path: '/api/v1/cells/evaluate',
      vary: (i) => ({ ...bodies.cell, pH: 6 + (i % 100_000) / 100_000 }),
    },
    { name: 'echo doses (JSON Schema)', method: 'POST', path: '/bench/echo-doses', body: bodies.dose },
    { name: 'POST /api/v1/doses', method: 'POST', path: '/api/v1/doses', body: bodies.dose },
  ];
  const only = process.env['BENCH_ONLY'];
  const active = targets.filter((t) => !only || only.split(',').some((o) => t.path.includes(o)));
  // The machine's speed drifts (±20 % between runs, and within a run): every route is measured
  // in several interleaved rounds, each ratio is taken within a round, and the median is reported.
  const rps = new Map<string, number[]>(active.map((t) => [t.name, []]));
  try {
    for (const t of active) await hit(server.port, t, 1); // warm-up: JIT, caches
    for (let round = 1; round <= rounds; round++) {
      for (const t of active) rps.get(t.name)!.push(await hit(server.port, t, seconds));
      console.log(`  round ${round}: ${active.map((t) => `${t.name} ${fmt(rps.get(t.name)!.at(-1)!)}`).join(' | ')}`);
    }
  } finally {
    server.stop();
  }
  const ratio = (a: Target, b: Target) => {
    const xa = rps.get(a.name);
    const xb = rps.get(b.name);
    if (!xa || !xb) return NaN;
    return median(xa.map((x, i) => x / xb[i]!));
  };
  const [bare, raw, echoZod, echo, cells, cellsVary, echoDoses, doses] = targets as [Target, Target, Target, Target, Target, Target, Target, Target];
  const inproc = await measureInProcess();

  const rows: [string, number, number, string, boolean | null][] = [
    ['POST, same bytes, no schema / bare GET', ratio(raw, bare), 2, 'informative', null],
    ['echo (JSON Schema) / POST same bytes', ratio(echo, raw), 2, 'informative', null],
    ['echo (zod type provider) / bare GET', ratio(echoZod, bare), 2, 'informative', null],
    ['echo (JSON Schema) / bare GET', ratio(echo, bare), 2, '>= 0.50', ratio(echo, bare) >= 0.5],
    ['cells/evaluate / echo cells', ratio(cells, echo), 2, '>= 0.80', ratio(cells, echo) >= 0.8],
    ['cells/evaluate, new pH each / echo cells', ratio(cellsVary, echo), 2, 'informative', null],
    ['doses / echo doses', ratio(doses, echoDoses), 2, '>= 0.80', ratio(doses, echoDoses) >= 0.8],
    ['10-species balance, ms each', inproc.balanceMs, 3, '< 1 ms', inproc.balanceMs < 1],
    ['signed sheet / bare pdfkit page (time)', inproc.sheetRatio, 2, '<= 3.0', inproc.sheetRatio <= 3],
  ];
  console.log('');
  console.log(`Measured in one run (${rounds} interleaved rounds of ${seconds} s per route, ${connections} connections, 127.0.0.1; medians):`);
  for (const t of active) console.log(`  ${t.name.padEnd(46)} ${fmt(median(rps.get(t.name)!)).padStart(8)} req/s`);
  console.log('');
  for (const [what, value, digits, target, ok] of rows) {
    if (Number.isNaN(value)) continue;
    const verdict = ok === null ? '' : ok ? 'met' : 'NOT MET';
    console.log(`  ${what.padEnd(42)} ${fmt(value, digits).padStart(8)}   target ${target.padEnd(12)} ${verdict}`);
  }
  console.log('');
  console.log(`  balances per second (10 species)           ${fmt(1000 / inproc.balanceMs)}`);
  console.log(`  signed sheets per second (compute+render+sign+archive) ${fmt(inproc.sheetsPerSecond, 1)}`);
  console.log(`  bare one-page pdfkit documents per second  ${fmt(inproc.barePerSecond, 1)}`);
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
