/**
 * The ragged-sequence convention (sequence-ops.ts states it) on plain arrays, with no tape: the arithmetic that
 * training's sequence operations record on the tape and that the inference runtime runs as it is, so both follow
 * one copy. Sequences are time-major [steps, rows, width] (cell.ts).
 */
import type { FloatArray } from '@weft/core/base';

/** The sizes of a time-major sequence. */
export interface SequenceShape {
  /** Time steps (T). */
  readonly steps: number;
  /** Batch rows (B). */
  readonly rows: number;
  /** Numbers per row and step (F). */
  readonly width: number;
}

/**
 * Reverses each row within its own length. Forward (`accumulate` false): target[s, b] = source[L_b − 1 − s, b],
 * zero beyond L_b. Backward (`accumulate` true, for the gradient): target[L_b − 1 − s, b] += source[s, b]. Applied
 * twice it gives back the valid part. `target` must not be `source`.
 */
export function reverseRows(target: FloatArray, source: ArrayLike<number>, shape: SequenceShape, lengths: Int32Array | null, accumulate = false): void {
  const { steps, rows, width } = shape;
  for (let b = 0; b < rows; b++) {
    const length = lengths === null ? steps : lengths[b];
    for (let s = 0; s < steps; s++) {
      const at = (s * rows + b) * width;
      if (s >= length) {
        if (!accumulate) for (let j = 0; j < width; j++) target[at + j] = 0;
        continue;
      }
      const mirrored = ((length - 1 - s) * rows + b) * width;
      if (accumulate) for (let j = 0; j < width; j++) target[mirrored + j] += source[at + j];
      else for (let j = 0; j < width; j++) target[at + j] = source[mirrored + j];
    }
  }
}

/**
 * target = source with every position at or beyond its row's length set to zero (`accumulate`: target += the kept
 * part, for the gradient). `target` may be `source`.
 */
export function zeroBeyond(target: FloatArray, source: ArrayLike<number>, shape: SequenceShape, lengths: Int32Array, accumulate = false): void {
  const { rows, width } = shape;
  for (let p = 0; p < shape.steps * rows; p++) {
    const keep = Math.floor(p / rows) < lengths[p % rows];
    if (accumulate) {
      if (keep) for (let j = 0; j < width; j++) target[p * width + j] += source[p * width + j];
    } else {
      for (let j = 0; j < width; j++) target[p * width + j] = keep ? source[p * width + j] : 0;
    }
  }
}

/**
 * Two directions' outputs side by side at each position: target [positions, a + b] = [first | second], from
 * first [positions, a] and second [positions, b] (a bidirectional layer's [forward | backward]). `target` must
 * not be either.
 */
export function joinFeatures(target: FloatArray, first: ArrayLike<number>, second: ArrayLike<number>, firstWidth: number, secondWidth: number): void {
  const width = firstWidth + secondWidth;
  const positions = first.length / firstWidth;
  for (let p = 0; p < positions; p++) {
    for (let j = 0; j < firstWidth; j++) target[p * width + j] = first[p * firstWidth + j];
    for (let j = 0; j < secondWidth; j++) target[p * width + firstWidth + j] = second[p * secondWidth + j];
  }
}
