/**
 * The elementwise part of one plain recurrent step, h = φ(x·W + h₋·R + b) with φ = tanh or ReLU (Elman 1990,
 * "Finding structure in time"). Rows past their length hold their state.
 */
import type { FloatArray } from '../dtype.js';
import { addRowInto, copyRow, isHeld } from './rows.js';

/** On entry `hidden` holds the pre-activation a; on exit φ(a), or h₋ for held rows. */
export function plainStepForward(
  hidden: FloatArray,
  hiddenPrevious: FloatArray,
  rectified: boolean,
  rows: number,
  size: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * size;
    if (isHeld(lengths, b, step)) {
      copyRow(hidden, hiddenPrevious, row, size);
      continue;
    }
    if (rectified) {
      for (let j = 0; j < size; j++) {
        const a = hidden[row + j];
        hidden[row + j] = a > 0 ? a : 0;
      }
    } else {
      for (let j = 0; j < size; j++) hidden[row + j] = Math.tanh(hidden[row + j]);
    }
  }
}

/**
 * Writes δa = δh·φ′ into `preGradient` (zero for held rows, whose δh passes to h₋ unchanged);
 * φ′ = 1 − h² for tanh and [h > 0] for ReLU, both from the output h.
 */
export function plainStepBackward(
  preGradient: FloatArray,
  hiddenPreviousGradient: FloatArray | null,
  hiddenGradient: FloatArray,
  hidden: FloatArray,
  rectified: boolean,
  rows: number,
  size: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * size;
    if (isHeld(lengths, b, step)) {
      preGradient.fill(0, row, row + size);
      addRowInto(hiddenPreviousGradient, hiddenGradient, row, size);
      continue;
    }
    for (let j = 0; j < size; j++) {
      const h = hidden[row + j];
      const dh = hiddenGradient[row + j];
      preGradient[row + j] = rectified ? (h > 0 ? dh : 0) : dh * (1 - h * h);
    }
  }
}
