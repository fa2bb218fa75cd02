import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, dropout, filled, tanh } from '@weft/core';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

describe('dropout on the tape (inverted: Srivastava et al. 2014, scaled by 1/(1 − rate))', () => {
  it('keeps about 1 − rate of the elements, scaled so the mean is unchanged, with the same mask for the same seed', () => {
    const ones = filled([100, 100], 1, 'f64');
    const first = dropout(new Tape(), ones, 0.3, new Random('mask'));
    const kept = Array.from(first.data).filter((v) => v !== 0);
    // 10,000 draws: the kept share is within 3 standard deviations (√(0.3·0.7/10,000) ≈ 0.0046) of 0.7.
    expect(Math.abs(kept.length / 10_000 - 0.7)).toBeLessThan(0.014);
    expect(new Set(kept)).toEqual(new Set([1 / 0.7]));
    expect(Array.from(dropout(new Tape(), ones, 0.3, new Random('mask')).data)).toEqual(Array.from(first.data));
    expect(Array.from(dropout(new Tape(), ones, 0, new Random('mask')).data).every((v) => v === 1)).toBe(true);
  });

  it('multiplies the gradient by the saved mask, as finite differences do with the mask held fixed', () => {
    const a = input(new Random('drop'), [5, 6], 'a');
    const w = input(new Random('dropw'), [5, 6], 'w');
    // A fresh generator with the same seed per evaluation: every evaluation draws the same mask.
    expectPass(checkGradients((tape) => weightedSum(tape, tanh(tape, dropout(tape, a, 0.4, new Random('mask'))), w), [a], checkOptions));
  });

  it('refuses a rate outside [0, 1)', () => {
    expect(() => dropout(new Tape(), filled([2], 1, 'f64'), 1, new Random(0))).toThrowError(
      'Invalid option at dropout.rate: expected a number in [0, 1), received 1',
    );
  });
});
