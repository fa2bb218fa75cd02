import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';

describe('the logistic function', () => {
  it('equals its definition 1/(1 + e^−x) within 2 ulp-sized steps (4.5e-16 relative) on [−30, 30]', () => {
    const random = new Random('logistic');
    for (let n = 0; n < 1000; n++) {
      const x = random.between(-30, 30);
      const definition = 1 / (1 + Math.exp(-x));
      expect(Math.abs(kernels.logistic(x) - definition)).toBeLessThanOrEqual(4.5e-16 * definition);
    }
  });

  it('never overflows: finite at ±1000 and exact at 0 (IEEE 754: e^1000 is Infinity)', () => {
    expect([kernels.logistic(-1000), kernels.logistic(0), kernels.logistic(1000)]).toEqual([0, 0.5, 1]);
    expect(kernels.logistic(-745)).toBeGreaterThan(0);
  });
});
