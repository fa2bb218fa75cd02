/**
 * The WebAssembly backend's memory (backend/memory.ts): blocks 16-byte aligned past address 0, released blocks
 * reused by requests of the same size, a reservation that never grows, and the byte offsets it records for the
 * arrays it makes. The alignment of 16 bytes is one f32x4 vector (WebAssembly SIMD, common practice for vector
 * loads); the rest are the promises of memory.ts, checked against the views' own `byteOffset` and `buffer`.
 */
import { describe, expect, it } from 'vitest';
import { WeftError, createWebAssemblyBackend, webAssemblyUnavailable } from '@weft/core';
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

  it('when the reservation runs out, joins neighbouring free blocks and serves the request from them, splitting the rest off', () => {
    const memory = new LinearMemory(65536);
    const blocks = Array.from({ length: 15 }, () => memory.floats(1000));
    // 15 × 4000 bytes are in use; 4,000 more do not fit, nor does one block of 12,000 before anything is released.
    expect(() => memory.floats(3000)).toThrowError(WeftError);
    for (const block of blocks.slice(3, 6)) memory.release(block.byteOffset, block.byteLength);
    // Three neighbours of 4,000 bytes make one of 12,000: a request of 2,500 floats (10,000 bytes) fits there.
    const big = memory.floats(2500);
    expect(big.byteOffset).toBe(blocks[3].byteOffset);
    // The 2,000 bytes split off stay free for a smaller request.
    expect(memory.floats(500).byteOffset).toBe(blocks[3].byteOffset + 10000);
  });

  it('asks whenExhausted for unused blocks before refusing, and lowers its top under a free tail', () => {
    const memory = new LinearMemory(65536);
    const kept: Float32Array[] = [];
    for (let i = 0; i < 15; i++) kept.push(memory.floats(1000));
    let asked = 0;
    memory.whenExhausted = () => {
      asked++;
      // A pool's free list giving its blocks back: the last five, which end at the top.
      for (const block of kept.splice(10)) memory.release(block.byteOffset, block.byteLength);
    };
    const fresh = memory.floats(4000);
    expect(asked).toBe(1);
    expect(fresh.byteOffset).toBe(kept[9].byteOffset + 4000);
  });
});

describe.skipIf(webAssemblyUnavailable() !== null)('the WebAssembly backend on batches of many shapes', () => {
  it("reuses its pools' unused blocks when the reservation runs out, instead of failing", () => {
    const backend = createWebAssemblyBackend({ memoryBytes: 1048576 });
    const pool = backend.createPool();
    // 300 different lengths of about 8 KB each: 2.4 MB in all, more than the 1 MiB reserved, one at a time in use.
    for (let length = 2000; length < 2300; length++) {
      const array = pool.take('f32', length);
      array[length - 1] = length;
      pool.give(array);
    }
    // Every array came from the 1 MiB memory (a request past it would have thrown): the pool made 300 of them.
    expect(pool.counts().created).toBe(300);
  });
});
