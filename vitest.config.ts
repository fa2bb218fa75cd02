import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Tests run against the TypeScript sources of each package (the type-check step builds `dist` separately).
const source = (path: string): string => fileURLToPath(new URL(path, import.meta.url));

export default defineConfig({
  resolve: {
    alias: {
      '@weft/core': source('./packages/core/src/index.ts'),
      '@weft/cells': source('./packages/cells/src/index.ts'),
      '@weft/optim': source('./packages/optim/src/index.ts'),
    },
  },
  test: {
    include: ['packages/*/test/**/*.test.ts', 'tests/**/*.test.ts'],
    testTimeout: 60_000,
    pool: 'forks',
  },
});
