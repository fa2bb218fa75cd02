import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, concat, slice, tensor } from '@weft/core';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

describe('concat and slice on the tape', () => {
  it('join along the last axis and cut a column range back out, row by row', () => {
    // Worked by hand (definition, common practice).
    const tape = new Tape();
    const a = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    const b = tensor([[5], [6]], [2, 1], 'f64');
    const joined = concat(tape, [a, b]);
    expect(joined.shape).toEqual([2, 3]);
    expect(Array.from(joined.data)).toEqual([1, 2, 5, 3, 4, 6]);
    expect(Array.from(slice(tape, joined, 1, 3).data)).toEqual([2, 5, 4, 6]);
  });

  it('give each part its own column range of the gradient, as finite differences do', () => {
    const random = new Random('concat');
    const a = input(random, [3, 2], 'a');
    const b = input(random, [3, 4], 'b');
    const c = input(random, [3, 1], 'c');
    const w = input(random, [3, 3], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, slice(tape, concat(tape, [a, b, c]), 1, 4), w), [a, b, c], checkOptions));
  });

  it('refuse parts whose leading axes differ, and a range outside the last axis', () => {
    const tape = new Tape();
    expect(() => concat(tape, [tensor([[1, 2]], [1, 2], 'f64'), tensor([[1], [2]], [2, 1], 'f64')])).toThrowError(
      'Shape mismatch at concat.parts[1]: expected [1, any], received [2, 1]',
    );
    expect(() => slice(tape, tensor([1, 2, 3], [3], 'f64'), 2, 4)).toThrowError(
      'Invalid argument at slice.range: expected 0 ≤ start ≤ end ≤ 3, received start 2, end 4',
    );
  });
});
