/**
 * The WebAssembly backend's kernel table (webassembly-table.ts): it has every kernel of the table, and an entry given
 * arrays outside the backend's memory (an ordinary f32 array, or f64) runs the JavaScript kernel, bit for bit. The
 * SIMD twins' agreement with the JavaScript kernels, kernel by kernel, is webassembly.test.ts's.
 */
import { describe, expect, it } from 'vitest';
import { KERNEL_NAMES, Random, createWebAssemblyBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';

const available = webAssemblyUnavailable() === null;

describe.skipIf(!available)('the WebAssembly kernel table', () => {
  const backend = createWebAssemblyBackend({ memoryBytes: 16 * 1048576 });

  it('has every kernel the table names', () => {
    expect(KERNEL_NAMES.filter((name) => typeof backend.kernels[name] !== 'function')).toEqual([]);
  });

  it('runs the JavaScript kernel, bit for bit, on arrays outside its memory', () => {
    const random = new Random('table-fallback');
    for (const make of [(n: number) => new Float32Array(n), (n: number) => new Float64Array(n)]) {
      const a = make(37).map(() => random.between(-2, 2));
      const b = make(37 * 5).map(() => random.between(-2, 2));
      const ours = make(5);
      const theirs = make(5);
      backend.kernels.matmul(ours, a, b, { rows: 1, inner: 37, cols: 5 });
      javascriptKernels.matmul(theirs, a, b, { rows: 1, inner: 37, cols: 5 });
      expect(Array.from(ours)).toEqual(Array.from(theirs));
      backend.kernels.sigmoid(ours, a, 5);
      javascriptKernels.sigmoid(theirs, a, 5);
      expect(Array.from(ours)).toEqual(Array.from(theirs));
    }
  });
});
