import { describe, expect, it } from 'vitest';
import { Random, Tape, add, checkGradients, multiply, scale, subtract, tensor } from '@weft/core';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

describe('elementwise arithmetic on the tape', () => {
  it('adds, subtracts, multiplies and scales element by element, a bias row broadcast over every row', () => {
    // Worked by hand (definition of the operations, common practice).
    const tape = new Tape();
    const a = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    const b = tensor(
      [
        [0.5, -1],
        [2, 0.25],
      ],
      [2, 2],
      'f64',
    );
    const row = tensor([10, 20], [2], 'f64');
    expect(Array.from(add(tape, a, b).data)).toEqual([1.5, 1, 5, 4.25]);
    expect(Array.from(add(tape, a, row).data)).toEqual([11, 22, 13, 24]);
    expect(Array.from(subtract(tape, a, b).data)).toEqual([0.5, 3, 1, 3.75]);
    expect(Array.from(multiply(tape, a, b).data)).toEqual([0.5, -2, 6, 1]);
    expect(Array.from(multiply(tape, a, row).data)).toEqual([10, 40, 30, 80]);
    expect(Array.from(scale(tape, a, -0.5).data)).toEqual([-0.5, -1, -1.5, -2]);
  });

  it('gives add the gradients of finite differences, with the same shapes and with a broadcast bias row', () => {
    const random = new Random('add');
    const a = input(random, [3, 4], 'a');
    const b = input(random, [3, 4], 'b');
    const bias = input(random, [4], 'bias');
    const w = input(random, [3, 4], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, add(tape, add(tape, a, b), bias), w), [a, b, bias], checkOptions));
  });

  it('gives subtract, multiply and scale the gradients of finite differences', () => {
    const random = new Random('arith');
    const a = input(random, [2, 5], 'a');
    const b = input(random, [2, 5], 'b');
    const w = input(random, [2, 5], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, scale(tape, multiply(tape, subtract(tape, a, b), a), -0.75), w), [a, b], checkOptions));
  });

  it('gives multiply by a broadcast row the gradients of finite differences', () => {
    const random = new Random('mulrow');
    const a = input(random, [3, 4], 'a');
    const row = input(random, [4], 'row');
    const w = input(random, [3, 4], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, multiply(tape, a, row), w), [a, row], checkOptions));
  });

  it('refuses shapes that neither match nor broadcast as a row, and a scale that is not a number', () => {
    const tape = new Tape();
    const a = tensor([[1, 2, 3]], [1, 3], 'f64');
    expect(() => add(tape, a, tensor([1, 2], [2], 'f64'))).toThrowError('Shape mismatch at add.b: expected [1, 3] or a row [3], received [2]');
    expect(() => scale(tape, a, Number.NaN)).toThrowError('Invalid argument at scale.s: expected a number, received NaN');
  });
});
