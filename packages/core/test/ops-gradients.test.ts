/**
 * Every operation's backward against central finite differences in f64 (the external check here is the
 * definition of the derivative, through checkGradients), on seeded random inputs, worst relative error < 1e-7.
 */
import { describe, expect, it } from 'vitest';
import {
  Random, Tape, add, checkGradients, concat, exp, gatherRows, log, matmul, mean, meanSquaredError, multiply,
  randomUniform, relu, trainable, reshape, dropout, scale, sigmoid, slice, crossEntropyAtTargets, subtract, sum, tanh,
} from '@weft/core';
import type { GradientReport, Tensor } from '@weft/core';

const TOLERANCE = 1e-7;

function input(random: Random, shape: number[], name: string, low = -1, high = 1): Tensor {
  const t = randomUniform(shape, random, low, high, 'f64');
  t.name = name;
  return t;
}

/** A scalar that depends on every entry of `t` with distinct weights, so no gradient entry is trivially zero. */
function weightedSum(tape: Tape, t: Tensor, weights: Tensor): Tensor {
  return sum(tape, multiply(tape, t, weights));
}

function expectPass(report: GradientReport): void {
  if (!report.passed) throw new Error(report.text());
  for (const r of report.tensors) expect(r.worstRelativeError).toBeLessThan(TOLERANCE);
  expect(report.passed).toBe(true);
}

const options = { tolerance: TOLERANCE, directions: 2 };

describe('operation gradients (f64 finite differences)', () => {
  for (const transposeA of [false, true]) {
    for (const transposeB of [false, true]) {
      it(`matmul with transposeA=${transposeA}, transposeB=${transposeB}`, () => {
        const random = new Random(`mm${transposeA}${transposeB}`);
        const a = input(random, transposeA ? [4, 5] : [5, 4], 'a');
        const b = input(random, transposeB ? [6, 4] : [4, 6], 'b');
        const w = input(random, [5, 6], 'w');
        expectPass(checkGradients((tape) => weightedSum(tape, matmul(tape, a, b, { transposeA, transposeB }), w), [a, b], options));
      });
    }
  }

  it('add with the same shapes and with a broadcast bias row', () => {
    const random = new Random('add');
    const a = input(random, [3, 4], 'a');
    const b = input(random, [3, 4], 'b');
    const bias = input(random, [4], 'bias');
    const w = input(random, [3, 4], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, add(tape, add(tape, a, b), bias), w), [a, b, bias], options));
  });

  it('subtract, multiply and scale', () => {
    const random = new Random('arith');
    const a = input(random, [2, 5], 'a');
    const b = input(random, [2, 5], 'b');
    const w = input(random, [2, 5], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, scale(tape, multiply(tape, subtract(tape, a, b), a), -0.75), w), [a, b], options));
  });

  for (const [name, op, low, high] of [
    ['sigmoid', sigmoid, -4, 4], ['tanh', tanh, -3, 3], ['exp', exp, -2, 2], ['log', log, 0.2, 3],
  ] as const) {
    it(`${name}`, () => {
      const random = new Random(name);
      const a = input(random, [3, 7], 'a', low, high);
      const w = input(random, [3, 7], 'w');
      expectPass(checkGradients((tape) => weightedSum(tape, op(tape, a), w), [a], options));
    });
  }

  it('relu away from its kink', () => {
    const random = new Random('relu');
    const a = input(random, [4, 6], 'a');
    // Keep every entry at least 0.1 from 0, where the derivative is not defined.
    for (let i = 0; i < a.size; i++) a.data[i] = a.data[i] < 0 ? a.data[i] - 0.1 : a.data[i] + 0.1;
    const w = input(random, [4, 6], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, relu(tape, a), w), [a], options));
  });

  it('concat and slice along the last axis', () => {
    const random = new Random('concat');
    const a = input(random, [3, 2], 'a');
    const b = input(random, [3, 4], 'b');
    const c = input(random, [3, 1], 'c');
    const w = input(random, [3, 3], 'w');
    expectPass(checkGradients((tape) => {
      const joined = concat(tape, [a, b, c]);
      return weightedSum(tape, slice(tape, joined, 1, 4), w);
    }, [a, b, c], options));
  });

  it('multiply by a broadcast row, and reshape', () => {
    const random = new Random('mulrow');
    const a = input(random, [3, 4], 'a');
    const row = input(random, [4], 'row');
    const w = input(random, [2, 6], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, reshape(tape, multiply(tape, a, row), [2, 6]), w), [a, row], options));
  });

  it('dropout, with its seeded mask held fixed across evaluations', () => {
    const a = input(new Random('drop'), [5, 6], 'a');
    const w = input(new Random('dropw'), [5, 6], 'w');
    // A fresh generator with the same seed per evaluation: every evaluation draws the same mask.
    expectPass(checkGradients((tape) => weightedSum(tape, tanh(tape, dropout(tape, a, 0.4, new Random('mask'))), w), [a], options));
  });

  it('sum and mean', () => {
    const random = new Random('reduce');
    const a = input(random, [4, 3], 'a');
    expectPass(checkGradients((tape) => add(tape, scale(tape, sum(tape, tanh(tape, a)), 0.3), mean(tape, exp(tape, a))), [a], options));
  });

  it('row gather with repeated indices scatter-adds every share', () => {
    const random = new Random('gather');
    const table = input(random, [5, 3], 'table');
    const indices = Int32Array.of(2, 0, 2, 4, 2, 0);
    const w = input(random, [6, 3], 'w');
    const report = checkGradients((tape) => weightedSum(tape, gatherRows(tape, table, indices), w), [table], options);
    expectPass(report);
    // Row 2 is picked three times: its gradient is the sum of w's rows 0, 2 and 4 (definition of the sum).
    const tape = new Tape();
    trainable(table);
    tape.reverseSweep(weightedSum(tape, gatherRows(tape, table, indices), w));
    for (let c = 0; c < 3; c++) expect(table.gradient![2 * 3 + c]).toBeCloseTo(w.data[c] + w.data[6 + c] + w.data[12 + c], 14);
    expect(table.gradient![3 * 3]).toBe(0);
  });

  it('masked softmax cross-entropy (weights 0 for padding rows)', () => {
    const random = new Random('xent');
    const logits = input(random, [6, 5], 'logits', -3, 3);
    const targets = Int32Array.of(0, 4, 2, 2, 1, 3);
    const weights = Float64Array.of(1, 0, 1, 0.5, 1, 0);
    const report = checkGradients((tape) => crossEntropyAtTargets(tape, logits, targets, { weights }), [logits], options);
    expectPass(report);
  });

  it('unmasked softmax cross-entropy feeding from a matmul', () => {
    const random = new Random('xent2');
    const x = input(random, [4, 3], 'x');
    const w = input(random, [3, 5], 'w');
    expectPass(checkGradients((tape) => crossEntropyAtTargets(tape, matmul(tape, x, w), [1, 0, 4, 4]), [x, w], options));
  });

  it('mean squared error with respect to both arguments', () => {
    const random = new Random('mse');
    const p = input(random, [3, 4], 'prediction');
    const y = input(random, [3, 4], 'target');
    expectPass(checkGradients((tape) => meanSquaredError(tape, tanh(tape, p), y), [p, y], options));
  });

  it('mean squared error with per-row weights (a mask)', () => {
    const random = new Random('mse-mask');
    const p = input(random, [4, 3], 'prediction');
    const y = input(random, [4, 3], 'target');
    const report = checkGradients((tape) => meanSquaredError(tape, sigmoid(tape, p), y, { weights: [1, 0, 2, 0.5] }), [p, y], options);
    expectPass(report);
    // A masked row (weight 0) gets no gradient at all.
    trainable(p);
    const tape = new Tape();
    tape.reverseSweep(meanSquaredError(tape, sigmoid(tape, p), y, { weights: [1, 0, 2, 0.5] }));
    expect(Array.from(p.gradient!.subarray(3, 6))).toEqual([0, 0, 0]);
    expect(p.gradient![0]).not.toBe(0);
  });

  it('a parameter used by 12 nodes (one per step of a small recurrence) accumulates every share', () => {
    const random = new Random('shared');
    const recurrent = input(random, [3, 3], 'recurrent', -0.8, 0.8);
    const inputWeights = input(random, [2, 3], 'inputWeights');
    const bias = input(random, [3], 'bias');
    const xs = Array.from({ length: 12 }, (_, t) => input(random, [2, 2], `x${t}`));
    const report = checkGradients((tape) => {
      let h = input(new Random(0), [2, 3], 'h0');
      for (const x of xs) {
        h = tanh(tape, add(tape, add(tape, matmul(tape, x, inputWeights), matmul(tape, h, recurrent)), bias));
      }
      return sum(tape, multiply(tape, h, h));
    }, [recurrent, inputWeights, bias], options);
    expectPass(report);
    // The recorded graph really has the recurrent matrix read by 12 matmul nodes.
    trainable(recurrent);
    const tape = new Tape();
    let h = input(new Random(0), [2, 3], 'h0');
    for (const x of xs) h = tanh(tape, add(tape, add(tape, matmul(tape, x, inputWeights), matmul(tape, h, recurrent)), bias));
    expect(tape.kinds().filter((k) => k === 'matmul').length).toBe(12);
  });
});
