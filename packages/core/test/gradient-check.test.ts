import { describe, expect, it } from 'vitest';
import { Random, type Tape, add, checkGradients, exp, multiply, noTensor, randomUniform, sum, tanh, tensor } from '@weft/core';
import type { OperationKind, Tensor } from '@weft/core';

/** A mutant operation: y = x², whose backward deliberately adds 2x + 0.01 instead of 2x. */
const wrongSquareKind: OperationKind<{ x: Tensor }> = {
  name: 'wrongSquare',
  saves: () => ({ x: noTensor }),
  backward(node, tape) {
    const x = node.saved.x;
    const g = node.output.gradient!;
    const gx = tape.gradientOf(x);
    for (let i = 0; i < x.size; i++) gx[i] += g[i] * (2 * x.data[i] + (i === 4 ? 0.01 : 0));
  },
};

function wrongSquare(tape: Tape, x: Tensor): Tensor {
  const out = tape.output(x.shape, x.dtype, x.tracked);
  for (let i = 0; i < x.size; i++) out.data[i] = x.data[i] * x.data[i];
  const saved = tape.record(wrongSquareKind, out);
  if (saved !== null) saved.x = x;
  return out;
}

describe('checkGradients', () => {
  it('catches a deliberately wrong backward and names the tensor and index', () => {
    const random = new Random('mutant');
    const good = randomUniform([2, 3], random, -1, 1, 'f64');
    good.name = 'good';
    const bad = randomUniform([2, 3], random, -1, 1, 'f64');
    bad.name = 'bad';
    const report = checkGradients((tape) => sum(tape, multiply(tape, tanh(tape, good), wrongSquare(tape, bad))), [good, bad]);
    expect(report.passed).toBe(false);
    const [goodCheck, badCheck] = report.tensors;
    expect(goodCheck.passed).toBe(true);
    expect(badCheck.passed).toBe(false);
    expect(badCheck.name).toBe('bad');
    expect(badCheck.worstIndex).toEqual([1, 1]);
    expect(badCheck.worstOffset).toBe(4);
    expect(badCheck.failures).toEqual([4]);
    expect(report.text()).toContain('FAIL bad [2, 3]: 6 entries, worst relative error');
    expect(report.text()).toContain('at [1, 1]');
    expect(report.directions.some((d) => !d.passed)).toBe(true);
  });

  it('passes a correct computation and leaves values and gradients as they were', () => {
    const x = tensor([0.1, -0.4, 0.9], [3], 'f64');
    x.name = 'x';
    const before = Array.from(x.data);
    const report = checkGradients((tape) => sum(tape, tanh(tape, multiply(tape, x, x))), [x]);
    expect(report.passed).toBe(true);
    expect(Array.from(x.data)).toEqual(before);
    expect(x.trainable).toBe(false);
    expect(x.gradient).toBe(null);
    expect(report.text().split('\n')[0]).toMatch(/^gradient check PASSED: h = 0.00001/);
  });

  it('samples a seeded subset of entries of a large tensor', () => {
    const x = randomUniform([40, 50], new Random(2), -1, 1, 'f64');
    const run = () => checkGradients((tape) => sum(tape, tanh(tape, x)), [x], { entriesPerTensor: 25, seed: 9 });
    const first = run();
    expect(first.tensors[0].checked).toBe(25);
    expect(first.passed).toBe(true);
    expect(run().tensors[0].worstOffset).toBe(first.tensors[0].worstOffset);
  });

  it('refuses f32 tensors with a message saying why', () => {
    const x = tensor([1, 2], [2], 'f32');
    x.name = 'weights';
    expect(() => checkGradients((tape) => sum(tape, x), [x])).toThrowError(
      'Dtype mismatch at checkGradients.weights: expected f64, received f32 (finite differences need f64; build the computation in f64 to check it)',
    );
  });

  it("passes an entry within the difference's rounding noise, and says so", () => {
    // f(x) = x0² + 1e-12·x1²: ∂f/∂x1 = 2e-12·x1 is far under the finite-difference noise (≈ ε·|f|/h), so its
    // relative error is large while its absolute error is within NOISE_GROWTH·ε·(|f(x+h)| + |f(x−h)|)/2h.
    const x = tensor([0.3, 0.7], [2], 'f64');
    x.name = 'x';
    const weights = tensor([1, 1e-12], [2], 'f64');
    const report = checkGradients((tape) => sum(tape, multiply(tape, multiply(tape, x, x), weights)), [x], { directions: 0, absoluteFloor: 0 });
    const check = report.tensors[0];
    expect(check.worstOffset).toBe(1);
    expect(check.worstRelativeError).toBeGreaterThan(1e-6);
    expect(check.passedByNoise).toEqual([1]);
    expect(check.passed).toBe(true);
    expect(report.text()).toContain("1 passed within the difference's rounding noise");
  });

  it('scales the noise bound with the loss: a correct gradient of a loss near 1e6 passes, a wrong one still fails', () => {
    const x = tensor([0.3, -0.2, 0.5, 0.1, 0.7], [5], 'f64');
    x.name = 'x';
    const offset = tensor([1e6], [1], 'f64');
    const right = checkGradients((tape) => add(tape, sum(tape, multiply(tape, x, x)), sum(tape, offset)), [x], { directions: 0, absoluteFloor: 0 });
    expect(right.passed).toBe(true);
    // The mutant square's backward is off by 0.01 at entry 4: far above the noise (about 7e-4 here), it fails.
    const wrong = checkGradients((tape) => add(tape, sum(tape, wrongSquare(tape, x)), sum(tape, offset)), [x], { directions: 0 });
    expect(wrong.passed).toBe(false);
    expect(wrong.tensors[0].failures).toEqual([4]);
    expect(wrong.tensors[0].failed[0].index).toEqual([4]);
  });

  it('reports entries that pass only by the absolute floor given', () => {
    // A backward off by 3e-10 at entry 1: above the noise of a loss near 0.1 and not removed by extrapolation, under
    // the default floor of 1e-9; with no floor, it fails.
    const tiny: OperationKind<{ x: Tensor }> = {
      name: 'tinySlip',
      saves: () => ({ x: noTensor }),
      backward(node, tape) {
        const gx = tape.gradientOf(node.saved.x);
        for (let i = 0; i < node.saved.x.size; i++) gx[i] += node.output.gradient![i] * 2 * node.saved.x.data[i] + (i === 1 ? 3e-10 : 0);
      },
    };
    const slip = (tape: Tape, x: Tensor) => {
      const out = tape.output(x.shape, x.dtype, x.tracked);
      for (let i = 0; i < x.size; i++) out.data[i] = x.data[i] * x.data[i];
      const saved = tape.record(tiny, out);
      if (saved !== null) saved.x = x;
      return out;
    };
    const x = tensor([0.3, 0.7], [2], 'f64');
    x.name = 'x';
    // Entry 1 weighs 1e-6, so its gradient (1.4e-6) is small enough for the slip to be 2e-4 of it.
    const weights = tensor([1, 1e-6], [2], 'f64');
    const loss = (tape: Tape) => sum(tape, multiply(tape, slip(tape, x), weights));
    const report = checkGradients(loss, [x], { directions: 0 });
    expect(report.tensors[0].passedByFloor).toEqual([1]);
    expect(report.text()).toContain('1 passed only by the absolute floor');
    expect(checkGradients(loss, [x], { directions: 0, absoluteFloor: 0 }).passed).toBe(false);
  });

  it('its central differences have O(h²) error on a function with a known derivative (common practice)', () => {
    // f(x) = e^x, f′(x) = e^x; the central difference errs by h²·f‴(x)/6 + O(h⁴) = h²·e^x/6 (Taylor's theorem).
    const x = tensor([0.4], [1], 'f64');
    const errors = [1e-1, 1e-2, 1e-3].map((step) => {
      const report = checkGradients((tape) => sum(tape, exp(tape, x)), [x], { step, directions: 0, tolerance: 1 });
      return report.tensors[0].numeric - Math.exp(0.4);
    });
    // Each tenfold smaller step cuts the error a hundredfold …
    expect(errors[0] / errors[1]).toBeCloseTo(100, 0);
    expect(errors[1] / errors[2]).toBeCloseTo(100, 0);
    // … and the error is h²·e^x/6 to within 1%.
    errors.forEach((error, i) => {
      const h = [1e-1, 1e-2, 1e-3][i];
      expect(Math.abs(error / ((h * h * Math.exp(0.4)) / 6) - 1)).toBeLessThan(0.01);
    });
  });
});
