/**
 * The row helpers the step kernels share for ragged batches: a row past its length holds its state, so forward
 * copies its previous state across and backward passes its gradient straight to the previous state.
 */
import type { FloatArray } from '../dtype.js';
import type { StepAt } from './step-records.js';

/** True when row `b` is past its length at `step` (its state is held). */
export function isHeld(lengths: Int32Array | null, b: number, step: number): boolean {
  return lengths !== null && step >= lengths[b];
}

/**
 * Forward, for row `b` past its length: copies its state row [b·H, (b+1)·H) across from the previous state and
 * returns true (the caller skips the row); false for a row still inside its sequence.
 */
export function holdRow(at: StepAt, b: number, state: FloatArray, previous: FloatArray): boolean {
  if (!isHeld(at.lengths, b, at.step)) return false;
  copyRow(state, previous, b * at.hidden, at.hidden);
  return true;
}

/**
 * Backward, for row `b` past its length: zeroes the row's `clearedWidth` entries of `cleared` (its gate
 * gradients), passes the gradient arriving at its state row straight to the previous state's, and returns true;
 * false for a row still inside its sequence.
 */
export function passHeldRow(
  at: StepAt,
  b: number,
  previousGradient: FloatArray | null,
  gradient: FloatArray | null,
  cleared: FloatArray,
  clearedWidth: number,
): boolean {
  if (!isHeld(at.lengths, b, at.step)) return false;
  cleared.fill(0, b * clearedWidth, (b + 1) * clearedWidth);
  addRowInto(previousGradient, gradient, b * at.hidden, at.hidden);
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
