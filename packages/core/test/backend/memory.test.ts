/**
 * The WebAssembly backend's memory (backend/memory.ts): blocks 16-byte aligned past address 0, released blocks
 * reused by requests of the same size, a reservation that never grows, and the byte offsets it records for the
 * arrays it makes. The alignment of 16 bytes is one f32x4 vector (WebAssembly SIMD, common practice for vector
 * loads); the rest are the promises of memory.ts, checked against the views' own `byteOffset` and `buffer`.
 */
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { LinearMemory } from '../../src/backend/memory.js';

describe('LinearMemory', () => {
  it('hands out 16-byte aligned blocks that start past address 0 and do not overlap', () => {
    const memory = new LinearMemory(65536);
    const a = memory.floats(3);
    const b = memory.floats(5);
    const c = memory.integers(1);
    for (const array of [a, b, c]) {
      expect(array.byteOffset % 16).toBe(0);
      expect(array.byteOffset).toBeGreaterThan(0);
    }
    expect(b.byteOffset).toBeGreaterThanOrEqual(a.byteOffset + a.byteLength);
    expect(c.byteOffset).toBeGreaterThanOrEqual(b.byteOffset + b.byteLength);
  });

  it('gives a released block to the next request of the same size, and not to one of another size', () => {
    const memory = new LinearMemory(65536);
    const a = memory.floats(8);
    memory.release(a.byteOffset, a.byteLength);
    const other = memory.floats(12);
    expect(other.byteOffset).not.toBe(a.byteOffset);
    const same = memory.floats(8);
    expect(same.byteOffset).toBe(a.byteOffset);
  });

  it('refuses a request beyond the reservation with a backend_memory error and keeps every view attached', () => {
    const memory = new LinearMemory(65536);
    const first = memory.floats(1000);
    first[999] = 3;
    let error: unknown;
    try {
      memory.floats(20000);
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).code).toBe('backend_memory');
    expect(first.buffer.byteLength).toBe(65536);
    expect(first[999]).toBe(3);
  });

  it('tells the byte offset of its own arrays and of views on them, and −1 for arrays that live elsewhere', () => {
    const memory = new LinearMemory(65536);
    const other = new LinearMemory(65536);
    const a = memory.floats(16);
    const n = memory.integers(4);
    expect(memory.offsetOf(a)).toBe(a.byteOffset);
    expect(memory.offsetOf(n)).toBe(n.byteOffset);
    const view = a.subarray(4, 8);
    expect(memory.offsetOf(view)).toBe(view.byteOffset);
    expect(memory.offsetOf(new Float32Array(memory.buffer, 256, 4))).toBe(256);
    expect(memory.offsetOf(new Float32Array(16))).toBe(-1);
    expect(memory.offsetOf(new Float64Array(2))).toBe(-1);
    // Another memory's array, even at the same offset, is not this memory's.
    const theirs = other.floats(16);
    expect(theirs.byteOffset).toBe(a.byteOffset);
    expect(memory.offsetOf(theirs)).toBe(-1);
    expect(other.offsetOf(a)).toBe(-1);
  });

  it('records offsets out of sight: no enumerable key, so arrays compare and serialise as plain arrays', () => {
    const memory = new LinearMemory(65536);
    const a = memory.floats(3);
    a.set([1, 2, 3]);
    expect(Object.keys(a)).toEqual(['0', '1', '2']);
    expect(Object.getOwnPropertySymbols(a).every((key) => !Object.getOwnPropertyDescriptor(a, key)?.enumerable)).toBe(true);
    expect(a).toEqual(Float32Array.from([1, 2, 3]));
    expect(JSON.stringify(a)).toBe('{"0":1,"1":2,"2":3}');
  });
});
