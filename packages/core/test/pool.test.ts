import { describe, expect, it } from 'vitest';
import { BufferPool } from '@weft/core';

describe('the buffer pool', () => {
  it('hands a given-back array out again for the same dtype and length, and makes one otherwise, counting both', () => {
    const pool = new BufferPool();
    const a = pool.take('f32', 8);
    expect(pool.counts()).toEqual({ created: 1, createdBytes: 32, bytesInUse: 32, peakBytesInUse: 32 });
    pool.give(a);
    expect(pool.take('f32', 8)).toBe(a);
    expect(pool.take('f64', 8)).not.toBe(a);
    expect(pool.counts()).toEqual({ created: 2, createdBytes: 96, bytesInUse: 96, peakBytesInUse: 96 });
  });

  it('zeroes on request only, resets its counters keeping what is in use, and forgets free arrays when drained', () => {
    const pool = new BufferPool();
    const a = pool.take('f64', 3);
    a.fill(5);
    pool.give(a);
    expect(Array.from(pool.take('f64', 3))).toEqual([5, 5, 5]);
    pool.give(a);
    expect(Array.from(pool.takeZeroed('f64', 3))).toEqual([0, 0, 0]);
    pool.resetCounts();
    expect(pool.counts()).toEqual({ created: 0, createdBytes: 0, bytesInUse: 24, peakBytesInUse: 24 });
    pool.give(a);
    pool.drain();
    expect(pool.take('f64', 3)).not.toBe(a);
  });

  it('makes its arrays with the allocator it is given, and refuses a length that is not a whole number', () => {
    const made: number[] = [];
    const pool = new BufferPool((dtype, length) => {
      made.push(length);
      return dtype === 'f64' ? new Float64Array(length) : new Float32Array(length);
    });
    pool.take('f32', 5);
    expect(made).toEqual([5]);
    expect(() => pool.take('f32', 2.5)).toThrowError('Invalid argument at BufferPool.take.length: expected a whole number ≥ 0, received 2.5');
  });
});
