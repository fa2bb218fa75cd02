/**
 * Every public entry of every package, bundled as a user's bundler bundles it: esbuild (tree shaking on, minified,
 * ESM; for the browser, except the Node-only entries `@weft/optim/node`, `@weft/io/node` and `@weft/cli`, bundled
 * for Node), the packages resolved through their `exports`. Each bundle builds with no warning at all, and runs: the
 * bundled module gives the same exports as the entry itself, and its code does what the entry does (a seeded draw,
 * a built model's parameter count, a runtime's forecast), so no module with side effects was dropped.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { build } from 'esbuild';
import { afterAll, describe, expect, it } from 'vitest';

const root = fileURLToPath(new URL('..', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-bundles-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const nodeOnly = new Set(['@weft/optim/node', '@weft/io/node', '@weft/cli']);
const entries = [
  '@weft/core',
  '@weft/core/kernels',
  '@weft/core/forward',
  '@weft/core/forward/javascript',
  '@weft/core/base',
  '@weft/cells',
  '@weft/cells/kernels',
  '@weft/cells/description',
  '@weft/optim',
  '@weft/optim/node',
  '@weft/io',
  '@weft/io/runtime',
  '@weft/io/runtime/javascript',
  '@weft/io/runtime/encoder-decoder',
  '@weft/io/translate',
  '@weft/io/onnx',
  '@weft/io/node',
  '@weft/cli',
];

/** The entry bundled as an app that re-exports it, built with esbuild, written to a file; its warnings. */
async function bundled(entry: string): Promise<{ path: string; warnings: string[] }> {
  const result = await build({
    stdin: { contents: `export * from '${entry}';`, resolveDir: root, loader: 'js' },
    bundle: true,
    minify: true,
    treeShaking: true,
    format: 'esm',
    platform: nodeOnly.has(entry) ? 'node' : 'browser',
    write: false,
    logLevel: 'silent',
  });
  const path = join(folder, `${entry.replace(/[@/]/g, '_')}.mjs`);
  writeFileSync(path, result.outputFiles[0].contents);
  return { path, warnings: result.warnings.map((w) => `${w.location?.file ?? ''}: ${w.text}`) };
}

describe('every public entry, bundled by esbuild', () => {
  for (const entry of entries) {
    it(`${entry}: builds with no warning and gives the entry's exports`, async () => {
      const { path, warnings } = await bundled(entry);
      expect(warnings).toEqual([]);
      const bundle = (await import(pathToFileURL(path).href)) as Record<string, unknown>;
      const original = (await import(entry)) as Record<string, unknown>;
      expect(Object.keys(bundle).sort()).toEqual(Object.keys(original).sort());
      expect(Object.keys(bundle).length).toBeGreaterThan(0);
    }, 60_000);
  }

  it('runs: a seeded draw, a model built and run by the bundled runtime, the same numbers as the entries give', async () => {
    const core = (await import(pathToFileURL((await bundled('@weft/core')).path).href)) as typeof import('@weft/core');
    const cells = (await import(pathToFileURL((await bundled('@weft/cells')).path).href)) as typeof import('@weft/cells');
    const io = (await import(pathToFileURL((await bundled('@weft/io')).path).href)) as typeof import('@weft/io');
    const runtimeEntry = (await import(pathToFileURL((await bundled('@weft/io/runtime')).path).href)) as typeof import('@weft/io/runtime');
    const { Random } = await import('@weft/core');
    expect(new core.Random('bundles').uniform()).toBe(new Random('bundles').uniform());
    const model = cells.buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 1 } }, { seed: 2 });
    const text = await io.writeWeightFile(model.description, io.modelTensors(model));
    const runtime = await runtimeEntry.createRuntime(text);
    // The default backend installed by the bundled entry: WebAssembly where SIMD runs, as unbundled.
    const { createRuntime } = await import('@weft/io/runtime');
    const reference = await createRuntime(text);
    expect(runtime.backend.name).toBe(reference.backend.name);
    expect(Array.from(runtime.streams(1).step(Float32Array.of(0.5, -1)))).toEqual(Array.from(reference.streams(1).step(Float32Array.of(0.5, -1))));
  }, 60_000);
});
