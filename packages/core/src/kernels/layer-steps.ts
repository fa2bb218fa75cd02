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
  x: FloatArray,
  input: FloatArray,
  recurrent: FloatArray,
  bias: FloatArray,
  peephole: FloatArray | null,
  hState: FloatArray,
  cell: FloatArray,
  gates: FloatArray,
  tanhCell: FloatArray,
  rows: number,
  inputWidth: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  matmul(gates, x, input, rows, inputWidth, 4 * hidden);
  addRow(gates, gates, bias, rows, 4 * hidden);
  matmul(gates, hState, recurrent, rows, hidden, 4 * hidden, false, false, true);
  // In place: the kernel reads each h₋, c₋ entry before writing the same entry.
  lstmStepForward(hState, cell, gates, tanhCell, hState, cell, peephole, rows, hidden, lengths, step);
}

/**
 * projected [rows, 3H] = x·W + b; updateReset [rows, 2H] = h·R_zr; then z, r; the candidate product (with r ⊙ h₋
 * in `resetHidden`, or h₋·R_n + b_Rn when `candidateBias` is given: the reset-after form); then h.
 */
export function gruLayerStep(
  x: FloatArray,
  input: FloatArray,
  bias: FloatArray,
  recurrent: FloatArray,
  candidateWeights: FloatArray,
  candidateBias: FloatArray | null,
  hState: FloatArray,
  projected: FloatArray,
  gates: FloatArray,
  updateReset: FloatArray,
  candidate: FloatArray,
  resetHidden: FloatArray,
  rows: number,
  inputWidth: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  matmul(projected, x, input, rows, inputWidth, 3 * hidden);
  addRow(projected, projected, bias, rows, 3 * hidden);
  matmul(updateReset, hState, recurrent, rows, hidden, 2 * hidden);
  gruUpdateReset(gates, projected, 0, updateReset, rows, hidden);
  if (candidateBias === null) {
    gruResetHidden(resetHidden, gates, hState, rows, hidden);
    matmul(candidate, resetHidden, candidateWeights, rows, hidden, hidden);
  } else {
    matmul(candidate, hState, candidateWeights, rows, hidden, hidden);
    addRow(candidate, candidate, candidateBias, rows, hidden);
  }
  gruStepFinish(hState, gates, projected, 0, candidate, hState, candidateBias !== null, rows, hidden, lengths, step);
}

/** pre [rows, H] = x·W + b + h·R, φ applied (held rows keep h₋), then h = pre. */
export function plainLayerStep(
  x: FloatArray,
  input: FloatArray,
  recurrent: FloatArray,
  bias: FloatArray,
  hState: FloatArray,
  pre: FloatArray,
  rectified: boolean,
  rows: number,
  inputWidth: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  matmul(pre, x, input, rows, inputWidth, hidden);
  addRow(pre, pre, bias, rows, hidden);
  matmul(pre, hState, recurrent, rows, hidden, hidden, false, false, true);
  plainStepForward(pre, hState, rectified, rows, hidden, lengths, step);
  for (let i = 0; i < rows * hidden; i++) hState[i] = pre[i];
}
