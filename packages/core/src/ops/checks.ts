/** Boundary checks shared by the operations: each names the operation, the argument and both values. */
import { backendOf } from '../backend/choose.js';
import type { DType } from '../dtype.js';
import { fail, formatShape } from '../errors.js';
import type { Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { sameShape } from '../tensor.js';

export function requireSameDType(operation: string, name: string, t: Tensor, dtype: DType): void {
  if (t.dtype !== dtype) fail('dtype_mismatch', `${operation}.${name}`, dtype, t.dtype);
}

/**
 * Refuses a tensor that does not live where the tape's backend computes (DESIGN: no silent copies between
 * backends). f64 tensors live everywhere.
 */
export function requireBackend(tape: Tape, operation: string, name: string, t: Tensor): void {
  if (!tape.backend.holds(t.data)) {
    fail(
      'backend_mismatch',
      `${operation}.${name}`,
      `a tensor in ${tape.backend.name} memory (the tape's backend)`,
      `a tensor in ${backendOf(t.data).name} memory`,
      'make tensors and tapes on one backend, or copy with convert(t, dtype, backend.pool)',
    );
  }
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
