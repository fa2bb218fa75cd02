/**
 * What the per-operation tests share: seeded f64 inputs, a weighted sum that makes every gradient entry matter, and
 * the gradient check's pass rule. The external check is the definition of the derivative: central finite
 * differences through checkGradients, worst relative error < 1e-7.
 */
import { expect } from 'vitest';
import { Random, multiply, randomUniform, sum } from '@weft/core';
import type { GradientReport, Tape, Tensor } from '@weft/core';

export const TOLERANCE = 1e-7;

/** Options for checkGradients: the tolerance above and two random directions besides every entry. */
export const checkOptions = { tolerance: TOLERANCE, directions: 2 };

/** An f64 tensor of uniform values in [low, high), named for the report. */
export function input(random: Random, shape: number[], name: string, low = -1, high = 1): Tensor {
  const t = randomUniform(shape, random, low, high, 'f64');
  t.name = name;
  return t;
}

/** A scalar that depends on every entry of `t` with distinct weights, so no gradient entry is trivially zero. */
export function weightedSum(tape: Tape, t: Tensor, weights: Tensor): Tensor {
  return sum(tape, multiply(tape, t, weights));
}

/** Passes when every checked tensor's worst relative error is under the tolerance; the report is the message. */
export function expectPass(report: GradientReport): void {
  if (!report.passed) throw new Error(report.text());
  for (const r of report.tensors) expect(r.worstRelativeError).toBeLessThan(TOLERANCE);
  expect(report.passed).toBe(true);
}
