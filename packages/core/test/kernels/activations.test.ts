import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';

describe('activation kernels', () => {
  const random = new Random('activations');
  const x = Float64Array.from({ length: 200 }, () => random.between(-30, 30));

  // References: the JavaScript Math functions (ECMAScript Math.tanh, Math.exp, Math.log) and the logistic
  // function's definition 1/(1 + e^−x).
  it('tanh equals Math.tanh bit for bit', () => {
    const out = kernels.tanh(new Float64Array(200), x, 200);
    for (let i = 0; i < 200; i++) expect(out[i]).toBe(Math.tanh(x[i]));
  });

  it('exp and log equal Math.exp and Math.log bit for bit', () => {
    const e = kernels.exp(new Float64Array(200), x, 200);
    for (let i = 0; i < 200; i++) expect(e[i]).toBe(Math.exp(x[i]));
    const l = kernels.log(new Float64Array(200), e, 200);
    for (let i = 0; i < 200; i++) expect(l[i]).toBe(Math.log(e[i]));
  });

  it('sigmoid equals 1/(1+e^−x) within 1e-15 relative on moderate inputs', () => {
    const out = kernels.sigmoid(new Float64Array(200), x, 200);
    for (let i = 0; i < 200; i++) {
      const definition = 1 / (1 + Math.exp(-x[i]));
      expect(Math.abs(out[i] - definition)).toBeLessThanOrEqual(1e-15 * Math.max(1e-300, definition) + 1e-300);
    }
  });

  it('sigmoid stays finite and saturates at ±1000 and ±Infinity where the naive form gives NaN or 0/0', () => {
    const extremes = Float64Array.of(-1000, 1000, -Infinity, Infinity, -745, 745);
    const out = kernels.sigmoid(new Float64Array(6), extremes, 6);
    expect(Array.from(out)).toEqual([0, 1, 0, 1, Math.exp(-745) / (1 + Math.exp(-745)), 1]);
    // The naive form e^x/(1+e^x) at x = 1000 is Infinity/Infinity = NaN (IEEE 754 arithmetic).
    expect(Math.exp(1000) / (1 + Math.exp(1000))).toBeNaN();
  });

  it('relu keeps positives and zeroes the rest', () => {
    const out = kernels.relu(new Float64Array(4), Float64Array.of(-1, 0, 2, -0.5), 4);
    expect(Array.from(out)).toEqual([0, 0, 2, 0]);
  });

  it('derivative kernels use the output forms σ′ = y(1−y), tanh′ = 1−y²', () => {
    const y = Float64Array.of(0.25, 0.5);
    const g = Float64Array.of(2, 4);
    expect(Array.from(kernels.sigmoidGradientInto(new Float64Array(2), g, y, 2))).toEqual([2 * 0.25 * 0.75, 4 * 0.25]);
    expect(Array.from(kernels.tanhGradientInto(new Float64Array(2), g, y, 2))).toEqual([2 * (1 - 0.0625), 4 * 0.75]);
    expect(Array.from(kernels.reluGradientInto(Float64Array.of(1, 1), g, Float64Array.of(0, 3), 2))).toEqual([1, 5]);
  });

  it('forward kernels give the same result when out aliases the input', () => {
    for (const name of ['sigmoid', 'tanh', 'relu', 'exp'] as const) {
      const separate = kernels[name](new Float64Array(200), x, 200);
      const aliased = Float64Array.from(x);
      kernels[name](aliased, aliased, 200);
      expect(Array.from(aliased)).toEqual(Array.from(separate));
    }
  });
});
