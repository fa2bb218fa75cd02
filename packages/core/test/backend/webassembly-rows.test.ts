/**
 * The WebAssembly twins of the training step's offset copies and sums, the column blocks, the update's checks and the softmax
 * cross-entropy (core/wasm/rows.ts, wrapped in webassembly-table.ts) against their JavaScript kernels: bit for bit
 * where the twin's comment promises it (the copies and sums, the index of the first non-finite entry), the sum of
 * squares within f64 rounding (relative 1e-12; its order differs), the cross-entropy within the backends'
 * |a − b| ≤ 1e-5·max(1, |a|, |b|); lengths with and without a SIMD tail.
 */
import { describe, expect, it } from 'vitest';
import { createWebAssemblyBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';
import { agreeWithTwin, twinArrays } from './twins.js';

const available = webAssemblyUnavailable() === null;

describe.skipIf(!available)('the WebAssembly twins of the step loops and the update checks', () => {
  const backend = createWebAssemblyBackend({ memoryBytes: 16 * 1048576 });

  it('copy and add at offsets bit for bit as the JavaScript kernels do', () => {
    for (const length of [1, 3, 4, 17, 64]) {
      agreeWithTwin(backend, [length + 9, length + 5], (k, [t, s]) => k.copyAt(t!, 7, s!, 2, length), true, `copy-${length}`);
      agreeWithTwin(backend, [length + 9, length + 5], (k, [t, s]) => k.addAt(t!, 3, s!, 5, length), true, `add-${length}`);
    }
  });

  it('copy and add column blocks bit for bit as the JavaScript kernels do', () => {
    for (const [rows, cols, width, first] of [
      [3, 5, 12, 2],
      [32, 128, 256, 128],
      [1, 1, 1, 0],
    ]) {
      const block = { rows, cols, width, first };
      for (const name of ['copyToColumns', 'addToColumns'] as const)
        agreeWithTwin(backend, [rows * width, rows * cols], (k, [wide, narrow]) => k[name](wide!, narrow!, block), true, `${name}-${rows}`);
      for (const name of ['copyFromColumns', 'addFromColumns'] as const)
        agreeWithTwin(backend, [rows * cols, rows * width], (k, [narrow, wide]) => k[name](narrow!, wide!, block), true, `${name}-${rows}`);
    }
  });

  it('find the same first non-finite entry, in the vector part and in the tail, and none in finite arrays', () => {
    for (const length of [1, 7, 8, 33]) {
      for (const bad of [-1, 0, 5, length - 1]) {
        if (bad >= length) continue;
        for (const value of [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY]) {
          const { wasm, js } = twinArrays(backend, [length], `finite-${length}-${bad}`);
          if (bad >= 0) {
            wasm[0]![bad] = value;
            js[0]![bad] = value;
          }
          const found = backend.kernels.firstNonFinite(wasm[0]!, length);
          expect(found).toBe(javascriptKernels.firstNonFinite(js[0]!, length));
          expect(found).toBe(bad);
        }
      }
    }
  });

  it('sum squares to the JavaScript kernel within f64 rounding', () => {
    for (const length of [1, 6, 1000, 100_003]) {
      const { wasm, js } = twinArrays(backend, [length], `squares-${length}`, -3, 3);
      const expected = javascriptKernels.sumOfSquares(js[0]!, length);
      expect(Math.abs(backend.kernels.sumOfSquares(wasm[0]!, length) - expected) / expected).toBeLessThan(1e-12);
    }
  });

  it('agree on the softmax cross-entropy within 1e-5, logits of ±80 included, probabilities in place or not', () => {
    for (const [rows, classes] of [
      [5, 64],
      [3, 7],
      [1, 1],
      [32, 130],
    ]) {
      const targets = Int32Array.from({ length: rows }, (_, r) => (r * 7) % classes);
      for (const spread of [2, 80]) {
        agreeWithTwin(
          backend,
          [rows, rows * classes, rows * classes],
          (k, [losses, p, logits]) => k.crossEntropyRows(losses!, p!, logits!, targets, rows, classes),
          false,
          `entropy-${rows}-${classes}-${spread}`,
          -spread,
          spread,
        );
        agreeWithTwin(
          backend,
          [rows, rows * classes],
          (k, [losses, logits]) => k.crossEntropyRows(losses!, logits!, logits!, targets, rows, classes),
          false,
          `entropy-in-place-${rows}-${classes}-${spread}`,
          -spread,
          spread,
        );
      }
    }
  });
});
