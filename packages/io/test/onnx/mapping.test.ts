import { describe, expect, it } from 'vitest';
import { fromOnnxBlocks, gateBlocks, sumBiases, toOnnxBlocks } from '../../src/onnx/mapping.js';

describe("the mapping between ONNX's weight layouts and ours", () => {
  it('moves ONNX LSTM gate rows i, o, f, c into our columns i, f, g, o, transposed, and back without changing a bit', () => {
    // hidden 1, width 2: ONNX rows (one per gate, in its order) [i, o, f, c], each [k0, k1].
    const onnx = Float32Array.of(1, 2, 3, 4, 5, 6, 7, 8);
    const ours = new Float32Array(8);
    fromOnnxBlocks(ours, 4, onnx, 0, 2, 1, gateBlocks.lstm);
    // Our [k, block]: row k0 = (i, f, c, o) = (1, 5, 7, 3), row k1 = (2, 6, 8, 4).
    expect(Array.from(ours)).toEqual([1, 5, 7, 3, 2, 6, 8, 4]);
    const back = new Float32Array(8);
    toOnnxBlocks(back, 0, ours, 4, 2, 1, gateBlocks.lstm);
    expect(Array.from(back)).toEqual(Array.from(onnx));
  });

  it('adds the two biases only where the recurrent one is not zero, so −0 survives (IEEE 754: −0 + 0 is +0)', () => {
    expect(Object.is(sumBiases(-0, 0), -0)).toBe(true);
    expect(Object.is(-0 + 0, 0)).toBe(true);
    expect(sumBiases(0.25, 0.5)).toBe(0.75);
  });
});
