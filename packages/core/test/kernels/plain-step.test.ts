import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { numericGradient, uniform, weighted } from './finite-differences.js';
import * as layer from './layer-batch.js';
import { specRnn } from '../../../cells/test/onnx-equations.js';

// Three rows at step 1; row 1 has length 1, so it is past its end and holds its state.
const rows = 3;
const hidden = 4;
const lengths = Int32Array.of(3, 1, 2);
const step = 1;
const at = { rows, hidden, lengths, step };
const activationOf = (rectified: boolean) => (rectified ? 'relu' : 'tanh');

function forward(pre: Float64Array, hPrevious: Float64Array, rectified: boolean): Float64Array {
  const h = Float64Array.from(pre);
  kernels.plainStepForward(h, hPrevious, activationOf(rectified), at);
  return h;
}

describe('the plain step kernels (Elman 1990: h = φ(a))', () => {
  for (const rectified of [false, true]) {
    const name = rectified ? 'ReLU' : 'tanh';
    it(`apply ${name} to active rows and hold a row past its length`, () => {
      const random = new Random(`plain-${name}`);
      const pre = uniform(random, rows * hidden, -2, 2);
      const hPrevious = uniform(random, rows * hidden);
      const h = forward(pre, hPrevious, rectified);
      for (let b = 0; b < rows; b++) {
        for (let j = 0; j < hidden; j++) {
          const i = b * hidden + j;
          const expected = b === 1 ? hPrevious[i] : rectified ? Math.max(0, pre[i]) : Math.tanh(pre[i]);
          expect(h[i]).toBe(expected);
        }
      }
    });

    it(`give δa = δh·φ′ (${name}) as finite differences do, and pass a held row's δh to h₋`, () => {
      const random = new Random(`plain-back-${name}`);
      const pre = uniform(random, rows * hidden, -2, 2);
      // Away from ReLU's kink, where φ′ is not defined.
      for (let i = 0; i < pre.length; i++) if (Math.abs(pre[i]) < 0.1) pre[i] += 0.2;
      const hPrevious = uniform(random, rows * hidden);
      const upstream = uniform(random, rows * hidden);
      const h = forward(pre, hPrevious, rectified);
      const preGradient = new Float64Array(rows * hidden).fill(7);
      const hPreviousGradient = new Float64Array(rows * hidden);
      kernels.plainStepBackward({ pre: preGradient, hPrevious: hPreviousGradient }, upstream, h, activationOf(rectified), at);
      const numeric = numericGradient(() => weighted(forward(pre, hPrevious, rectified), upstream), pre);
      expect(worstGap(preGradient, numeric)).toBeLessThan(1e-8);
      const numericPrevious = numericGradient(() => weighted(forward(pre, hPrevious, rectified), upstream), hPrevious);
      expect(worstGap(hPreviousGradient, numericPrevious)).toBeLessThan(1e-8);
      expect(Array.from(preGradient.subarray(hidden, 2 * hidden))).toEqual([0, 0, 0, 0]);
    });
  }
});

describe("the runtime's whole-layer plain step", () => {
  const { rows, width, hidden, lengths, table, vector, ours, batch } = layer;
  it('compute one plain tanh step as the ONNX RNN equations do, and a ReLU step as max(0, x·W + b + h·R)', () => {
    const random = new Random('layer-plain');
    const w = table(random, hidden, width);
    const r = table(random, hidden, hidden);
    const b = vector(random, 2 * hidden);
    const { x, h0, flatX, state } = batch(random);
    const spec = specRnn({ x: [x], w, r, b, h0, lengths: Array.from(lengths) });
    const bias = Float64Array.from({ length: hidden }, (_, j) => b[j] + b[hidden + j]);
    const relu = Float64Array.from(state);
    const weights = { input: ours(w, [0]), recurrent: ours(r, [0]), bias };
    const place = { rows, inputWidth: width, hidden, lengths, step: 0 };
    kernels.plainLayerStep(state, flatX, weights, new Float64Array(rows * hidden), 'tanh', place);
    expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    kernels.plainLayerStep(relu, flatX, weights, new Float64Array(rows * hidden), 'relu', place);
    for (let row = 0; row < rows; row++) {
      for (let j = 0; j < hidden; j++) {
        let a = bias[j];
        for (let k = 0; k < width; k++) a += x[row][k] * w[j][k];
        for (let k = 0; k < hidden; k++) a += h0[row][k] * r[j][k];
        const expected = lengths[row] === 0 ? h0[row][j] : Math.max(0, a);
        expect(Math.abs(relu[row * hidden + j] - expected)).toBeLessThan(1e-14);
      }
    }
  });
});
