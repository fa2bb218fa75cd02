/**
 * The runtime entries stay small: bundled with esbuild (minified, ESM, for the browser) and gzipped,
 * `@weft/io/runtime` (WebAssembly SIMD forward kernels included) is at most 20 KiB and
 * `@weft/io/runtime/javascript` (no WebAssembly) at most 12 KiB. Also checks what the bundles leave out: the
 * tape, optimisers, trainer, the training kernels' module; and that only the first carries WebAssembly bytes.
 */
import { gzipSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { describe, expect, it } from 'vitest';

export async function runtimeBundle(entryFile = 'index.js'): Promise<{ text: string; gzipBytes: number }> {
  const entry = fileURLToPath(new URL(`../dist/runtime/${entryFile}`, import.meta.url));
  const result = await build({ entryPoints: [entry], bundle: true, minify: true, format: 'esm', platform: 'browser', write: false, logLevel: 'silent' });
  const code = result.outputFiles[0].contents;
  return { text: new TextDecoder().decode(code), gzipBytes: gzipSync(code, { level: 9 }).length };
}

// Words found only in the tape, the optimisers, the trainer, the random generator and the training kernels.
const absent = ['reverseSweep', 'gradientOf', 'firstMoment', 'batchesPerEpoch', 'Alea', 'lstmStepBackward', 'adamUpdate'];
// "\0asm", the first four bytes of every WebAssembly module (WebAssembly core specification, binary format), in base64.
const wasmMagic = 'AGFzbQ';

describe('the runtime bundles', () => {
  it('with WebAssembly: at most 20,480 bytes gzipped, carrying no tape, optimiser, trainer or training kernels', async () => {
    const { text, gzipBytes } = await runtimeBundle('index.js');
    console.log(`runtime bundle (webassembly + javascript): ${text.length} bytes minified, ${gzipBytes} gzipped`);
    expect(gzipBytes).toBeLessThanOrEqual(20_480);
    expect(absent.filter((word) => text.includes(word))).toEqual([]);
    expect(text.includes('weft-weights')).toBe(true);
    expect(text.split(wasmMagic).length - 1).toBe(1);
  });

  it('for JavaScript alone: at most 12,288 bytes gzipped, with no WebAssembly module in it', async () => {
    const { text, gzipBytes } = await runtimeBundle('javascript.js');
    console.log(`runtime bundle (javascript only): ${text.length} bytes minified, ${gzipBytes} gzipped`);
    expect(gzipBytes).toBeLessThanOrEqual(12_288);
    expect(absent.filter((word) => text.includes(word))).toEqual([]);
    expect(text.includes(wasmMagic)).toBe(false);
    expect(text.includes('weft-weights')).toBe(true);
  });
});
