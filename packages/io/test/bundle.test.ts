/**
 * The runtime entries stay small: bundled with esbuild (minified, ESM, for the browser) and gzipped,
 * `@weft/io/runtime` (WebAssembly SIMD forward kernels included) is at most 25,088 bytes and `@weft/io/runtime/javascript`
 * (no WebAssembly) at most 15,872 (23.5 and 14.5 KiB until the kernels took named argument records, whose field names
 * a minifier keeps: about 2.2 KB minified, 0.9 KB gzipped; 24,960 and 15,616 until `Runtime.run` walked the layers
 * through whole-run.ts, the one walk the encoder-decoder's runs share, which the streaming entries then carry:
 * about 0.36 KB gzipped); `@weft/io/runtime/encoder-decoder` (beam search, attention, WebAssembly) at
 * most 28,672 bytes (26 KiB before its decodings ran a bidirectional encoder through buffers made once, whole-run.ts;
 * 28,160 before its attention ran on the attention kernels it shares with training, core/src/kernels/attention.ts:
 * about 1.2 KB minified, 0.46 KB gzipped), a budget of its own so the streaming entries do not carry it. Each budget grew by 2–2.5 KiB (from
 * 20,736, 12,288 and 24,576) when the runtime began to run any cell through its step plan (cells/src/plans: the
 * tracer and the traced program's step) and the ragged convention's shared arithmetic (cells/src/sequence-rows.ts),
 * so that a cell of your own runs where the built-in ones do. Also checks what the bundles leave out: the
 * tape, optimisers, trainer, the training kernels' module; and that only the first carries WebAssembly bytes.
 * The bundles are built with code splitting, as a bundler builds a page: the plain-TypeScript SHA-256 (used only
 * where there is no Web Crypto, on pages that are not secure contexts) is a chunk of its own, loaded on demand;
 * the budgets are for the entry chunk, and the lazy chunks' sizes are printed and bounded separately (the other is
 * the reader of weight files given in forms other than text).
 *
 * An app bundled as a bundler bundles one (esbuild, tree shaking on, the packages resolved through their exports)
 * that imports `Runtime` alone, and not `createRuntime`, keeps the default WebAssembly chooser: `"sideEffects"`
 * names the module whose import installs it and the two entries that import it, so no bundler may drop it (esbuild
 * warned and dropped it when the packages said they had no side effects at all; rollup dropped the import itself
 * while the entries importing it were listed as free of side effects: tests/installed-packages.test.ts bundles the
 * installed tarballs with both). Every runtime entry bundles with zero warnings.
 */
import { gzipSync } from 'node:zlib';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { build } from 'esbuild';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { describe, expect, it } from 'vitest';

export async function runtimeBundle(
  entryFile = 'index.js',
): Promise<{ text: string; gzipBytes: number; lazy: { name: string; text: string; gzipBytes: number }[] }> {
  const entry = fileURLToPath(new URL(`../dist/runtime/${entryFile}`, import.meta.url));
  const result = await build({
    entryPoints: [entry],
    bundle: true,
    minify: true,
    format: 'esm',
    platform: 'browser',
    write: false,
    splitting: true,
    outdir: 'bundle',
    logLevel: 'silent',
  });
  const chunks = result.outputFiles.map((file) => ({
    name: basename(file.path),
    text: new TextDecoder().decode(file.contents),
    gzipBytes: gzipSync(file.contents, { level: 9 }).length,
  }));
  const main = chunks.find((chunk) => chunk.name === entryFile);
  if (main === undefined) throw new Error(`esbuild wrote no ${entryFile}`);
  return { text: main.text, gzipBytes: main.gzipBytes, lazy: chunks.filter((chunk) => chunk !== main) };
}

// The first round constant of SHA-256 (FIPS 180-4 §4.2.2), 0x428a2f98, as minified code writes it.
const sha256Constant = String(0x428a2f98);

// Two chunks load on demand: the SHA-256 fallback, and the reader of weight files given as bytes, a Response, a URL
// or a parsed object (text needs neither).
function expectLazySha256(bundle: Awaited<ReturnType<typeof runtimeBundle>>): void {
  expect(bundle.text.includes(sha256Constant)).toBe(false);
  const named = (name: string) => bundle.lazy.find((chunk) => chunk.name.replace(/-\w+\.js$/, '') === name);
  expect(bundle.lazy.map((chunk) => chunk.name.replace(/-\w+\.js$/, '')).sort()).toEqual(['sha256', 'source-forms']);
  expect(named('sha256')!.text.includes(sha256Constant)).toBe(true);
  expect(named('sha256')!.gzipBytes).toBeLessThanOrEqual(1_536);
  expect(named('source-forms')!.gzipBytes).toBeLessThanOrEqual(1_024);
}

// Words found only in the tape, the optimisers, the trainer, the random generator and the training kernels.
const absent = ['reverseSweep', 'gradientOf', 'firstMoment', 'batchesPerEpoch', 'Alea', 'lstmStepBackward', 'adamUpdate'];
// "\0asm", the first four bytes of every WebAssembly module (WebAssembly core specification, binary format), in base64.
const wasmMagic = 'AGFzbQ';

describe('the runtime bundles', () => {
  it('with WebAssembly: at most 25,088 bytes gzipped (the SHA-256 fallback in a lazy chunk), carrying no tape, optimiser, trainer or training kernels', async () => {
    const bundle = await runtimeBundle('index.js');
    const { text, gzipBytes } = bundle;
    console.log(
      `runtime bundle (webassembly + javascript): ${text.length} bytes minified, ${gzipBytes} gzipped; lazy chunks ${bundle.lazy.map((c) => `${c.name} ${c.gzipBytes}`).join(', ')} gzipped`,
    );
    expectLazySha256(bundle);
    expect(gzipBytes).toBeLessThanOrEqual(25_088);
    expect(absent.filter((word) => text.includes(word))).toEqual([]);
    expect(text.includes('weft-weights')).toBe(true);
    expect(text.split(wasmMagic).length - 1).toBe(1);
  });

  it('for JavaScript alone: at most 15,872 bytes gzipped (the SHA-256 fallback in a lazy chunk), with no WebAssembly module in it', async () => {
    const bundle = await runtimeBundle('javascript.js');
    const { text, gzipBytes } = bundle;
    console.log(
      `runtime bundle (javascript only): ${text.length} bytes minified, ${gzipBytes} gzipped; lazy chunks ${bundle.lazy.map((c) => `${c.name} ${c.gzipBytes}`).join(', ')} gzipped`,
    );
    expectLazySha256(bundle);
    expect(gzipBytes).toBeLessThanOrEqual(15_872);
    expect(absent.filter((word) => text.includes(word))).toEqual([]);
    expect(text.includes(wasmMagic)).toBe(false);
    expect(text.includes('weft-weights')).toBe(true);
  });

  it('for encoder-decoders (an entry of its own, WebAssembly included): at most 28,672 bytes gzipped, with no tape, optimiser or trainer', async () => {
    const bundle = await runtimeBundle('encoder-decoder.js');
    const { text, gzipBytes } = bundle;
    console.log(
      `runtime bundle (encoder-decoder): ${text.length} bytes minified, ${gzipBytes} gzipped; lazy chunks ${bundle.lazy.map((c) => `${c.name} ${c.gzipBytes}`).join(', ')} gzipped`,
    );
    expectLazySha256(bundle);
    expect(gzipBytes).toBeLessThanOrEqual(28_672);
    expect(absent.filter((word) => text.includes(word))).toEqual([]);
    expect(text.split(wasmMagic).length - 1).toBe(1);
  });

  it('keep the default WebAssembly chooser in an app that imports Runtime alone, and bundle every runtime entry with no warning', async () => {
    const folder = mkdtempSync(join(tmpdir(), 'weft-bundle-'));
    try {
      const here = fileURLToPath(new URL('.', import.meta.url));
      const app =
        "import { Runtime, readWeightFile } from '@weft/io/runtime';\nexport async function backendOf(text) { return new Runtime(await readWeightFile(text)).backend.name; }\n";
      const result = await build({
        stdin: { contents: app, resolveDir: here, sourcefile: 'app.js' },
        bundle: true,
        format: 'esm',
        platform: 'node',
        write: false,
        logLevel: 'silent',
      });
      expect(result.warnings.map((w) => w.text)).toEqual([]);
      const file = join(folder, 'app.mjs');
      writeFileSync(file, result.outputFiles[0].contents);
      const { backendOf } = (await import(pathToFileURL(file).href)) as { backendOf: (text: string) => Promise<string> };
      const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 3 }], readout: { width: 1 } }, { seed: 1 });
      expect(await backendOf(await writeWeightFile(model.description, modelTensors(model)))).toBe(
        process.env.WEFT_BACKEND === 'javascript' ? 'javascript' : 'webassembly',
      );
      for (const entry of ['runtime', 'runtime/javascript', 'runtime/encoder-decoder', 'translate']) {
        const bundled = await build({
          stdin: { contents: `export * from '@weft/io/${entry}';\n`, resolveDir: here },
          bundle: true,
          format: 'esm',
          platform: 'browser',
          write: false,
          logLevel: 'silent',
        });
        expect(bundled.warnings.map((w) => `${entry}: ${w.text}`)).toEqual([]);
      }
    } finally {
      rmSync(folder, { recursive: true, force: true });
    }
  });
});
