/**
 * The elementwise parts of one GRU step (Cho et al. 2014, "Learning phrase representations using RNN
 * encoder–decoder for statistical machine translation", eqs. 5–8, in the form of the ONNX GRU operator), in our
 * gate order z (update), r (reset), n (candidate), the same order as ONNX's z, r, h:
 *
 *   z = σ(a_z + h₋·R_z),   r = σ(a_r + h₋·R_r),
 *   reset before the product (default):  n = tanh(a_n + (r ⊙ h₋)·R_n)
 *   reset after the product:             n = tanh(a_n + r ⊙ (h₋·R_n + b_Rn))
 *   h = (1 − z) ⊙ n + z ⊙ h₋
 *
 * where a = x·W + b is the row's [3H] input projection. The products with R_zr [H, 2H] and R_n [H, H] are the
 * caller's matmul calls; q below is the recurrent candidate term ((r ⊙ h₋)·R_n, or h₋·R_n + b_Rn).
 * Rows past their length hold their state.
 */
import type { FloatArray } from '../dtype.js';
import { logistic } from './logistic.js';
import { holdRow, isHeld, passHeldRow } from './rows.js';
import { matmul } from './matmul.js';
import { addRow } from './elementwise.js';
import { productShape, refill } from './shapes.js';
import type { GruFinishInputs, GruForm, GruSaved, GruStepGradients, GruStepOut, GruWeights, GruWork, LayerStepAt, StepAt } from './step-records.js';

/**
 * Writes z and r into columns [0, 2H) of `gates` [B, 3H] from the projection row and h₋·R_zr ([B, 2H]).
 * Aliasing: `gates` may alias `projected` when `projectedOffset` is 0 (entry by entry); not `recurrentGates`
 * (its rows are 2H apart, the gates' 3H).
 */
export function gruUpdateReset(
  gates: FloatArray,
  projected: FloatArray,
  projectedOffset: number,
  recurrentGates: FloatArray,
  rows: number,
  hidden: number,
): void {
  for (let b = 0; b < rows; b++) {
    const gate = b * 3 * hidden;
    const source = projectedOffset + gate;
    const product = b * 2 * hidden;
    for (let k = 0; k < 2 * hidden; k++) gates[gate + k] = logistic(projected[source + k] + recurrentGates[product + k]);
  }
}

/** resetHidden = r ⊙ h₋ (the default form's input to R_n). Aliasing: `resetHidden` may be `hPrevious` (entry by entry). */
export function gruResetHidden(resetHidden: FloatArray, gates: FloatArray, hPrevious: FloatArray, rows: number, hidden: number): void {
  for (let b = 0; b < rows; b++) {
    for (let j = 0; j < hidden; j++) resetHidden[b * hidden + j] = gates[b * 3 * hidden + hidden + j] * hPrevious[b * hidden + j];
  }
}

/**
 * Writes n into columns [2H, 3H) of `out.gates` and the new state out.h (h₋ for held rows).
 * Aliasing: out.h may be inputs.hPrevious (each entry is read before it is written); nothing else may alias.
 */
export function gruStepFinish(out: GruStepOut, inputs: GruFinishInputs, form: GruForm, at: StepAt): void {
  const { h: hState, gates } = out;
  const { projected, projectedOffset, candidate, hPrevious } = inputs;
  const { rows, hidden } = at;
  const resetAfter = form === 'resetAfter';
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (holdRow(at, b, hState, hPrevious)) continue;
    const gate = b * 3 * hidden;
    for (let j = 0; j < hidden; j++) {
      const z = gates[gate + j];
      const q = candidate[row + j];
      const a = projected[projectedOffset + gate + 2 * hidden + j] + (resetAfter ? gates[gate + hidden + j] * q : q);
      const n = Math.tanh(a);
      gates[gate + 2 * hidden + j] = n;
      hState[row + j] = (1 - z) * n + z * hPrevious[row + j];
    }
  }
}

/**
 * First half of the reverse step. With δh arriving:
 *   δn = δh(1 − z), δa_z = δh(h₋ − n)·z(1 − z), δa_n = δn(1 − n²), δh₋ += δh·z;
 *   reset after: δq = δa_n ⊙ r, δa_r = δa_n·q·r(1 − r);   reset before: δq = δa_n (δa_r follows in gruBackwardReset).
 * Writes δa_z (and δa_r when reset after, else 0) into `out.updateReset` [B, 2H], δa_n into `out.candidate`
 * [B, H] and δq into `out.product` [B, H], and adds δh·z into `out.hPrevious`; held rows get zeros and pass δh
 * to h₋. Aliasing: out.hPrevious may alias `arriving` (each entry is read before it is written); out.product
 * must not alias saved.candidate (in the reset-after form q is read after δq is written).
 */
export function gruBackwardCandidate(out: GruStepGradients, arriving: FloatArray, saved: GruSaved, form: GruForm, at: StepAt): void {
  const { updateReset: updateResetGradient, candidate: candidateGradient, product: productGradient, hPrevious: hiddenPreviousGradient } = out;
  const hiddenGradient = arriving;
  const { gates, candidate, hPrevious } = saved;
  const { rows, hidden } = at;
  const resetAfter = form === 'resetAfter';
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const pair = b * 2 * hidden;
    if (passHeldRow(at, b, hiddenPreviousGradient, hiddenGradient, updateResetGradient, 2 * hidden)) {
      candidateGradient.fill(0, row, row + hidden);
      productGradient.fill(0, row, row + hidden);
      continue;
    }
    const gate = b * 3 * hidden;
    for (let j = 0; j < hidden; j++) {
      const z = gates[gate + j];
      const r = gates[gate + hidden + j];
      const n = gates[gate + 2 * hidden + j];
      const dh = hiddenGradient[row + j];
      const hPrev = hPrevious[row + j];
      const dan = dh * (1 - z) * (1 - n * n);
      updateResetGradient[pair + j] = dh * (hPrev - n) * z * (1 - z);
      candidateGradient[row + j] = dan;
      if (resetAfter) {
        productGradient[row + j] = dan * r;
        updateResetGradient[pair + hidden + j] = dan * candidate[row + j] * r * (1 - r);
      } else {
        productGradient[row + j] = dan;
        updateResetGradient[pair + hidden + j] = 0;
      }
      if (hiddenPreviousGradient !== null) hiddenPreviousGradient[row + j] += dh * z;
    }
  }
}

/**
 * Second half, reset-before form only: with δ(r ⊙ h₋) = δq·R_nᵀ computed by the caller,
 * δa_r = δ(r⊙h₋)·h₋·r(1 − r) into columns [H, 2H) of `out.updateReset` and δh₋ += δ(r⊙h₋)·r into
 * `out.hPrevious` (out.candidate and out.product are not touched). Held rows have δq = 0 and are left alone.
 * Aliasing: out.hPrevious may alias `resetHiddenGradient` or saved.hPrevious (entry by entry).
 */
export function gruBackwardReset(out: GruStepGradients, resetHiddenGradient: FloatArray, saved: GruSaved, at: StepAt): void {
  const { updateReset: updateResetGradient, hPrevious: hiddenPreviousGradient } = out;
  const { gates, hPrevious } = saved;
  const { rows, hidden, lengths, step } = at;
  for (let b = 0; b < rows; b++) {
    if (isHeld(lengths, b, step)) continue;
    const row = b * hidden;
    const gate = b * 3 * hidden;
    const pair = b * 2 * hidden;
    for (let j = 0; j < hidden; j++) {
      const r = gates[gate + hidden + j];
      const d = resetHiddenGradient[row + j];
      updateResetGradient[pair + hidden + j] = d * hPrevious[row + j] * r * (1 - r);
      if (hiddenPreviousGradient !== null) hiddenPreviousGradient[row + j] += d * r;
    }
  }
}

/**
 * The runtime's whole-layer step (its WebAssembly twin: core/wasm/layers.ts; one call per layer and step):
 * projected [rows, 3H] = x·W + b; updateReset [rows, 2H] = h·R_zr; then z, r; the candidate product (with r ⊙ h₋
 * in `work.resetHidden`, or h₋·R_n + b_Rn when `weights.candidateBias` is given: the reset-after form); then h.
 *
 * Aliasing: `h` is updated in place (read before written, entry by entry); `x` must not alias `h` or the work.
 */
export function gruLayerStep(h: FloatArray, x: FloatArray, weights: GruWeights, work: GruWork, at: LayerStepAt): void {
  const { rows, hidden, inputWidth } = at;
  const { projected, gates, updateReset, candidate, resetHidden } = work;
  matmul(projected, x, weights.input, refill(inputProduct, rows, inputWidth, 3 * hidden));
  addRow(projected, projected, weights.bias, rows, 3 * hidden);
  matmul(updateReset, h, weights.recurrent, refill(gateProduct, rows, hidden, 2 * hidden));
  gruUpdateReset(gates, projected, 0, updateReset, rows, hidden);
  refill(candidateProduct, rows, hidden, hidden);
  if (weights.candidateBias === null) {
    gruResetHidden(resetHidden, gates, h, rows, hidden);
    matmul(candidate, resetHidden, weights.candidate, candidateProduct);
  } else {
    matmul(candidate, h, weights.candidate, candidateProduct);
    addRow(candidate, candidate, weights.candidateBias, rows, hidden);
  }
  layerOut.h = h;
  layerOut.gates = gates;
  layerInputs.projected = projected;
  layerInputs.candidate = candidate;
  layerInputs.hPrevious = h;
  gruStepFinish(layerOut, layerInputs, weights.candidateBias === null ? 'resetBefore' : 'resetAfter', at);
}

/** The layer step's own records, made once and refilled per call (kernels are synchronous and not re-entered). */
const inputProduct = productShape(0, 0, 0);
const gateProduct = productShape(0, 0, 0);
const candidateProduct = productShape(0, 0, 0);
const layerOut: GruStepOut = { h: new Float32Array(0), gates: new Float32Array(0) };
const layerInputs: GruFinishInputs = { projected: new Float32Array(0), projectedOffset: 0, candidate: new Float32Array(0), hPrevious: new Float32Array(0) };
