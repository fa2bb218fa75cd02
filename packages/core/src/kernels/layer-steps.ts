/**
 * Whole layer steps for the inference runtime: one call per layer and step does the input and recurrent products,
 * the bias and the cell's gate arithmetic (equations beside the step kernels: lstm-step.ts, gru-step.ts,
 * plain-step.ts). Composed here from the single kernels; the WebAssembly twins (core/wasm/layers.ts) fuse them so a
 * streaming step crosses into WebAssembly once per layer. The state (h, and c for an LSTM) is updated in place:
 * every product that reads h is complete before the gates overwrite it. Buffers are the runtime's, made once.
 */
import type { FloatArray } from '../dtype.js';
import { addRow } from './elementwise.js';
import { gruResetHidden, gruStepFinish, gruUpdateReset } from './gru-step.js';
import { lstmStepForward } from './lstm-step.js';
import { matmul } from './matmul.js';
import { plainStepForward } from './plain-step.js';

/** out [rows, cols] = x·weights + bias (the readout's affine map), out not aliasing x. */
export function affineRows(out: FloatArray, bias: FloatArray, x: FloatArray, weights: FloatArray, rows: number, inner: number, cols: number): FloatArray {
  matmul(out, x, weights, rows, inner, cols);
  return addRow(out, out, bias, rows, cols);
}

/** gates [rows, 4H] = x·W + b + h·R, then h, c ← the LSTM step (tanhCell [rows, H] is working memory). */
export function lstmLayerStep(
  x: FloatArray, input: FloatArray, recurrent: FloatArray, bias: FloatArray, peephole: FloatArray | null,
  hidden: FloatArray, cell: FloatArray, gates: FloatArray, tanhCell: FloatArray,
  rows: number, inputSize: number, size: number, lengths: Int32Array | null, step: number,
): void {
  matmul(gates, x, input, rows, inputSize, 4 * size);
  addRow(gates, gates, bias, rows, 4 * size);
  matmul(gates, hidden, recurrent, rows, size, 4 * size, false, false, true);
  // In place: the kernel reads each h₋, c₋ entry before writing the same entry.
  lstmStepForward(hidden, cell, gates, tanhCell, hidden, cell, peephole, rows, size, lengths, step);
}

/**
 * projected [rows, 3H] = x·W + b; updateReset [rows, 2H] = h·R_zr; then z, r; the candidate product (with r ⊙ h₋
 * in `resetHidden`, or h₋·R_n + b_Rn when `candidateBias` is given: the reset-after form); then h.
 */
export function gruLayerStep(
  x: FloatArray, input: FloatArray, bias: FloatArray, recurrent: FloatArray, candidateWeights: FloatArray,
  candidateBias: FloatArray | null, hidden: FloatArray, projected: FloatArray, gates: FloatArray,
  updateReset: FloatArray, candidate: FloatArray, resetHidden: FloatArray,
  rows: number, inputSize: number, size: number, lengths: Int32Array | null, step: number,
): void {
  matmul(projected, x, input, rows, inputSize, 3 * size);
  addRow(projected, projected, bias, rows, 3 * size);
  matmul(updateReset, hidden, recurrent, rows, size, 2 * size);
  gruUpdateReset(gates, projected, 0, updateReset, rows, size);
  if (candidateBias === null) {
    gruResetHidden(resetHidden, gates, hidden, rows, size);
    matmul(candidate, resetHidden, candidateWeights, rows, size, size);
  } else {
    matmul(candidate, hidden, candidateWeights, rows, size, size);
    addRow(candidate, candidate, candidateBias, rows, size);
  }
  gruStepFinish(hidden, gates, projected, 0, candidate, hidden, candidateBias !== null, rows, size, lengths, step);
}

/** pre [rows, H] = x·W + b + h·R, φ applied (held rows keep h₋), then h = pre. */
export function plainLayerStep(
  x: FloatArray, input: FloatArray, recurrent: FloatArray, bias: FloatArray, hidden: FloatArray, pre: FloatArray,
  rectified: boolean, rows: number, inputSize: number, size: number, lengths: Int32Array | null, step: number,
): void {
  matmul(pre, x, input, rows, inputSize, size);
  addRow(pre, pre, bias, rows, size);
  matmul(pre, hidden, recurrent, rows, size, size, false, false, true);
  plainStepForward(pre, hidden, rectified, rows, size, lengths, step);
  for (let i = 0; i < rows * size; i++) hidden[i] = pre[i];
}
