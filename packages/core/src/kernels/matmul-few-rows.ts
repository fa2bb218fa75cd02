/**
 * The matrix product for fewer than 4 rows (matmul.ts calls it; the same shape record, and `accumulate` for matmulInto): a single sample, the
 * streaming case, where packing the right operand would cost as much as the product itself. Accumulates in f64
 * with one rounding on the store, as matmul does. `out` must not alias `a` or `b`.
 */
import type { FloatArray } from '../dtype.js';
import type { ProductShape } from './shapes.js';
import { transposesA, transposesB } from './shapes.js';

/** Columns read together (4 accumulators). */
const BLOCK = 4;

/**
 * Fewer than 4 rows (a single sample, the streaming case): packing the right operand would cost as much as the
 * product itself, so read it in place, 4 columns at a time with 4 accumulators.
 */
export function matmulFewRows(out: FloatArray, a: FloatArray, b: FloatArray, shape: ProductShape, accumulate: boolean): void {
  const { rows, inner, cols } = shape;
  const transposeA = transposesA(shape);
  const transposeB = transposesB(shape);
  const aRowStep = transposeA ? 1 : inner;
  const aInnerStep = transposeA ? rows : 1;
  const bInnerStep = transposeB ? 1 : cols;
  const bColStep = transposeB ? inner : 1;
  for (let row = 0; row < rows; row++) {
    const aStart = row * aRowStep;
    let col = 0;
    for (; col + BLOCK <= cols; col += BLOCK) {
      let s0 = 0,
        s1 = 0,
        s2 = 0,
        s3 = 0;
      let pa = aStart;
      let pb = col * bColStep;
      for (let k = 0; k < inner; k++) {
        const x = a[pa];
        s0 += x * b[pb];
        s1 += x * b[pb + bColStep];
        s2 += x * b[pb + 2 * bColStep];
        s3 += x * b[pb + 3 * bColStep];
        pa += aInnerStep;
        pb += bInnerStep;
      }
      const o = row * cols + col;
      if (accumulate) {
        out[o] += s0;
        out[o + 1] += s1;
        out[o + 2] += s2;
        out[o + 3] += s3;
      } else {
        out[o] = s0;
        out[o + 1] = s1;
        out[o + 2] = s2;
        out[o + 3] = s3;
      }
    }
    for (; col < cols; col++) {
      let s = 0;
      let pa = aStart;
      let pb = col * bColStep;
      for (let k = 0; k < inner; k++) {
        s += a[pa] * b[pb];
        pa += aInnerStep;
        pb += bInnerStep;
      }
      const o = row * cols + col;
      out[o] = accumulate ? out[o] + s : s;
    }
  }
}
