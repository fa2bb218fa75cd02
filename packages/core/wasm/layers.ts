/**
 * Whole layer steps for the inference runtime, one call per layer and step: the input and recurrent products,
 * the bias, and the cell's gate arithmetic, fused, so a streaming step crosses from JavaScript into WebAssembly
 * once per layer. Twins of packages/core/src/kernels/layer-steps.ts (which compose the single kernels in the
 * same order of operations where it matters for the state: every product is complete before the gates read it).
 *
 * Every weight matrix here is packed (packed.ts: 8-column panels, k-major), as the runtime stores them. For fewer
 * than 4 rows each row's products run as one pass over the columns: 6 (then 2) vectors of accumulators start at
 * the bias and take x·W and h·R in turn, so the pre-activation is stored once; the layer steps pass their step
 * number, whose parity sets the end the pass starts from (packed.ts says why; the sums are the same either way). From 4 rows up, the blocked product
 * of matmul.ts runs on the packed weights (only the left operand is packed, in `scratch`).
 */
import { affinePacked } from './packed';
import { gruResetHidden, gruStepFinish, gruUpdateReset, lstmStepForward, plainStepForward } from './steps';

/** out [rows, cols] = bias + x·weights: the readout. `bias` 0 means none. */
export function affineRows(out: usize, bias: usize, x: usize, weights: usize, rows: i32, inner: i32, cols: i32, scratch: usize): void {
  affinePacked(out, bias, x, weights, inner, 0, 0, 0, rows, cols, scratch, 0);
}

/** One LSTM layer step: gates = b + x·W + h·R, then the LSTM gate arithmetic in place on h and c. */
export function lstmLayerStep(
  x: usize, input: usize, recurrent: usize, bias: usize, peephole: usize, hState: usize, cell: usize, gates: usize,
  tanhCell: usize, rows: i32, inputWidth: i32, hidden: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affinePacked(gates, bias, x, input, inputWidth, hState, recurrent, hidden, rows, 4 * hidden, scratch, step);
  lstmStepForward(hState, cell, gates, tanhCell, hState, cell, peephole, rows, hidden, lengths, step);
}

/** One GRU layer step (both reset forms), with the runtime's work buffers. */
export function gruLayerStep(
  x: usize, input: usize, bias: usize, recurrent: usize, candidateWeights: usize, candidateBias: usize, hState: usize,
  projected: usize, gates: usize, updateReset: usize, candidate: usize, resetHidden: usize,
  rows: i32, inputWidth: i32, hidden: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affinePacked(projected, bias, x, input, inputWidth, 0, 0, 0, rows, 3 * hidden, scratch, step);
  affinePacked(updateReset, 0, hState, recurrent, hidden, 0, 0, 0, rows, 2 * hidden, scratch, step);
  gruUpdateReset(gates, projected, 0, updateReset, rows, hidden);
  if (candidateBias == 0) {
    gruResetHidden(resetHidden, gates, hState, rows, hidden);
    affinePacked(candidate, 0, resetHidden, candidateWeights, hidden, 0, 0, 0, rows, hidden, scratch, step);
  } else {
    affinePacked(candidate, candidateBias, hState, candidateWeights, hidden, 0, 0, 0, rows, hidden, scratch, step);
  }
  gruStepFinish(hState, gates, projected, 0, candidate, hState, candidateBias != 0 ? 1 : 0, rows, hidden, lengths, step);
}

/** One plain layer step: pre = b + x·W + h·R, φ in place, then h = pre. */
export function plainLayerStep(
  x: usize, input: usize, recurrent: usize, bias: usize, hState: usize, pre: usize, rectified: i32,
  rows: i32, inputWidth: i32, hidden: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affinePacked(pre, bias, x, input, inputWidth, hState, recurrent, hidden, rows, hidden, scratch, step);
  plainStepForward(pre, hState, rectified, rows, hidden, lengths, step);
  memory.copy(hState, pre, <usize>(rows * hidden) << 2);
}
