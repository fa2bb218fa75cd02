import { describe, expect, it } from 'vitest';
import { matrix, multiply, transpose } from 'mathjs';
import type { Matrix } from 'mathjs';
import { Random } from '@weft/core';
import { matmulFewRows } from '../../src/kernels/matmul-few-rows.js';
import { productShape, transposedOf } from '../../src/kernels/shapes.js';

// Reference: mathjs `multiply` (a general-purpose npm library, used at test time only).
function reference(a: number[][], b: number[][]): number[] {
  return ((multiply(matrix(a), matrix(b)) as Matrix).toArray() as number[][]).flat();
}

describe('the matrix product for fewer than four rows', () => {
  for (const [rows, inner, cols] of [
    [1, 1, 1],
    [1, 7, 9],
    [2, 5, 4],
    [3, 13, 11],
  ] as const) {
    it(`matches mathjs for [${rows}×${inner}]·[${inner}×${cols}], stored as written or transposed, set or accumulated (f64, 1e-12)`, () => {
      const random = new Random(`few-${rows}-${inner}-${cols}`);
      const a = Array.from({ length: rows }, () => Array.from({ length: inner }, () => random.between(-1, 1)));
      const b = Array.from({ length: inner }, () => Array.from({ length: cols }, () => random.between(-1, 1)));
      const expected = reference(a, b);
      for (const transposeA of [false, true]) {
        for (const transposeB of [false, true]) {
          const storedA = Float64Array.from((transposeA ? (transpose(a) as number[][]) : a).flat());
          const storedB = Float64Array.from((transposeB ? (transpose(b) as number[][]) : b).flat());
          const out = new Float64Array(rows * cols).fill(0.5);
          matmulFewRows(out, storedA, storedB, productShape(rows, inner, cols, transposedOf(transposeA, transposeB)), false);
          expect(Math.max(...Array.from(out, (v, i) => Math.abs(v - expected[i])))).toBeLessThan(1e-12);
          matmulFewRows(out, storedA, storedB, productShape(rows, inner, cols, transposedOf(transposeA, transposeB)), true);
          expect(Math.max(...Array.from(out, (v, i) => Math.abs(v - 2 * expected[i])))).toBeLessThan(1e-12);
        }
      }
    });
  }
});
