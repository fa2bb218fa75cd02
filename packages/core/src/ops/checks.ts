/** Boundary checks shared by the operations: each names the operation, the argument and both values. */
import type { DType } from '../dtype.js';
import { fail, formatShape } from '../errors.js';
import type { Tensor } from '../tensor.js';
import { sameShape } from '../tensor.js';

export function requireSameDType(operation: string, name: string, t: Tensor, dtype: DType): void {
  if (t.dtype !== dtype) fail('dtype_mismatch', `${operation}.${name}`, dtype, t.dtype);
}

export function requireShape(operation: string, name: string, t: Tensor, shape: readonly number[]): void {
  if (!sameShape(t.shape, shape)) fail('shape_mismatch', `${operation}.${name}`, formatShape(shape), formatShape(t.shape));
}

export function requireRank(operation: string, name: string, t: Tensor, rank: number): void {
  if (t.shape.length !== rank) {
    fail('shape_mismatch', `${operation}.${name}`, `a rank-${rank} tensor`, formatShape(t.shape));
  }
}

/** Treats a tensor of rank ≥ 1 as [rows, last]: the shape the last-axis operations work on. */
export function lastAxis(t: Tensor): number {
  return t.shape.length === 0 ? 1 : t.shape[t.shape.length - 1];
}
