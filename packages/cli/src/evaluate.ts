/** Small helpers for reading model outputs outside the tape. */
import { Tape } from '@weft/core';
import type { Tensor } from '@weft/core';

export { Tape };

/** Each row's output at its last valid step, [B, F], from outputs [T, B, F]. */
export function lastStepsValues(outputs: Tensor, lengths: Int32Array | null): Float32Array {
  const [steps, rows, width] = outputs.shape;
  const out = new Float32Array(rows * width);
  for (let b = 0; b < rows; b++) {
    const length = lengths === null ? steps : lengths[b];
    if (length === 0) continue;
    for (let j = 0; j < width; j++) out[b * width + j] = outputs.data[((length - 1) * rows + b) * width + j];
  }
  return out;
}
