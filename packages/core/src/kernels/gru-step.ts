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

/** Writes z and r into columns [0, 2H) of `gates` [B, 3H] from the projection row and h₋·R_zr ([B, 2H]). */
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

/** resetHidden = r ⊙ h₋ (the default form's input to R_n). */
export function gruResetHidden(resetHidden: FloatArray, gates: FloatArray, hPrevious: FloatArray, rows: number, hidden: number): void {
  for (let b = 0; b < rows; b++) {
    for (let j = 0; j < hidden; j++) resetHidden[b * hidden + j] = gates[b * 3 * hidden + hidden + j] * hPrevious[b * hidden + j];
  }
}

/** Writes n into columns [2H, 3H) of `gates` and the new state h (h₋ for held rows). */
export function gruStepFinish(
  hState: FloatArray,
  gates: FloatArray,
  projected: FloatArray,
  projectedOffset: number,
  candidate: FloatArray,
  hPrevious: FloatArray,
  resetAfter: boolean,
  rows: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (holdRow(lengths, b, step, hState, hPrevious, row, hidden)) continue;
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
 * Writes δa_z (and δa_r when reset after, else 0) into `updateResetGradient` [B, 2H], δa_n into
 * `candidateGradient` [B, H] and δq into `productGradient` [B, H]; held rows get zeros and pass δh to h₋.
 */
export function gruBackwardCandidate(
  updateResetGradient: FloatArray,
  candidateGradient: FloatArray,
  productGradient: FloatArray,
  hiddenPreviousGradient: FloatArray | null,
  hiddenGradient: FloatArray,
  gates: FloatArray,
  candidate: FloatArray,
  hPrevious: FloatArray,
  resetAfter: boolean,
  rows: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const pair = b * 2 * hidden;
    if (passHeldRow(lengths, b, step, hiddenPreviousGradient, hiddenGradient, row, hidden, updateResetGradient, pair, pair + 2 * hidden)) {
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
 * δa_r = δ(r⊙h₋)·h₋·r(1 − r) and δh₋ += δ(r⊙h₋)·r. Held rows have δq = 0 and are left alone.
 */
export function gruBackwardReset(
  updateResetGradient: FloatArray,
  hiddenPreviousGradient: FloatArray | null,
  resetHiddenGradient: FloatArray,
  gates: FloatArray,
  hPrevious: FloatArray,
  rows: number,
  hidden: number,
  lengths: Int32Array | null,
  step: number,
): void {
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
