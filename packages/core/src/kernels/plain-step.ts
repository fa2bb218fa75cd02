/**
 * The elementwise part of one plain recurrent step, h = φ(x·W + h₋·R + b) with φ = tanh or ReLU (Elman 1990,
 * "Finding structure in time"). Rows past their length hold their state.
 */
import type { FloatArray } from '../dtype.js';
import { holdRow, passHeldRow } from './rows.js';
import { matmul, matmulInto } from './matmul.js';
import { addRow } from './elementwise.js';
import { productShape, refill } from './shapes.js';
import type { LayerStepAt, PlainStepGradients, PlainWeights, StepActivation, StepAt } from './step-records.js';

/**
 * On entry `h` holds the pre-activation a; on exit φ(a), or h₋ for held rows.
 * Aliasing: `h` carries the pre-activation in, so it cannot also be `hPrevious` (a held row would keep the
 * pre-activation instead of h₋); the layer step below keeps a pre-activation buffer of its own for this.
 */
export function plainStepForward(h: FloatArray, hPrevious: FloatArray, activation: StepActivation, at: StepAt): void {
  const hState = h;
  const { rows, hidden } = at;
  const rectified = activation === 'relu';
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (holdRow(at, b, hState, hPrevious)) continue;
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
 * Writes δa = δh·φ′ into `out.pre` (zero for held rows, whose δh passes to h₋ unchanged, added into
 * `out.hPrevious`); φ′ = 1 − h² for tanh and [h > 0] for ReLU, both from the output h.
 * Aliasing: no output may alias an input (a held row's δa is zeroed before its δh is passed on).
 */
export function plainStepBackward(out: PlainStepGradients, arriving: FloatArray, h: FloatArray, activation: StepActivation, at: StepAt): void {
  const { pre: preGradient, hPrevious: hiddenPreviousGradient } = out;
  const hiddenGradient = arriving;
  const hState = h;
  const { rows, hidden } = at;
  const rectified = activation === 'relu';
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (passHeldRow(at, b, hiddenPreviousGradient, hiddenGradient, preGradient, hidden)) continue;
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
 * Aliasing: `h` is updated in place; `pre` and `x` must not alias `h`.
 */
export function plainLayerStep(h: FloatArray, x: FloatArray, weights: PlainWeights, pre: FloatArray, activation: StepActivation, at: LayerStepAt): void {
  const { rows, hidden, inputWidth } = at;
  matmul(pre, x, weights.input, refill(inputProduct, rows, inputWidth, hidden));
  addRow(pre, pre, weights.bias, rows, hidden);
  matmulInto(pre, h, weights.recurrent, refill(recurrentProduct, rows, hidden, hidden));
  plainStepForward(pre, h, activation, at);
  for (let i = 0; i < rows * hidden; i++) h[i] = pre[i];
}

/** The layer step's own records, made once and refilled per call (kernels are synchronous and not re-entered). */
const inputProduct = productShape(0, 0, 0);
const recurrentProduct = productShape(0, 0, 0);
