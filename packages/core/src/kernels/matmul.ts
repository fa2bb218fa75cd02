/**
 * Matrix product, out-first: `matmul` writes out = op(a) · op(b) and `matmulInto` adds it, out += op(a) · op(b),
 * where op(a) is a [rows, inner] matrix and op(b) an [inner, cols] matrix, each stored either as written or
 * transposed as the shape record says (shapes.ts: a stored [inner, rows], b stored [cols, inner]).
 *
 * Aliasing: `out` must not alias `a` or `b`: results are written while the operands are still being read (the
 * matmul test shows what aliasing does). `a` and `b` may be the same array. Allocates nothing in the steady state:
 * packed panels live in kernel scratch.
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
import type { ProductShape, ProductSizes } from './shapes.js';
import { transposesA, transposesB } from './shapes.js';

const BLOCK = 4;

/** out = op(a) · op(b). */
export function matmul(out: FloatArray, a: FloatArray, b: FloatArray, shape: ProductShape): FloatArray {
  // Fewer rows than a block (the streaming case) goes straight to the in-place product: no packing, one call less.
  if (shape.rows < BLOCK) matmulFewRows(out, a, b, shape, false);
  else product(out, a, b, shape, false);
  return out;
}

/** out += op(a) · op(b). */
export function matmulInto(out: FloatArray, a: FloatArray, b: FloatArray, shape: ProductShape): FloatArray {
  if (shape.rows < BLOCK) matmulFewRows(out, a, b, shape, true);
  else product(out, a, b, shape, true);
  return out;
}

/** The 16 accumulators of an edge block, row-major, written out entry by entry (made once). */
const corner = new Float64Array(16);

/**
 * The packed product for at least 4 rows. Why one function of this length: its inner loop is the 4 × 4 register
 * block written out (16 accumulators in locals, not an array, so they stay in registers) with its two stores; split
 * into calls, the accumulators would have to live in memory.
 */
function product(out: FloatArray, a: FloatArray, b: FloatArray, shape: ProductShape, accumulate: boolean): void {
  const { rows, inner, cols } = shape;
  const rowBlocks = Math.ceil(rows / BLOCK);
  const colBlocks = Math.ceil(cols / BLOCK);
  const left = scratch(SCRATCH_LEFT, rowBlocks * inner * BLOCK);
  const right = scratch(SCRATCH_RIGHT, colBlocks * inner * BLOCK);
  packLeft(left, a, rows, inner, transposesA(shape));
  packRight(right, b, inner, cols, transposesB(shape));
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
        corner[0] = c00;
        corner[1] = c01;
        corner[2] = c02;
        corner[3] = c03;
        corner[4] = c10;
        corner[5] = c11;
        corner[6] = c12;
        corner[7] = c13;
        corner[8] = c20;
        corner[9] = c21;
        corner[10] = c22;
        corner[11] = c23;
        corner[12] = c30;
        corner[13] = c31;
        corner[14] = c32;
        corner[15] = c33;
        for (let r = 0; r < rowCount; r++) {
          for (let c = 0; c < colCount; c++) {
            const value = corner[r * BLOCK + c];
            const o = (row0 + r) * cols + col0 + c;
            out[o] = accumulate ? out[o] + value : value;
          }
        }
      }
    }
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

/**
 * out [rows, cols] = x [rows, inner] · weights [inner, cols] + bias [cols] (the readout's affine map), weights as
 * written. Aliasing: `out` must not alias `x`, `weights` or `bias`.
 */
export function affineRows(out: FloatArray, x: FloatArray, weights: FloatArray, bias: FloatArray, sizes: ProductSizes): FloatArray {
  matmul(out, x, weights, sizes);
  return addRow(out, out, bias, sizes.rows, sizes.cols);
}
