/**
 * The row helpers the step kernels share for ragged batches: a row past its length holds its state, so forward
 * copies its previous state across and backward passes its gradient straight to the previous state.
 */
import type { FloatArray } from '../dtype.js';

/** True when row `b` is past its length at `step` (its state is held). */
export function isHeld(lengths: Int32Array | null, b: number, step: number): boolean {
  return lengths !== null && step >= lengths[b];
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
