/**
 * Every tensor buffer in weft comes from a BufferPool. Buffers are kept in free lists by dtype and length, so a
 * training loop that repeats the same graph reuses the same arrays step after step. The pool counts every typed
 * array it creates: a steady-state loop shows the count standing still, which is how the tests prove that hot
 * paths allocate nothing.
 *
 * A different backend (for example one that keeps buffers inside WebAssembly memory) supplies its own
 * `allocate`; nothing else in the library creates tensor storage.
 */
import type { DType, FloatArray } from './dtype.js';
import { bytesPerElement, dtypeOf } from './dtype.js';
import { fail } from './errors.js';

/** Makes a zero-filled buffer of a dtype and length (a backend's allocator, in its own memory). */
export type Allocate = (dtype: DType, length: number) => FloatArray;

/** What a pool has made and handed out, for tests and leak hunts. */
export interface PoolCounts {
  /** Typed arrays created since the pool was made (or since `resetCounts`). */
  readonly created: number;
  /** Bytes of the arrays counted in `created`. */
  readonly createdBytes: number;
  /** Bytes handed out by `take` and not yet given back. */
  readonly bytesInUse: number;
  /** The largest `bytesInUse` seen since the pool was made (or since `resetCounts`). */
  readonly peakBytesInUse: number;
}

const defaultAllocate: Allocate = (dtype, length) => (dtype === 'f64' ? new Float64Array(length) : new Float32Array(length));

/**
 * Typed arrays kept for reuse by dtype and length: `take` hands one out as it was left (`takeZeroed` clears it),
 * `give` takes it back; hot loops allocate nothing once the pool is warm.
 */
export class BufferPool {
  private readonly allocate: Allocate;
  private readonly free32 = new Map<number, Float32Array[]>();
  private readonly free64 = new Map<number, Float64Array[]>();
  private created = 0;
  private createdBytes = 0;
  private bytesInUse = 0;
  private peakBytesInUse = 0;

  constructor(allocate: Allocate = defaultAllocate) {
    this.allocate = allocate;
  }

  /** Hands out an array of exactly `length` elements. Its contents are whatever the last user left. */
  take(dtype: DType, length: number): FloatArray {
    if (!(length >= 0) || !Number.isInteger(length)) {
      fail('invalid_argument', 'BufferPool.take.length', 'a whole number ≥ 0', String(length));
    }
    const lists = dtype === 'f64' ? this.free64 : this.free32;
    const list = lists.get(length);
    let array: FloatArray | undefined = list === undefined ? undefined : list.pop();
    if (array === undefined) {
      array = this.allocate(dtype, length);
      this.created++;
      this.createdBytes += length * bytesPerElement(dtype);
    }
    this.bytesInUse += length * bytesPerElement(dtype);
    if (this.bytesInUse > this.peakBytesInUse) this.peakBytesInUse = this.bytesInUse;
    return array;
  }

  /** Like `take`, filled with zeros. */
  takeZeroed(dtype: DType, length: number): FloatArray {
    const array = this.take(dtype, length);
    array.fill(0);
    return array;
  }

  /** Returns an array for reuse. The caller must not touch it afterwards. */
  give(array: FloatArray): void {
    const dtype = dtypeOf(array);
    this.bytesInUse -= array.length * bytesPerElement(dtype);
    if (dtype === 'f64') {
      const list = this.free64.get(array.length);
      if (list === undefined) this.free64.set(array.length, [array as Float64Array]);
      else list.push(array as Float64Array);
    } else {
      const list = this.free32.get(array.length);
      if (list === undefined) this.free32.set(array.length, [array as Float32Array]);
      else list.push(array as Float32Array);
    }
  }

  /** The pool's counts now. */
  counts(): PoolCounts {
    return {
      created: this.created,
      createdBytes: this.createdBytes,
      bytesInUse: this.bytesInUse,
      peakBytesInUse: this.peakBytesInUse,
    };
  }

  /** Starts the creation counter and the peak afresh (the bytes in use stay as they are). */
  resetCounts(): void {
    this.created = 0;
    this.createdBytes = 0;
    this.peakBytesInUse = this.bytesInUse;
  }

  /** Hands every free f32 array to `release` (its memory's own release) and drops every free array. */
  releaseFree(release: (array: Float32Array) => void): void {
    for (const list of this.free32.values()) for (const array of list) release(array);
    this.drain();
  }

  /** Drops every free array, so the memory can be collected. */
  drain(): void {
    this.free32.clear();
    this.free64.clear();
  }
}

/** The pool used wherever no other is given. */
export const sharedPool = new BufferPool();
