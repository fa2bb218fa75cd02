/**
 * Copies and sums between a [rows, cols] matrix and a block of columns [first, first + cols) of a [rows, width]
 * one: joining tensors along their last axis and cutting them apart (ops/concat.ts, forward and backward), one call
 * per part instead of one per row. Aliasing: `copyToColumns` and `addToColumns` must not have the arrays overlap
 * (a row written into the wide matrix can land on narrow entries not yet read); `copyFromColumns` and
 * `addFromColumns` may have the narrow matrix be the wide one's own array from its start (every wide entry is read
 * before the narrow write that could reach it: the block is compacted in place), and no other overlap.
 */
import type { FloatArray } from '../dtype.js';

/** Where a narrow [rows, cols] matrix sits in a wide [rows, width] one: its columns from `first` on. */
export interface ColumnBlock {
  /** Rows of both matrices. */
  rows: number;
  /** Columns of the narrow matrix (and of the block). */
  cols: number;
  /** Columns of the wide matrix. */
  width: number;
  /** The wide matrix's column where the block begins. */
  first: number;
}

/** wide[r, first + c] = narrow[r, c]. */
export function copyToColumns(wide: FloatArray, narrow: FloatArray, block: ColumnBlock): FloatArray {
  const { rows, cols, width, first } = block;
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) wide[r * width + first + c] = narrow[r * cols + c];
  return wide;
}

/** narrow[r, c] = wide[r, first + c]. */
export function copyFromColumns(narrow: FloatArray, wide: FloatArray, block: ColumnBlock): FloatArray {
  const { rows, cols, width, first } = block;
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) narrow[r * cols + c] = wide[r * width + first + c];
  return narrow;
}

/** wide[r, first + c] += narrow[r, c]. */
export function addToColumns(wide: FloatArray, narrow: FloatArray, block: ColumnBlock): FloatArray {
  const { rows, cols, width, first } = block;
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) wide[r * width + first + c] += narrow[r * cols + c];
  return wide;
}

/** narrow[r, c] += wide[r, first + c]. */
export function addFromColumns(narrow: FloatArray, wide: FloatArray, block: ColumnBlock): FloatArray {
  const { rows, cols, width, first } = block;
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) narrow[r * cols + c] += wide[r * width + first + c];
  return narrow;
}
