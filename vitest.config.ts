import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Tests run on the TypeScript sources: the workspace packages resolve to src/.
const src = (pkg: string) => fileURLToPath(new URL(`./packages/${pkg}/src/index.ts`, import.meta.url));

export default defineConfig({
  resolve: {
    alias: [
      {
        find: /^@intradyne\/core\/testing$/,
        replacement: fileURLToPath(new URL('./packages/core/src/testing/index.ts', import.meta.url)),
      },
      { find: /^@intradyne\/core$/, replacement: src('core') },
      { find: /^@intradyne\/metrics$/, replacement: src('metrics') },
      { find: /^@intradyne\/io$/, replacement: src('io') },
    ],
  },
  test: {
    include: ['packages/*/test/**/*.test.ts', 'benchmarks/test/**/*.test.ts', 'docs/test/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
