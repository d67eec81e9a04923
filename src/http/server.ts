/**
 * The only file that listens. HOST (default 127.0.0.1), PORT (default 8080),
 * DATA_DIR (default reports/), BOOTSTRAP_TOKEN (first admin's token), LOG_LEVEL,
 * RATE_LIMIT_PER_MINUTE (requests per token per route on the routes that need a token; default 120).
 */
import { resolve } from 'node:path';
import { buildApp } from './app.js';
import { isDomainError } from '../core/errors.js';

const host = process.env['HOST'] ?? '127.0.0.1';
const portText = process.env['PORT'] ?? '8080';
const port = Number(portText);
if (!Number.isInteger(port) || port < 0 || port > 65535) {
  console.error(`PORT must be a whole number from 0 to 65535; got "${portText}".`);
  process.exit(2);
}
const dataDir = resolve(process.env['DATA_DIR'] ?? 'reports');
const rateText = process.env['RATE_LIMIT_PER_MINUTE'];
const rateLimitPerMinute = rateText === undefined ? undefined : Number(rateText);
if (rateLimitPerMinute !== undefined && (!Number.isInteger(rateLimitPerMinute) || rateLimitPerMinute < 1 || rateLimitPerMinute > 1_000_000)) {
  console.error(`RATE_LIMIT_PER_MINUTE must be a whole number from 1 to 1000000; got "${rateText}".`);
  process.exit(2);
}

let app: Awaited<ReturnType<typeof buildApp>>;
try {
  app = await buildApp({
  dataDir,
  logger: { level: process.env['LOG_LEVEL'] ?? 'info' },
  ...(process.env['BOOTSTRAP_TOKEN'] ? { bootstrapToken: process.env['BOOTSTRAP_TOKEN'] } : {}),
  ...(rateLimitPerMinute !== undefined ? { rateLimitPerMinute } : {}),
  onAdminToken: (token) => {
    console.log('');
    console.log('  A first admin user was created. Its bearer token is shown this once:');
    console.log(`    ${token}`);
    console.log('  Keep it safe; it is stored only as a hash.');
    console.log('');
  },
  });
} catch (err) {
  if (isDomainError(err)) {
    console.error(`oxidant-dosing could not start: ${err.detail}`);
    process.exit(1);
  }
  throw err;
}

const shutdown = async (signal: string) => {
  app.log.info(`${signal} received, closing`);
  await app.close();
  process.exit(0);
};
process.on('SIGINT', () => void shutdown('SIGINT'));
process.on('SIGTERM', () => void shutdown('SIGTERM'));

try {
  const address = await app.listen({ host, port });
  console.log(`oxidant-dosing listening on ${address}  (API docs: ${address}/docs, data: ${dataDir})`);
} catch (err) {
  console.error(`Could not listen on ${host}:${port}: ${(err as Error).message}`);
  process.exit(1);
}
