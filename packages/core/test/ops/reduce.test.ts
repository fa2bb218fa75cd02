import { describe, expect, it } from 'vitest';
import { sum as referenceSum } from 'mathjs';
import { Random, Tape, add, checkGradients, exp, mean, scale, sum, tanh } from '@weft/core';
import { checkOptions, expectPass, input } from './helpers.js';

describe('sum and mean on the tape', () => {
  it('reduce every element to one, as mathjs sum does (mean: divided by the count; of nothing: 0)', () => {
    const a = input(new Random('reduce-values'), [4, 3], 'a');
    const total = referenceSum(Array.from(a.data)) as number;
    expect(Math.abs(sum(new Tape(), a).data[0] - total)).toBeLessThan(1e-14);
    expect(Math.abs(mean(new Tape(), a).data[0] - total / 12)).toBeLessThan(1e-15);
    expect(mean(new Tape(), input(new Random(1), [0], 'empty')).data[0]).toBe(0);
  });

  it('give every element the gradient g (sum) or g/n (mean), as finite differences do', () => {
    const random = new Random('reduce');
    const a = input(random, [4, 3], 'a');
    expectPass(checkGradients((tape) => add(tape, scale(tape, sum(tape, tanh(tape, a)), 0.3), mean(tape, exp(tape, a))), [a], checkOptions));
  });
});
