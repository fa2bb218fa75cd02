/**
 * The elementwise part of one plain recurrent step, h = φ(x·W + h₋·R + b) with φ = tanh or ReLU (Elman 1990,
 * "Finding structure in time"). Rows past their length hold their state.
 */
import type { FloatArray } from '../dtype.js';
import { holdRow, passHeldRow } from './rows.js';
import { matmul } from './matmul.js';
import { addRow } from './elementwise.js';

/** On entry `hState` holds the pre-activation a; on exit φ(a), or h₋ for held rows. */
export function plainStepForward(
  hState: FloatArray,
  hPrevious: FloatArray,
  rectified: boolean,
  rows: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (holdRow(lengths, b, step, hState, hPrevious, row, hidden)) continue;
    if (rectified) {
      for (let j = 0; j < hidden; j++) {
        const a = hState[row + j];
        hState[row + j] = a > 0 ? a : 0;
      }
    } else {
      for (let j = 0; j < hidden; j++) hState[row + j] = Math.tanh(hState[row + j]);
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
  hState: FloatArray,
  rectified: boolean,
  rows: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (passHeldRow(lengths, b, step, hiddenPreviousGradient, hiddenGradient, row, hidden, preGradient, row, row + hidden)) continue;
    for (let j = 0; j < hidden; j++) {
      const h = hState[row + j];
      const dh = hiddenGradient[row + j];
      preGradient[row + j] = rectified ? (h > 0 ? dh : 0) : dh * (1 - h * h);
    }
  }
}

/**
 * The runtime's whole-layer step (its WebAssembly twin: core/wasm/layers.ts; one call per layer and step):
 * pre [rows, H] = x·W + b + h·R, φ applied (held rows keep h₋), then h = pre.
 */
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
