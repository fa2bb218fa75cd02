import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, multiply, reshape, tensor } from '@weft/core';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

describe('reshape on the tape', () => {
  it("shares the input's buffer under the new shape, in the same row-major order", () => {
    const a = tensor(
      [
        [1, 2, 3],
        [4, 5, 6],
      ],
      [2, 3],
      'f64',
    );
    const b = reshape(new Tape(), a, [3, 2]);
    expect(b.shape).toEqual([3, 2]);
    expect(b.data).toBe(a.data);
  });

  it('passes the gradient through element for element, as finite differences do', () => {
    const random = new Random('mulrow');
    const a = input(random, [3, 4], 'a');
    const row = input(random, [4], 'row');
    const w = input(random, [2, 6], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, reshape(tape, multiply(tape, a, row), [2, 6]), w), [a, row], checkOptions));
  });

  it('refuses a shape of another size, naming both sizes', () => {
    expect(() => reshape(new Tape(), tensor([1, 2, 3], [3], 'f64'), [2, 2])).toThrowError(
      'Shape mismatch at reshape.shape: expected a shape of 3 elements (from [3]), received [2, 2] of 4',
    );
  });
});
