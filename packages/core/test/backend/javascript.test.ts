import { describe, expect, it } from 'vitest';
import { createWebAssemblyBackend, javascriptBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';

describe('the JavaScript backend', () => {
  it('computes with the JavaScript kernel table and holds ordinary arrays of both dtypes', () => {
    expect(javascriptBackend.kernels).toBe(javascriptKernels);
    expect(javascriptBackend.holds(new Float32Array(2))).toBe(true);
    expect(javascriptBackend.holds(new Float64Array(2))).toBe(true);
    expect(javascriptBackend.describe()).toBe('javascript (typed-array kernels, f32 and f64)');
  });

  it.skipIf(webAssemblyUnavailable() !== null)('does not hold an f32 array in WebAssembly memory, and gives pools of its own', () => {
    const wasm = createWebAssemblyBackend({ memoryBytes: 1048576 });
    expect(javascriptBackend.holds(wasm.pool.take('f32', 4))).toBe(false);
    expect(javascriptBackend.createPool()).not.toBe(javascriptBackend.pool);
  });
});
