import { fileURLToPath } from 'node:url';
import swc from 'unplugin-swc';
import { defineConfig } from 'vitest/config';

const root = fileURLToPath(new URL('.', import.meta.url));

// Vite's default esbuild transform drops decorator metadata, which Nest's DI
// reads; SWC keeps it. The `#name` subpath imports point at build output for
// Node; here they resolve to the TypeScript sources.
export default defineConfig({
  plugins: [
    swc.vite({
      jsc: {
        target: 'es2022',
        parser: { syntax: 'typescript', decorators: true },
        transform: { legacyDecorator: true, decoratorMetadata: true, useDefineForClassFields: false },
      },
    }),
  ],
  resolve: {
    alias: [{ find: /^#([a-z-]+)$/, replacement: `${root}libs/$1/src/index.ts` }],
  },
  test: {
    env: { TZ: 'UTC' },
    include: ['libs/**/*.spec.ts', 'apps/**/*.spec.ts', 'test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
    pool: 'forks',
    fileParallelism: true,
    // Three test files at a time on a two-core machine: most of a file's time is spent waiting on its own API, worker,
    // Redis, PostgreSQL or browser, so a third file fills the idle core time.
    maxWorkers: 3,
  },
});
