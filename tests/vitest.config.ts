import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Kept under tests/ so that the top level holds only what DEVELOPERS.md lists;
// `npm test` passes it with --config, and the root is the project folder.
export default defineConfig({
  test: {
    root: fileURLToPath(new URL('..', import.meta.url)),
    include: ['tests/**/*.test.ts'],
    testTimeout: 30_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
