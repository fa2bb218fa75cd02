/**
 * The row helpers the step kernels share for ragged batches: a row past its length holds its state, so forward
 * copies its previous state across and backward passes its gradient straight to the previous state.
 */
import type { FloatArray } from '../dtype.js';

/** True when row `b` is past its length at `step` (its state is held). */
export function isHeld(lengths: Int32Array | null, b: number, step: number): boolean {
  return lengths !== null && step >= lengths[b];
}

/**
 * Forward, for a row past its length at `step`: copies its state row across from the previous state and returns
 * true (the caller skips the row); false for a row still inside its sequence.
 */
export function holdRow(lengths: Int32Array | null, b: number, step: number, state: FloatArray, previous: FloatArray, offset: number, width: number): boolean {
  if (!isHeld(lengths, b, step)) return false;
  copyRow(state, previous, offset, width);
  return true;
}

/**
 * Backward, for a row past its length at `step`: zeroes `cleared` over [from, to) (the row's gate gradients), passes
 * the gradient arriving at its state straight to the previous state's, and returns true; false for a row still
 * inside its sequence.
 */
export function passHeldRow(
  lengths: Int32Array | null,
  b: number,
  step: number,
  previousGradient: FloatArray | null,
  gradient: FloatArray | null,
  offset: number,
  width: number,
  cleared: FloatArray,
  from: number,
  to: number,
): boolean {
  if (!isHeld(lengths, b, step)) return false;
  cleared.fill(0, from, to);
  addRowInto(previousGradient, gradient, offset, width);
  return true;
}

/** target[offset … offset + size) = source[offset … offset + size). */
export function copyRow(target: FloatArray, source: FloatArray, offset: number, size: number): void {
  for (let j = 0; j < size; j++) target[offset + j] = source[offset + j];
}

/** target[offset … offset + size) += source[offset … offset + size), when both exist. */
export function addRowInto(target: FloatArray | null, source: FloatArray | null, offset: number, size: number): void {
  if (target === null || source === null) return;
  for (let j = 0; j < size; j++) target[offset + j] += source[offset + j];
}
