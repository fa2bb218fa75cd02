/**
 * The structure a reader can rely on. Files stay small enough to hold in the head: a source file over 300 lines
 * says why in a comment that starts "Why one file of this length". One test file per source file with logic
 * (DEVELOPERS.md): packages/<p>/src/<path>.ts is tested by
 * packages/<p>/test/<path>.test.ts. Files with no logic of their own (re-exporting entries, type-only files) are
 * listed below with the reason; the test also checks that each of those still has no function or class of its own,
 * so a file that grows logic has to grow its test file too.
 */
import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('../', import.meta.url));

const withoutLogic: Record<string, string> = {
  'packages/core/src/index.ts': 'the package entry: re-exports',
  'packages/core/src/internal.ts': 'the @weft/core/internal entry: re-exports',
  'packages/core/src/kernels/index.ts': 'an entry: re-exports the kernels',
  'packages/core/src/backend/index.ts': 'an entry: re-exports the backends',
  'packages/core/src/backend/forward-entry.ts': 'the @weft/core/forward entry: re-exports',
  'packages/core/src/backend/forward-javascript-entry.ts': 'the @weft/core/forward/javascript entry: re-exports',
  'packages/core/src/base-entry.ts': 'the @weft/core/base entry: re-exports',
  'packages/core/src/training-state.ts': 'types only (the training state as plain data)',
  'packages/core/src/kernels/step-records.ts': "types only (the step kernels' argument records)",
  'packages/cells/src/index.ts': 'the package entry: re-exports',
  'packages/cells/src/internal.ts': 'the @weft/cells/internal entry: re-exports',
  'packages/cells/src/kernels/index.ts': "an entry: re-exports core's step kernels",
  'packages/cells/src/description-entry.ts': 'the @weft/cells/description entry: re-exports',
  'packages/cells/src/plans/plan.ts': 'types only (the plan contract and the traced program)',
  'packages/cells/src/description-types.ts': "types only (the description's shapes; description.ts checks them)",
  'packages/cells/src/model-types.ts': "types only (a built model's options and results)",
  'packages/cli/src/pairs-types.ts': 'types only (what reading and preparing pairs gives)',
  'packages/cli/src/sweep-types.ts': "types only (a sweep's combinations and rows)",
  'packages/io/src/data/baselines-types.ts': "types only (the baselines' split, scores and options)",
  'packages/optim/src/index.ts': 'the package entry: re-exports',
  'packages/optim/src/internal.ts': 'the @weft/optim/internal entry: re-exports',
  'packages/optim/src/training/types.ts': "types only (the trainer's options, events and summary)",
  'packages/optim/src/data.ts': "the data sources' entry: re-exports of the batch shapes and the sources",
  'packages/optim/src/data/batch-types.ts': 'types only (the batch shapes every source shares)',
  'packages/optim/src/node/index.ts': 'the @weft/optim/node entry: re-exports',
  'packages/optim/src/node/shard-worker.ts': "a worker thread's script, run by threads.ts and tested through test/node/threads.test.ts",
  'packages/io/src/index.ts': 'the package entry: re-exports',
  'packages/io/src/internal.ts': 'the @weft/io/internal entry: re-exports',
  'packages/io/src/data/series-types.ts': "types only (a prepared series' shapes)",
  'packages/io/src/runtime/index.ts': 'the @weft/io/runtime entry: re-exports',
  'packages/io/src/runtime/javascript.ts': 'the @weft/io/runtime/javascript entry: re-exports',
  'packages/io/src/runtime/encoder-decoder.ts': 'the @weft/io/runtime/encoder-decoder entry: re-exports',
  'packages/io/src/onnx/index.ts': 'the @weft/io/onnx entry: re-exports',
  'packages/cli/src/index.ts': 'the package entry: re-exports',
};

function sources(folder: string): string[] {
  if (!existsSync(folder)) return [];
  return readdirSync(folder).flatMap((name) => {
    const path = join(folder, name);
    if (statSync(path).isDirectory()) return sources(path);
    return name.endsWith('.ts') && !name.endsWith('.generated.ts') && !name.endsWith('.d.ts') ? [path] : [];
  });
}

const files = readdirSync(join(root, 'packages'))
  .flatMap((p) => sources(join(root, 'packages', p, 'src')))
  .map((f) => relative(root, f).split('\\').join('/'));

describe('the tests mirror the sources', () => {
  it('give every source file with logic a test file of its own name and place', () => {
    const missing = files
      .filter((file) => withoutLogic[file] === undefined)
      .map((file) => file.replace(/\/src\//, '/test/').replace(/\.ts$/, '.test.ts'))
      .filter((test) => !existsSync(join(root, test)));
    expect(missing).toEqual([]);
  });

  it('list as without logic only files that exist and declare no function or class of their own', () => {
    for (const file of Object.keys(withoutLogic)) {
      expect(files, file).toContain(file);
      const code = readFileSync(join(root, file), 'utf8').replace(/\/\*[\s\S]*?\*\/|\/\/.*$/gm, '');
      expect(code, file).not.toMatch(/\bfunction\b|\bclass\b|=>\s*\{/);
    }
  });
});

describe('the size of source files', () => {
  it('keeps every file under 300 lines, or says why it is longer', () => {
    const wasm = sources(join(root, 'packages', 'core', 'wasm')).map((f) => relative(root, f).split('\\').join('/'));
    const long = [...files, ...wasm].filter((file) => {
      const text = readFileSync(join(root, file), 'utf8');
      return text.split('\n').length > 300 && !text.includes('Why one file of this length');
    });
    expect(long).toEqual([]);
  });
});

describe('the imports between source files', () => {
  it('form no circle, type imports included: every import points one way', () => {
    // Each file's relative imports, resolved to source files; then a depth-first search that reports the first
    // import that leads back to a file still on the search's path.
    const imports = new Map<string, string[]>();
    for (const file of files) {
      const text = readFileSync(join(root, file), 'utf8');
      const targets = [...text.matchAll(/from\s+'(\.[^']+)'/g)]
        .map((m) => join(dirname(file), m[1]).split('\\').join('/').replace(/\.js$/, '.ts'))
        .filter((target) => files.includes(target));
      imports.set(file, targets);
    }
    const circles: string[] = [];
    const state = new Map<string, 'open' | 'done'>();
    const visit = (file: string, path: string[]): void => {
      state.set(file, 'open');
      for (const target of imports.get(file) ?? []) {
        if (state.get(target) === 'open') circles.push([...path.slice(path.indexOf(target)), target].join(' → '));
        else if (state.get(target) === undefined) visit(target, [...path, target]);
      }
      state.set(file, 'done');
    };
    for (const file of files) if (state.get(file) === undefined) visit(file, [file]);
    expect(circles).toEqual([]);
  });
});

describe('the public surface of each package', () => {
  it('is stated in its README as the count of names its root exports, values and types, and the count is true', () => {
    for (const name of ['core', 'cells', 'optim', 'io', 'cli']) {
      const entry = readFileSync(join(root, 'packages', name, 'src', 'index.ts'), 'utf8').replace(/\/\*[\s\S]*?\*\/|\/\/.*$/gm, '');
      const values = new Set<string>();
      const types = new Set<string>();
      for (const m of entry.matchAll(/export\s+(type\s+)?\{([^}]*)\}/g)) {
        for (const part of m[2]
          .split(',')
          .map((n) => n.trim())
          .filter((n) => n !== ''))
          (m[1] === undefined ? values : types).add(part.split(' as ').at(-1)!.trim());
      }
      for (const m of entry.matchAll(/export\s+\*\s+as\s+(\w+)/g)) values.add(m[1]);
      const readme = readFileSync(join(root, 'packages', name, 'README.md'), 'utf8');
      expect(readme, name).toContain(`exports ${values.size + types.size} names (${values.size} values, ${types.size} types)`);
    }
  });
});
