/**
 * The runtime entry stays small: bundled with esbuild (minified, ESM, for the browser) and gzipped, it is at most
 * 12,288 bytes. Also checks what the bundle leaves out: the tape, optimisers and trainer.
 */
import { gzipSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { describe, expect, it } from 'vitest';

export async function runtimeBundle(): Promise<{ text: string; gzipBytes: number }> {
  const entry = fileURLToPath(new URL('../dist/runtime/index.js', import.meta.url));
  const result = await build({ entryPoints: [entry], bundle: true, minify: true, format: 'esm', platform: 'browser', write: false, logLevel: 'silent' });
  const code = result.outputFiles[0].contents;
  return { text: new TextDecoder().decode(code), gzipBytes: gzipSync(code, { level: 9 }).length };
}

describe('the runtime bundle', () => {
  it('is at most 12,288 bytes gzipped, and carries no tape, optimiser or trainer', async () => {
    const { text, gzipBytes } = await runtimeBundle();
    console.log(`runtime bundle: ${text.length} bytes minified, ${gzipBytes} gzipped`);
    expect(gzipBytes).toBeLessThanOrEqual(12_288);
    // Words found only in the tape, the optimisers, the trainer and the random generator.
    const present = ['reverseSweep', 'gradientOf', 'firstMoment', 'batchesPerEpoch', 'Alea'].filter((word) => text.includes(word));
    expect(present).toEqual([]);
    expect(text.includes('weft-weights')).toBe(true);
  });
});
