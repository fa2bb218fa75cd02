/**
 * What the per-operation tests share: seeded f64 inputs, a weighted sum that makes every gradient entry matter, and
 * the gradient check's pass rule. The external check is the definition of the derivative: central finite
 * differences through checkGradients, worst relative error < 1e-7.
 */
import { expect } from 'vitest';
import type { GradientReport } from '@weft/core';

export const TOLERANCE = 1e-7;

/** Options for checkGradients: the tolerance above and two random directions besides every entry. */
export const checkOptions = { tolerance: TOLERANCE, directions: 2 };

export { f64Input as input, weightedSum } from '../../../../tests/helpers/tensors.js';

/** Passes when every checked tensor's worst relative error is under the tolerance; the report is the message. */
export function expectPass(report: GradientReport): void {
  if (!report.passed) throw new Error(report.text());
  for (const r of report.tensors) expect(r.worstRelativeError).toBeLessThan(TOLERANCE);
  expect(report.passed).toBe(true);
}
