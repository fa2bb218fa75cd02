/**
 * Matrix product, out-first: out = op(a) · op(b), or out += op(a) · op(b) when `accumulate` is true, where
 * op(a) is a [rows, inner] matrix and op(b) an [inner, cols] matrix, each stored either as written or
 * transposed (a stored [inner, rows] when `transposeA`, b stored [cols, inner] when `transposeB`).
 *
 * `out` must not alias `a` or `b`: results are written while the operands are still being read (the matmul test
 * shows what aliasing does). Allocates nothing in the steady state: packed panels live in kernel scratch.
 *
 * Method (common practice for fast matrix products): both operands are packed into f64 panels, the left one in
 * blocks of 4 rows and the right one in blocks of 4 columns, each laid out k-major so the inner loop reads two
 * short contiguous runs; a 4×4 register block of 16 accumulators then does 16 multiply-adds per 8 loads.
 * Accumulation is in f64 for both dtypes, with one rounding on the final store.
 */
import type { FloatArray } from '../dtype.js';
import { matmulFewRows } from './matmul-few-rows.js';
import { SCRATCH_LEFT, SCRATCH_RIGHT, scratch } from './scratch.js';
import { addRow } from './elementwise.js';

const BLOCK = 4;

export function matmul(
  out: FloatArray,
  a: FloatArray,
  b: FloatArray,
  rows: number,
  inner: number,
  cols: number,
  transposeA = false,
  transposeB = false,
  accumulate = false,
): FloatArray {
  if (rows < BLOCK) {
    matmulFewRows(out, a, b, rows, inner, cols, transposeA, transposeB, accumulate);
    return out;
  }
  const rowBlocks = Math.ceil(rows / BLOCK);
  const colBlocks = Math.ceil(cols / BLOCK);
  const left = scratch(SCRATCH_LEFT, rowBlocks * inner * BLOCK);
  const right = scratch(SCRATCH_RIGHT, colBlocks * inner * BLOCK);
  packLeft(left, a, rows, inner, transposeA);
  packRight(right, b, inner, cols, transposeB);
  for (let rb = 0; rb < rowBlocks; rb++) {
    const leftBase = rb * inner * BLOCK;
    const row0 = rb * BLOCK;
    const rowCount = Math.min(BLOCK, rows - row0);
    for (let cb = 0; cb < colBlocks; cb++) {
      const rightBase = cb * inner * BLOCK;
      let c00 = 0,
        c01 = 0,
        c02 = 0,
        c03 = 0;
      let c10 = 0,
        c11 = 0,
        c12 = 0,
        c13 = 0;
      let c20 = 0,
        c21 = 0,
        c22 = 0,
        c23 = 0;
      let c30 = 0,
        c31 = 0,
        c32 = 0,
        c33 = 0;
      let pa = leftBase;
      let pb = rightBase;
      for (let k = 0; k < inner; k++) {
        const a0 = left[pa],
          a1 = left[pa + 1],
          a2 = left[pa + 2],
          a3 = left[pa + 3];
        const b0 = right[pb],
          b1 = right[pb + 1],
          b2 = right[pb + 2],
          b3 = right[pb + 3];
        c00 += a0 * b0;
        c01 += a0 * b1;
        c02 += a0 * b2;
        c03 += a0 * b3;
        c10 += a1 * b0;
        c11 += a1 * b1;
        c12 += a1 * b2;
        c13 += a1 * b3;
        c20 += a2 * b0;
        c21 += a2 * b1;
        c22 += a2 * b2;
        c23 += a2 * b3;
        c30 += a3 * b0;
        c31 += a3 * b1;
        c32 += a3 * b2;
        c33 += a3 * b3;
        pa += BLOCK;
        pb += BLOCK;
      }
      const col0 = cb * BLOCK;
      const colCount = Math.min(BLOCK, cols - col0);
      if (rowCount === BLOCK && colCount === BLOCK) {
        let o = row0 * cols + col0;
        if (accumulate) {
          out[o] += c00;
          out[o + 1] += c01;
          out[o + 2] += c02;
          out[o + 3] += c03;
          o += cols;
          out[o] += c10;
          out[o + 1] += c11;
          out[o + 2] += c12;
          out[o + 3] += c13;
          o += cols;
          out[o] += c20;
          out[o + 1] += c21;
          out[o + 2] += c22;
          out[o + 3] += c23;
          o += cols;
          out[o] += c30;
          out[o + 1] += c31;
          out[o + 2] += c32;
          out[o + 3] += c33;
        } else {
          out[o] = c00;
          out[o + 1] = c01;
          out[o + 2] = c02;
          out[o + 3] = c03;
          o += cols;
          out[o] = c10;
          out[o + 1] = c11;
          out[o + 2] = c12;
          out[o + 3] = c13;
          o += cols;
          out[o] = c20;
          out[o + 1] = c21;
          out[o + 2] = c22;
          out[o + 3] = c23;
          o += cols;
          out[o] = c30;
          out[o + 1] = c31;
          out[o + 2] = c32;
          out[o + 3] = c33;
        }
      } else {
        // Edge block: write the valid corner one entry at a time.
        for (let r = 0; r < rowCount; r++) {
          for (let c = 0; c < colCount; c++) {
            const value = pick(r, c, c00, c01, c02, c03, c10, c11, c12, c13, c20, c21, c22, c23, c30, c31, c32, c33);
            const o = (row0 + r) * cols + col0 + c;
            out[o] = accumulate ? out[o] + value : value;
          }
        }
      }
    }
  }
  return out;
}

function pick(
  r: number,
  c: number,
  c00: number,
  c01: number,
  c02: number,
  c03: number,
  c10: number,
  c11: number,
  c12: number,
  c13: number,
  c20: number,
  c21: number,
  c22: number,
  c23: number,
  c30: number,
  c31: number,
  c32: number,
  c33: number,
): number {
  const i = r * BLOCK + c;
  switch (i) {
    case 0:
      return c00;
    case 1:
      return c01;
    case 2:
      return c02;
    case 3:
      return c03;
    case 4:
      return c10;
    case 5:
      return c11;
    case 6:
      return c12;
    case 7:
      return c13;
    case 8:
      return c20;
    case 9:
      return c21;
    case 10:
      return c22;
    case 11:
      return c23;
    case 12:
      return c30;
    case 13:
      return c31;
    case 14:
      return c32;
    default:
      return c33;
  }
}

/** Packs op(a) [rows, inner] into blocks of 4 rows, k-major: left[(block·inner + k)·4 + r]; missing rows are 0. */
function packLeft(left: Float64Array, a: FloatArray, rows: number, inner: number, transposeA: boolean): void {
  const rowBlocks = Math.ceil(rows / BLOCK);
  for (let rb = 0; rb < rowBlocks; rb++) {
    const base = rb * inner * BLOCK;
    for (let r = 0; r < BLOCK; r++) {
      const row = rb * BLOCK + r;
      if (row >= rows) {
        for (let k = 0; k < inner; k++) left[base + k * BLOCK + r] = 0;
      } else if (transposeA) {
        for (let k = 0; k < inner; k++) left[base + k * BLOCK + r] = a[k * rows + row];
      } else {
        const start = row * inner;
        for (let k = 0; k < inner; k++) left[base + k * BLOCK + r] = a[start + k];
      }
    }
  }
}

/** Packs op(b) [inner, cols] into blocks of 4 columns, k-major: right[(block·inner + k)·4 + c]; missing columns are 0. */
function packRight(right: Float64Array, b: FloatArray, inner: number, cols: number, transposeB: boolean): void {
  const colBlocks = Math.ceil(cols / BLOCK);
  for (let cb = 0; cb < colBlocks; cb++) {
    const base = cb * inner * BLOCK;
    for (let c = 0; c < BLOCK; c++) {
      const col = cb * BLOCK + c;
      if (col >= cols) {
        for (let k = 0; k < inner; k++) right[base + k * BLOCK + c] = 0;
      } else if (transposeB) {
        const start = col * inner;
        for (let k = 0; k < inner; k++) right[base + k * BLOCK + c] = b[start + k];
      } else {
        for (let k = 0; k < inner; k++) right[base + k * BLOCK + c] = b[k * cols + col];
      }
    }
  }
}

/**
 * The yardstick: a plain i-k-j triple loop, no blocking, no packing, no transposes. Kept only so the benchmark
 * can show what blocking buys; nothing in the library calls it.
 */
export function matmulNaive(out: FloatArray, a: FloatArray, b: FloatArray, rows: number, inner: number, cols: number): FloatArray {
  out.fill(0, 0, rows * cols);
  for (let i = 0; i < rows; i++) {
    for (let k = 0; k < inner; k++) {
      const x = a[i * inner + k];
      for (let j = 0; j < cols; j++) out[i * cols + j] += x * b[k * cols + j];
    }
  }
  return out;
}

/** out [rows, cols] = x·weights + bias (the readout's affine map), out not aliasing x. */
export function affineRows(out: FloatArray, bias: FloatArray, x: FloatArray, weights: FloatArray, rows: number, inner: number, cols: number): FloatArray {
  matmul(out, x, weights, rows, inner, cols);
  return addRow(out, out, bias, rows, cols);
}
