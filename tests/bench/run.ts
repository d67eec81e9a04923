/**
 * npm run bench — throughput measured in ONE run so that ratios are comparable
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
const seconds = Number(process.env['BENCH_SECONDS'] ?? 5);
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
  const result = await autocannon(opts);
  const bad = result.non2xx + result.errors + result.timeouts;
  if (bad > 0) throw new Error(`${t.name}: ${bad} failed requests (non-2xx ${result.non2xx}, errors ${result.errors})`);
  return result.requests.average;
}

const fmt = (x: number, d = 0) => x.toLocaleString('en-US', { maximumFractionDigits: d, minimumFractionDigits: d });

async function main(): Promise<void> {
  const server = await startServer();
  const bodies = benchBodies();
  const targets: Target[] = [
    { name: 'bare GET /health', method: 'GET', path: '/health' },
    { name: 'echo cells (zod type provider)', method: 'POST', path: '/bench/echo-cells-zod', body: bodies.cell },
    { name: 'echo cells (JSON Schema, Fastify compiled)', method: 'POST', path: '/bench/echo-cells', body: bodies.cell },
    { name: 'POST /api/v1/cells/evaluate', method: 'POST', path: '/api/v1/cells/evaluate', body: bodies.cell },
    { name: 'echo doses (JSON Schema)', method: 'POST', path: '/bench/echo-doses', body: bodies.dose },
    { name: 'POST /api/v1/doses', method: 'POST', path: '/api/v1/doses', body: bodies.dose },
  ];
  const rps: Record<string, number> = {};
  const only = process.env['BENCH_ONLY'];
  try {
    for (const t of targets) {
      if (only && !only.split(',').some((o) => t.path.includes(o))) continue;
      await hit(server.port, t, 1); // warm-up: JIT, caches
      rps[t.name] = await hit(server.port, t, seconds);
      console.log(`  ${t.name.padEnd(46)} ${fmt(rps[t.name]!).padStart(8)} req/s`);
    }
  } finally {
    server.stop();
  }
  const r = (a: string, b: string) => rps[a]! / rps[b]!;
  const inproc = await measureInProcess();

  const rows: [string, string, string, boolean][] = [
    ['echo (zod type provider) / bare GET', fmt(r(targets[1]!.name, targets[0]!.name), 2), 'informative', true],
    ['echo (JSON Schema) / bare GET', fmt(r(targets[2]!.name, targets[0]!.name), 2), '>= 0.50', r(targets[2]!.name, targets[0]!.name) >= 0.5],
    ['cells/evaluate / echo cells', fmt(r(targets[3]!.name, targets[2]!.name), 2), '>= 0.80', r(targets[3]!.name, targets[2]!.name) >= 0.8],
    ['doses / echo doses', fmt(r(targets[5]!.name, targets[4]!.name), 2), '>= 0.80', r(targets[5]!.name, targets[4]!.name) >= 0.8],
    ['10-species balance, ms each', fmt(inproc.balanceMs, 3), '< 1 ms', inproc.balanceMs < 1],
    ['signed sheet / bare pdfkit page (time)', fmt(inproc.sheetRatio, 2), '<= 3.0', inproc.sheetRatio <= 3],
  ];
  console.log('');
  console.log(`Measured in one run (${seconds} s per route, ${connections} connections, 127.0.0.1):`);
  for (const [what, value, target, ok] of rows) console.log(`  ${what.padEnd(42)} ${value.padStart(8)}   target ${target.padEnd(12)} ${ok ? 'met' : 'NOT MET'}`);
  console.log('');
  console.log(`  balances per second (10 species)           ${fmt(1000 / inproc.balanceMs)}`);
  console.log(`  signed sheets per second (compute+render+sign+archive) ${fmt(inproc.sheetsPerSecond, 1)}`);
  console.log(`  bare one-page pdfkit documents per second  ${fmt(inproc.barePerSecond, 1)}`);
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
