/** The JavaScript backend: the kernels of core/src/kernels over ordinary typed arrays, f32 and f64. */
import type { FloatArray } from '../dtype.js';
import { BufferPool, sharedPool } from '../pool.js';
import type { Backend } from './backend.js';
import { memoryOwner } from './backend.js';
import { javascriptKernels } from './kernel-table.js';

/** The JavaScript backend: the kernels of `@weft/core/kernels` over ordinary typed arrays, f32 and f64. */
export const javascriptBackend: Backend = Object.freeze({
  kernelSet: null,
  name: 'javascript' as const,
  kernels: javascriptKernels,
  pool: sharedPool,
  createPool(): BufferPool {
    return new BufferPool();
  },
  holds(array: FloatArray): boolean {
    return array instanceof Float64Array || memoryOwner(array) === null;
  },
  describe(): string {
    return 'javascript (typed-array kernels, f32 and f64)';
  },
});
