import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, crossEntropyAtTargets, matmul, meanSquaredError, sigmoid, tanh, tensor, trainable } from '@weft/core';
import { checkOptions, expectPass, input } from './helpers.js';

describe('losses on the tape', () => {
  it('computes weighted softmax cross-entropy as −Σ w·log softmax(z)[t] / Σ w (definition, common practice)', () => {
    const logits = tensor(
      [
        [1, 2, 3],
        [0, 0, 0],
        [5, -5, 0],
      ],
      [3, 3],
      'f64',
    );
    const loss = crossEntropyAtTargets(new Tape(), logits, [2, 0, 1], { weights: [1, 0.5, 2] });
    const logSoftmax = (row: number[], j: number) => row[j] - Math.log(row.reduce((s, v) => s + Math.exp(v), 0));
    const expected = -(1 * logSoftmax([1, 2, 3], 2) + 0.5 * logSoftmax([0, 0, 0], 0) + 2 * logSoftmax([5, -5, 0], 1)) / 3.5;
    expect(Math.abs(loss.data[0] - expected)).toBeLessThan(1e-14);
  });

  it('keeps cross-entropy finite for logits of ±1000 (the log-sum-exp shift)', () => {
    const loss = crossEntropyAtTargets(new Tape(), tensor([[1000, -1000]], [1, 2], 'f64'), [1]);
    expect(loss.data[0]).toBe(2000);
  });

  it('gives masked softmax cross-entropy (weights 0 for padding rows) the gradients of finite differences', () => {
    const random = new Random('xent');
    const logits = input(random, [6, 5], 'logits', -3, 3);
    const targets = Int32Array.of(0, 4, 2, 2, 1, 3);
    const weights = Float64Array.of(1, 0, 1, 0.5, 1, 0);
    expectPass(checkGradients((tape) => crossEntropyAtTargets(tape, logits, targets, { weights }), [logits], checkOptions));
  });

  it('gives unmasked cross-entropy fed from a matmul the gradients of finite differences', () => {
    const random = new Random('xent2');
    const x = input(random, [4, 3], 'x');
    const w = input(random, [3, 5], 'w');
    expectPass(checkGradients((tape) => crossEntropyAtTargets(tape, matmul(tape, x, w), [1, 0, 4, 4]), [x, w], checkOptions));
  });

  it('computes the mean squared error, weighted per row, as Σ w (p − y)² / (width · Σ w)', () => {
    const p = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    const y = tensor(
      [
        [0, 2],
        [5, 4],
      ],
      [2, 2],
      'f64',
    );
    expect(meanSquaredError(new Tape(), p, y).data[0]).toBe((1 + 0 + 4 + 0) / 4);
    expect(meanSquaredError(new Tape(), p, y, { weights: [3, 1] }).data[0]).toBe((3 * 1 + 1 * 4) / (2 * 4));
  });

  it('gives the mean squared error the gradients of finite differences for both arguments', () => {
    const random = new Random('mse');
    const p = input(random, [3, 4], 'prediction');
    const y = input(random, [3, 4], 'target');
    expectPass(checkGradients((tape) => meanSquaredError(tape, tanh(tape, p), y), [p, y], checkOptions));
  });

  it('gives a masked row of the mean squared error no gradient, and the others those of finite differences', () => {
    const random = new Random('mse-mask');
    const p = input(random, [4, 3], 'prediction');
    const y = input(random, [4, 3], 'target');
    expectPass(checkGradients((tape) => meanSquaredError(tape, sigmoid(tape, p), y, { weights: [1, 0, 2, 0.5] }), [p, y], checkOptions));
    trainable(p);
    const tape = new Tape();
    tape.reverseSweep(meanSquaredError(tape, sigmoid(tape, p), y, { weights: [1, 0, 2, 0.5] }));
    expect(Array.from(p.gradient!.subarray(3, 6))).toEqual([0, 0, 0]);
    expect(p.gradient![0]).not.toBe(0);
  });

  it('weighs the mean squared error per value when given one weight per value, as Σ w (p − y)² / Σ w', () => {
    const p = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    const y = tensor(
      [
        [0, 2],
        [5, 9],
      ],
      [2, 2],
      'f64',
    );
    // The last value weighs 0 (never observed): its error of 5 counts nowhere.
    expect(meanSquaredError(new Tape(), p, y, { weights: [1, 1, 2, 0] }).data[0]).toBe((1 + 0 + 2 * 4) / 4);
    expect(() => meanSquaredError(new Tape(), p, y, { weights: [1, 1, 1] })).toThrowError(
      'meanSquaredError.weights: expected 2 weights (one per row) or 4 (one per value), received 3',
    );
  });

  it('gives a value weighted 0 no gradient, and the others those of finite differences', () => {
    const random = new Random('mse-values');
    const p = input(random, [3, 2], 'prediction');
    const y = input(random, [3, 2], 'target');
    const weights = [1, 0, 2, 0.5, 0, 1];
    expectPass(checkGradients((tape) => meanSquaredError(tape, sigmoid(tape, p), y, { weights }), [p, y], checkOptions));
    trainable(p);
    const tape = new Tape();
    tape.reverseSweep(meanSquaredError(tape, sigmoid(tape, p), y, { weights }));
    expect([p.gradient![1], p.gradient![4]]).toEqual([0, 0]);
    expect(p.gradient![0]).not.toBe(0);
  });

  it('refuses a target outside the classes and a negative weight, by position', () => {
    const logits = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    expect(() => crossEntropyAtTargets(new Tape(), logits, [0, 2])).toThrowError(
      'Invalid argument at crossEntropyAtTargets.targets[1]: expected a class index in [0, 2), received 2',
    );
    expect(() => meanSquaredError(new Tape(), logits, logits, { weights: [1, -1] })).toThrowError(
      'Invalid argument at meanSquaredError.weights[1]: expected a finite number ≥ 0, received -1',
    );
  });
});
