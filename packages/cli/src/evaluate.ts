/** Small helpers for reading model outputs outside the tape. */
import { Tape } from '@weft/core';
import { copyLastSteps } from '@weft/cells';
import type { Tensor } from '@weft/core';

export { Tape };

/** Each row's output at its last valid step, [B, F], from outputs [T, B, F] (cells' rule, off the tape). */
export function lastStepsValues(outputs: Tensor, lengths: Int32Array | null): Float32Array {
  const [steps, rows, width] = outputs.shape;
  return copyLastSteps(new Float32Array(rows * width), outputs.data, lengths, steps, rows, width);
}
