import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Tests run against the TypeScript sources of each package (the type-check step builds `dist` separately).
const source = (path: string): string => fileURLToPath(new URL(path, import.meta.url));

export default defineConfig({
  resolve: {
    // Exact matches, most specific first, so that subpath entries resolve to their own sources.
    alias: [
      { find: /^@weft\/core$/, replacement: source('./packages/core/src/index.ts') },
      { find: /^@weft\/core\/internal$/, replacement: source('./packages/core/src/internal.ts') },
      { find: /^@weft\/core\/kernels$/, replacement: source('./packages/core/src/kernels/index.ts') },
      { find: /^@weft\/core\/forward$/, replacement: source('./packages/core/src/backend/forward-entry.ts') },
      { find: /^@weft\/core\/forward\/javascript$/, replacement: source('./packages/core/src/backend/forward-javascript-entry.ts') },
      { find: /^@weft\/core\/base$/, replacement: source('./packages/core/src/base-entry.ts') },
      { find: /^@weft\/cells$/, replacement: source('./packages/cells/src/index.ts') },
      { find: /^@weft\/cells\/internal$/, replacement: source('./packages/cells/src/internal.ts') },
      { find: /^@weft\/cells\/kernels$/, replacement: source('./packages/cells/src/kernels/index.ts') },
      { find: /^@weft\/cells\/description$/, replacement: source('./packages/cells/src/description-entry.ts') },
      { find: /^@weft\/optim$/, replacement: source('./packages/optim/src/index.ts') },
      { find: /^@weft\/optim\/internal$/, replacement: source('./packages/optim/src/internal.ts') },
      { find: /^@weft\/io$/, replacement: source('./packages/io/src/index.ts') },
      { find: /^@weft\/io\/internal$/, replacement: source('./packages/io/src/internal.ts') },
      { find: /^@weft\/io\/runtime$/, replacement: source('./packages/io/src/runtime/index.ts') },
      { find: /^@weft\/io\/runtime\/javascript$/, replacement: source('./packages/io/src/runtime/javascript.ts') },
      { find: /^@weft\/io\/runtime\/encoder-decoder$/, replacement: source('./packages/io/src/runtime/encoder-decoder.ts') },
      { find: /^@weft\/io\/translate$/, replacement: source('./packages/io/src/translate.ts') },
      { find: /^@weft\/io\/onnx$/, replacement: source('./packages/io/src/onnx/index.ts') },
      { find: /^@weft\/io\/node$/, replacement: source('./packages/io/src/node/index.ts') },
      { find: /^@weft\/optim\/node$/, replacement: source('./packages/optim/src/node/index.ts') },
      { find: /^@weft\/cli$/, replacement: source('./packages/cli/src/index.ts') },
    ],
  },
  test: {
    include: ['packages/*/test/**/*.test.ts', 'tests/**/*.test.ts'],
    testTimeout: 60_000,
    pool: 'forks',
  },
});
