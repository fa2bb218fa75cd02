import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, exp, log, relu, sigmoid, tanh, tensor } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

const references = {
  sigmoid: (x: number) => 1 / (1 + Math.exp(-x)),
  tanh: Math.tanh,
  exp: Math.exp,
  log: Math.log,
  relu: (x: number) => Math.max(0, x),
};

describe('activations on the tape', () => {
  for (const [name, op, low, high] of [
    ['sigmoid', sigmoid, -4, 4],
    ['tanh', tanh, -3, 3],
    ['exp', exp, -2, 2],
    ['log', log, 0.2, 3],
  ] as const) {
    it(`computes ${name} as Math does and its gradient as finite differences do`, () => {
      const random = new Random(name);
      const a = input(random, [3, 7], 'a', low, high);
      // Reference: the formula through JavaScript's Math (IEEE 754 double arithmetic).
      expect(worstGap(op(new Tape(), a).data, Array.from(a.data, references[name]))).toBeLessThan(1e-15);
      const w = input(random, [3, 7], 'w');
      expectPass(checkGradients((tape) => weightedSum(tape, op(tape, a), w), [a], checkOptions));
    });
  }

  it('computes relu and, away from its kink, its gradient as finite differences do', () => {
    const random = new Random('relu');
    const a = input(random, [4, 6], 'a');
    // Keep every entry at least 0.1 from 0, where the derivative is not defined.
    for (let i = 0; i < a.size; i++) a.data[i] = a.data[i] < 0 ? a.data[i] - 0.1 : a.data[i] + 0.1;
    expect(Array.from(relu(new Tape(), a).data)).toEqual(Array.from(a.data, references.relu));
    const w = input(random, [4, 6], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, relu(tape, a), w), [a], checkOptions));
  });

  it('keeps sigmoid finite at the ends of the f64 range, where e^745 overflows (IEEE 754)', () => {
    const y = sigmoid(new Tape(), tensor([-745, -40, 0, 40, 745], [5], 'f64'));
    expect(Array.from(y.data).every(Number.isFinite)).toBe(true);
    expect(y.data[0]).toBeGreaterThanOrEqual(0);
    expect(y.data[0]).toBeLessThan(1e-300);
    expect(worstGap([y.data[1]], [references.sigmoid(-40)])).toBeLessThan(1e-15);
    expect([y.data[2], y.data[3], y.data[4]]).toEqual([0.5, 1, 1]);
  });

  it("refuses a missing tensor by the activation's name", () => {
    expect(() => tanh(new Tape(), undefined as unknown as Parameters<typeof tanh>[1])).toThrowError(
      'Invalid argument at tanh.a: expected a tensor, received undefined',
    );
  });
});
