import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { numericGradient, uniform, weighted } from './finite-differences.js';
import * as layer from './layer-batch.js';
import { specGru } from '../../../cells/test/onnx-equations.js';

// Three rows at step 1; row 1 has length 1, so it is past its end and holds its state.
const rows = 3;
const hidden = 4;
const lengths = Int32Array.of(3, 1, 2);
const step = 1;
const at = { rows, hidden, lengths, step };
const formOf = (resetAfter: boolean) => (resetAfter ? 'resetAfter' : 'resetBefore');
const sigma = (x: number): number => 1 / (1 + Math.exp(-x));

/** out [m, n] (+)= op(a) · op(b), written plainly here so the test composes the kernels the way a GRU cell does. */
function product(out: Float64Array, a: Float64Array, b: Float64Array, m: number, k: number, n: number, transposeA = false, transposeB = false): void {
  for (let r = 0; r < m; r++) {
    for (let c = 0; c < n; c++) {
      let s = 0;
      for (let i = 0; i < k; i++) s += (transposeA ? a[i * m + r] : a[r * k + i]) * (transposeB ? b[c * k + i] : b[i * n + c]);
      out[r * n + c] += s;
    }
  }
}

interface Inputs {
  projected: Float64Array; // x·W + b, [rows, 3H]
  hPrevious: Float64Array;
  recurrent: Float64Array; // R_zr [H, 2H]
  recurrentCandidate: Float64Array; // R_n [H, H]
  candidateBias: Float64Array; // b_Rn [H]
}

function inputs(seed: string): Inputs {
  const random = new Random(seed);
  return {
    projected: uniform(random, rows * 3 * hidden, -1.5, 1.5),
    hPrevious: uniform(random, rows * hidden),
    recurrent: uniform(random, hidden * 2 * hidden),
    recurrentCandidate: uniform(random, hidden * hidden),
    candidateBias: uniform(random, hidden),
  };
}

function forward(x: Inputs, resetAfter: boolean) {
  const updateReset = new Float64Array(rows * 2 * hidden);
  product(updateReset, x.hPrevious, x.recurrent, rows, hidden, 2 * hidden);
  const gates = new Float64Array(rows * 3 * hidden);
  kernels.gruUpdateReset(gates, x.projected, 0, updateReset, rows, hidden);
  const candidate = new Float64Array(rows * hidden);
  const resetHidden = new Float64Array(rows * hidden);
  if (resetAfter) {
    product(candidate, x.hPrevious, x.recurrentCandidate, rows, hidden, hidden);
    for (let b = 0; b < rows; b++) for (let j = 0; j < hidden; j++) candidate[b * hidden + j] += x.candidateBias[j];
  } else {
    kernels.gruResetHidden(resetHidden, gates, x.hPrevious, rows, hidden);
    product(candidate, resetHidden, x.recurrentCandidate, rows, hidden, hidden);
  }
  const h = new Float64Array(rows * hidden);
  kernels.gruStepFinish({ h, gates }, { projected: x.projected, projectedOffset: 0, candidate, hPrevious: x.hPrevious }, formOf(resetAfter), at);
  return { h, gates, candidate, resetHidden };
}

describe("the GRU step kernels (Cho et al. 2014, in the ONNX GRU operator's two forms)", () => {
  for (const resetAfter of [false, true]) {
    const form = resetAfter ? 'reset after the product' : 'reset before the product';
    it(`compute z, r, n and h of the equations with the ${form}, and hold a row past its length`, () => {
      const x = inputs(`gru-${form}`);
      const { h } = forward(x, resetAfter);
      for (let b = 0; b < rows; b++) {
        for (let j = 0; j < hidden; j++) {
          const at = b * hidden + j;
          if (b === 1) {
            expect(h[at]).toBe(x.hPrevious[at]);
            continue;
          }
          const hp = (k: number) => x.hPrevious[b * hidden + k];
          // z (block 0) or r (block 1) of unit k: σ(a + h₋·R_zr).
          const gate = (block: number, k: number) => {
            let s = x.projected[b * 3 * hidden + block * hidden + k];
            for (let m = 0; m < hidden; m++) s += hp(m) * x.recurrent[m * 2 * hidden + block * hidden + k];
            return sigma(s);
          };
          const z = gate(0, j);
          let q = resetAfter ? x.candidateBias[j] : 0;
          for (let k = 0; k < hidden; k++) q += (resetAfter ? hp(k) : gate(1, k) * hp(k)) * x.recurrentCandidate[k * hidden + j];
          if (resetAfter) q *= gate(1, j);
          const n = Math.tanh(x.projected[b * 3 * hidden + 2 * hidden + j] + q);
          expect(worstGap([h[at]], [(1 - z) * n + z * hp(j)])).toBeLessThan(1e-14);
        }
      }
    });

    it(`with the caller's products, give every gradient as finite differences do, ${form}`, () => {
      const x = inputs(`gru-back-${form}`);
      const upstream = uniform(new Random(`gru-upstream-${form}`), rows * hidden);
      const objective = () => weighted(forward(x, resetAfter).h, upstream);
      const { gates, candidate, resetHidden } = forward(x, resetAfter);
      const updateResetGradient = new Float64Array(rows * 2 * hidden);
      const candidateGradient = new Float64Array(rows * hidden);
      const productGradient = new Float64Array(rows * hidden);
      const hPreviousGradient = new Float64Array(rows * hidden);
      const recurrentGradient = new Float64Array(hidden * 2 * hidden);
      const candidateWeightsGradient = new Float64Array(hidden * hidden);
      const candidateBiasGradient = new Float64Array(hidden);
      const gradients = { updateReset: updateResetGradient, candidate: candidateGradient, product: productGradient, hPrevious: hPreviousGradient };
      const saved = { gates, candidate, hPrevious: x.hPrevious };
      kernels.gruBackwardCandidate(gradients, upstream, saved, formOf(resetAfter), at);
      if (resetAfter) {
        product(candidateWeightsGradient, x.hPrevious, productGradient, hidden, rows, hidden, true);
        kernels.sumRowsInto(candidateBiasGradient, productGradient, rows, hidden);
        product(hPreviousGradient, productGradient, x.recurrentCandidate, rows, hidden, hidden, false, true);
      } else {
        const resetHiddenGradient = new Float64Array(rows * hidden);
        product(resetHiddenGradient, productGradient, x.recurrentCandidate, rows, hidden, hidden, false, true);
        kernels.gruBackwardReset(gradients, resetHiddenGradient, saved, at);
        product(candidateWeightsGradient, resetHidden, productGradient, hidden, rows, hidden, true);
      }
      product(hPreviousGradient, updateResetGradient, x.recurrent, rows, 2 * hidden, hidden, false, true);
      product(recurrentGradient, x.hPrevious, updateResetGradient, hidden, rows, 2 * hidden, true);
      const projectedGradient = new Float64Array(rows * 3 * hidden);
      for (let b = 0; b < rows; b++) {
        projectedGradient.set(updateResetGradient.subarray(b * 2 * hidden, (b + 1) * 2 * hidden), b * 3 * hidden);
        projectedGradient.set(candidateGradient.subarray(b * hidden, (b + 1) * hidden), b * 3 * hidden + 2 * hidden);
      }
      expect(worstGap(projectedGradient, numericGradient(objective, x.projected))).toBeLessThan(1e-8);
      expect(worstGap(hPreviousGradient, numericGradient(objective, x.hPrevious))).toBeLessThan(1e-8);
      expect(worstGap(recurrentGradient, numericGradient(objective, x.recurrent))).toBeLessThan(1e-8);
      expect(worstGap(candidateWeightsGradient, numericGradient(objective, x.recurrentCandidate))).toBeLessThan(1e-8);
      if (resetAfter) expect(worstGap(candidateBiasGradient, numericGradient(objective, x.candidateBias))).toBeLessThan(1e-8);
    });
  }
});

describe("the runtime's whole-layer GRU step", () => {
  const { rows, width, hidden, lengths, table, vector, ours, batch } = layer;
  for (const linearBeforeReset of [false, true]) {
    it(`compute one GRU step as the ONNX GRU equations do, linear_before_reset ${Number(linearBeforeReset)}`, () => {
      const random = new Random(`layer-gru-${linearBeforeReset}`);
      const w = table(random, 3 * hidden, width);
      const r = table(random, 3 * hidden, hidden);
      // With the reset before the product ONNX's candidate Rb sits outside it, so it folds into our bias.
      const b = vector(random, 6 * hidden);
      const { x, h0, flatX, state } = batch(random);
      const spec = specGru({ x: [x], w, r, b, h0, lengths: Array.from(lengths), linearBeforeReset });
      const bias = Float64Array.from({ length: 3 * hidden }, (_, i) => b[i] + (linearBeforeReset && i >= 2 * hidden ? 0 : b[3 * hidden + i]));
      const candidateBias = linearBeforeReset ? Float64Array.from(b.slice(5 * hidden)) : null;
      const work = {
        projected: new Float64Array(rows * 3 * hidden),
        gates: new Float64Array(rows * 3 * hidden),
        updateReset: new Float64Array(rows * 2 * hidden),
        candidate: new Float64Array(rows * hidden),
        resetHidden: new Float64Array(rows * hidden),
      };
      const weights = { input: ours(w, [0, 1, 2]), bias, recurrent: ours(r, [0, 1]), candidate: ours(r, [2], 0, 1), candidateBias };
      kernels.gruLayerStep(state, flatX, weights, work, { rows, inputWidth: width, hidden, lengths, step: 0 });
      expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    });
  }
});
