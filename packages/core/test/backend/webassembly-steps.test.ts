/**
 * The WebAssembly backend's wrappers of the cells' step kernels (webassembly-steps.ts): given ordinary arrays they run
 * the JavaScript kernel, bit for bit; given the backend's arrays, the SIMD twin, which agrees with the JavaScript
 * kernel within the backends' bound |a − b| ≤ 1e-5·max(1, |a|, |b|) (webassembly.test.ts checks every form).
 */
import { describe, expect, it } from 'vitest';
import { Random, createWebAssemblyBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';

const available = webAssemblyUnavailable() === null;

describe.skipIf(!available)('the WebAssembly step kernels', () => {
  const backend = createWebAssemblyBackend({ memoryBytes: 16 * 1048576 });
  const rows = 3;
  const hidden = 5;

  it('run a plain step on ordinary arrays as the JavaScript kernel, and on their own memory as its twin', () => {
    const random = new Random('steps');
    const pre = Float32Array.from({ length: rows * hidden }, () => random.between(-2, 2));
    const previous = Float32Array.from({ length: rows * hidden }, () => random.between(-1, 1));
    const lengths = Int32Array.of(2, 0, 1);
    const ordinary = Float32Array.from(pre);
    const reference = Float32Array.from(pre);
    const at = { rows, hidden, lengths, step: 1 };
    backend.kernels.plainStepForward(ordinary, previous, 'tanh', at);
    javascriptKernels.plainStepForward(reference, previous, 'tanh', at);
    expect(Array.from(ordinary)).toEqual(Array.from(reference));
    const inMemory = backend.pool.take('f32', rows * hidden) as Float32Array;
    const previousInMemory = backend.pool.take('f32', rows * hidden) as Float32Array;
    inMemory.set(pre);
    previousInMemory.set(previous);
    backend.kernels.plainStepForward(inMemory, previousInMemory, 'tanh', at);
    expect(worstGap(inMemory, reference)).toBeLessThanOrEqual(1e-5);
  });
});
