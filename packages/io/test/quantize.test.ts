import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { dequantizeRows, quantizeRows } from '../src/quantize.js';

describe('per-row int8 quantisation (symmetric, one scale per row: common practice)', () => {
  it('scales each row by its largest magnitude over 127 and rounds to the nearest code', () => {
    const values = Float32Array.of(1.27, -0.635, 0, 0.5, 0, 0, 0, 0);
    const codes = new Int8Array(8);
    const scales = new Float32Array(2);
    quantizeRows(values, 2, 4, codes, scales);
    expect(Array.from(scales)).toEqual([Math.fround(1.27 / 127), 0]);
    expect(Array.from(codes)).toEqual([127, -64, 0, 50, 0, 0, 0, 0]);
  });

  it("gives every value back within half its row's step, and a row of zeros as zeros", () => {
    const random = new Random('quantize');
    const rows = 6;
    const cols = 33;
    const values = Float32Array.from({ length: rows * cols }, (_, i) => (i < cols ? 0 : random.between(-3, 3) * (1 + (i % 5))));
    const codes = new Int8Array(rows * cols);
    const scales = new Float32Array(rows);
    quantizeRows(values, rows, cols, codes, scales);
    const back = new Float32Array(rows * cols);
    dequantizeRows(codes, scales, rows, cols, back);
    for (let i = 0; i < values.length; i++) {
      const scale = scales[Math.floor(i / cols)];
      expect(Math.abs(back[i] - values[i])).toBeLessThanOrEqual(scale / 2 + 1e-6 * Math.abs(values[i]));
    }
    expect(Array.from(back.subarray(0, cols)).every((v) => v === 0)).toBe(true);
  });
});
