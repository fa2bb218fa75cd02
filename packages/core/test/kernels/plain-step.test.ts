import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { numericGradient, uniform, weighted } from './finite-differences.js';

// Three rows at step 1; row 1 has length 1, so it is past its end and holds its state.
const rows = 3;
const hidden = 4;
const lengths = Int32Array.of(3, 1, 2);
const step = 1;

function forward(pre: Float64Array, hPrevious: Float64Array, rectified: boolean): Float64Array {
  const h = Float64Array.from(pre);
  kernels.plainStepForward(h, hPrevious, rectified, rows, hidden, lengths, step);
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
      kernels.plainStepBackward(preGradient, hPreviousGradient, upstream, h, rectified, rows, hidden, lengths, step);
      const numeric = numericGradient(() => weighted(forward(pre, hPrevious, rectified), upstream), pre);
      expect(worstGap(preGradient, numeric)).toBeLessThan(1e-8);
      const numericPrevious = numericGradient(() => weighted(forward(pre, hPrevious, rectified), upstream), hPrevious);
      expect(worstGap(hPreviousGradient, numericPrevious)).toBeLessThan(1e-8);
      expect(Array.from(preGradient.subarray(hidden, 2 * hidden))).toEqual([0, 0, 0, 0]);
    });
  }
});
