/**
 * The WebAssembly backend's two kernel sets (backend.ts, webassembly.ts): the standard set unless one is named; the
 * relaxed set available exactly where the engine validates relaxed SIMD, which a module written here byte by byte
 * from the WebAssembly binary format (core specification §5; the relaxed SIMD proposal's opcode 0xfd 0x105 for
 * f32x4.relaxed_madd) tests independently; the
 * relaxed set's products stay within the f32 error bound of a product of that inner size (Higham, "Accuracy and
 * Stability of Numerical Algorithms", §3.1: |ŝ − s| ≤ γ_k Σ|a_i b_i|, γ_k = k·u / (1 − k·u), u = 2^−24), as the
 * standard set's do, and its attention kernels agree with the JavaScript twins within the backends' 1e-5; naming a
 * set that does not exist, or the relaxed set where the engine lacks it, is a one-line error.
 */
import { afterEach, describe, expect, it } from 'vitest';
import {
  createWebAssemblyBackend,
  environmentKernelChoice,
  javascriptKernels,
  kernels,
  defaultKernelSet,
  relaxedKernelsUnavailable,
  webAssemblyUnavailable,
} from '@weft/core';
import type { Backend } from '@weft/core';
import { agreeWithTwin, twinArrays } from './twins.js';

const available = webAssemblyUnavailable() === null;
/** (a, b, c) → f32x4.relaxed_madd(a, b, c): magic and version, a type, a function, its code. */
const relaxedMadd = Uint8Array.of(
  0,
  97,
  115,
  109,
  1,
  0,
  0,
  0,
  1,
  8,
  1,
  96,
  3,
  123,
  123,
  123,
  1,
  123,
  3,
  2,
  1,
  0,
  10,
  13,
  1,
  11,
  0,
  32,
  0,
  32,
  1,
  32,
  2,
  253,
  133,
  2,
  11,
);
const engineHasRelaxed = available && WebAssembly.validate(relaxedMadd);
const original = process.env.WEFT_KERNELS;

afterEach(() => {
  if (original === undefined) delete process.env.WEFT_KERNELS;
  else process.env.WEFT_KERNELS = original;
});

describe.skipIf(!available)('the WebAssembly kernel sets', () => {
  it('use the standard set unless WEFT_KERNELS names one, and offer the relaxed set exactly where the engine validates relaxed SIMD', () => {
    delete process.env.WEFT_KERNELS;
    console.log(`this engine: relaxed SIMD ${engineHasRelaxed ? 'validated' : 'not validated'}`);
    expect(relaxedKernelsUnavailable() === null).toBe(engineHasRelaxed);
    expect(defaultKernelSet()).toBe('standard');
    expect(createWebAssemblyBackend({ memoryBytes: 1048576 }).kernelSet).toBe('standard');
    process.env.WEFT_KERNELS = 'relaxed';
    expect(environmentKernelChoice()).toBe('relaxed');
    expect(defaultKernelSet()).toBe('relaxed');
    process.env.WEFT_KERNELS = 'fastest';
    expect(() => defaultKernelSet()).toThrowError(/WEFT_KERNELS.*'standard' or 'relaxed'.*"fastest"/);
  });

  it('name their set and say it in one line', () => {
    const standard = createWebAssemblyBackend({ memoryBytes: 1048576, kernels: 'standard' });
    expect(standard.kernelSet).toBe('standard');
    expect(standard.describe()).toMatch(/^webassembly \(f32x4 SIMD kernels, 1 MiB reserved\)$/);
    expect(() => createWebAssemblyBackend({ memoryBytes: 1048576, kernels: 'fast' as never })).toThrowError(/kernels.*'standard' or 'relaxed'.*"fast"/);
  });

  it.skipIf(engineHasRelaxed)('refuse the relaxed set in one line where the engine lacks relaxed SIMD', () => {
    expect(() => createWebAssemblyBackend({ memoryBytes: 1048576, kernels: 'relaxed' })).toThrowError(/relaxed SIMD.*use the 'standard' kernels/);
  });

  it.skipIf(!engineHasRelaxed)('compute products within the f32 error bound, as the standard set does, and attention within 1e-5 of the twins', () => {
    const relaxed: Backend = createWebAssemblyBackend({ memoryBytes: 16 * 1048576, kernels: 'relaxed' });
    expect(relaxed.describe()).toMatch(/relaxed SIMD kernels \(fused multiply-adds\)/);
    const u = 2 ** -24;
    let worstRatio = 0;
    let differing = 0;
    for (const [rows, inner, cols] of [
      [32, 192, 512],
      [5, 7, 9],
      [1, 32, 256],
      [33, 65, 129],
    ]) {
      const { wasm, js } = twinArrays(relaxed, [rows * cols, rows * inner, inner * cols], rows + inner + cols);
      const [out, a, b] = wasm as Float32Array[];
      const [reference, a2, b2] = js as Float32Array[];
      const shape = kernels.productShape(rows, inner, cols);
      relaxed.kernels.matmul(out, a, b, shape);
      javascriptKernels.matmul(reference, a2, b2, shape);
      const gamma = (inner * u) / (1 - inner * u);
      for (let r = 0; r < rows; r++) {
        for (let c = 0; c < cols; c++) {
          let magnitude = 0;
          for (let i = 0; i < inner; i++) magnitude += Math.abs(a2[r * inner + i] * b2[i * cols + c]);
          const gap = Math.abs(out[r * cols + c] - reference[r * cols + c]);
          worstRatio = Math.max(worstRatio, gap / (gamma * magnitude + 2 * u * Math.abs(reference[r * cols + c]) + 1e-30));
          if (gap > 0) differing++;
        }
      }
    }
    console.log(`relaxed matmul: worst difference ${worstRatio.toFixed(4)} of the f32 error bound; ${differing} entries not the JavaScript twin's bits`);
    expect(worstRatio).toBeLessThanOrEqual(1);
    const shape = kernels.attentionShape(5, 3, 9, 32, 48, Int32Array.of(9, 4, 0));
    agreeWithTwin(relaxed, [5 * 3 * 9, 5 * 3 * 32, 9 * 3 * 32], (k, [e, q, key]) => k.attentionScores(e!, q!, key!, shape), false, 'relaxed-scores');
    agreeWithTwin(relaxed, [5 * 3 * 48, 5 * 3 * 9, 9 * 3 * 48], (k, [c, w, v]) => k.attentionContext(c!, w!, v!, shape), false, 'relaxed-context', 0, 1);
  });
});
