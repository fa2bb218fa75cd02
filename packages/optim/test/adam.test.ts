import { describe, expect, it } from 'vitest';
import { AdamRule } from '@weft/optim';
import { parameter, setGradient } from './parameters.js';

describe('Adam', () => {
  it('moves every parameter by about the learning rate on its first step: lr·g/(|g|+ε) (Kingma & Ba 2015, §2.1)', () => {
    const p = parameter([0, 1, -2, 3, 0.5]);
    const g = [1e-3, -2, 50, -0.25, 1e-6];
    setGradient(p, g);
    const before = Array.from(p.data);
    new AdamRule({ rate: 0.01 }).update([p]);
    g.forEach((gi, i) => {
      // After bias correction m̂ = g and v̂ = g², so the step is α·g/(|g| + ε).
      const expected = (0.01 * gi) / (Math.abs(gi) + 1e-8);
      expect(Math.abs(before[i] - p.data[i] - expected)).toBeLessThanOrEqual(1e-15);
      expect(Math.abs(before[i] - p.data[i])).toBeLessThanOrEqual(0.01);
      expect(Math.abs(before[i] - p.data[i])).toBeGreaterThan(0.0099);
    });
  });

  it('matches a two-step example worked by hand to 1e-12 (Kingma & Ba 2015, Algorithm 1)', () => {
    // α = 0.1, β₁ = 0.9, β₂ = 0.999, ε = 1e-8, θ₀ = 1, g₁ = 0.5, g₂ = −0.25 (worked in 40-digit decimals):
    // step 1: m = 0.05, v = 0.00025, m̂ = 0.5, v̂ = 0.25, step = 0.1·0.5/(0.5 + 1e-8) = 0.099999998000000040,
    //         θ₁ = 0.900000001999999960
    // step 2: m = 0.9·0.05 + 0.1·(−0.25) = 0.02, v = 0.999·0.00025 + 0.001·0.0625 = 0.00031225,
    //         m̂ = 0.02/0.19 = 0.105263157894736842, v̂ = 0.00031225/0.001999 = 0.156203101550775388,
    //         √v̂ = 0.395225380701664184, step = 0.1·m̂/(√v̂ + ε) = 0.026633703292153797,
    //         θ₂ = 0.873366298707846163
    const p = parameter([1]);
    const adam = new AdamRule({ rate: 0.1 });
    setGradient(p, [0.5]);
    adam.update([p]);
    // biome-ignore lint/correctness/noPrecisionLoss: the value worked out above, written with all its digits.
    expect(Math.abs(p.data[0] - 0.90000000199999996)).toBeLessThanOrEqual(1e-12);
    setGradient(p, [-0.25]);
    adam.update([p]);
    // biome-ignore lint/correctness/noPrecisionLoss: the value worked out above, written with all its digits.
    expect(Math.abs(p.data[0] - 0.873366298707846163)).toBeLessThanOrEqual(1e-12);
  });

  it('applies decoupled decay as θ ← θ − η(α·m̂/(√v̂+ε) + λθ), apart from the gradient (Loshchilov & Hutter 2019, Algorithm 2)', () => {
    // With g = 0 the Adam term is 0 (m = v = 0), so only the decay acts: θ₁ = θ₀ − η·λ·θ₀.
    const p = parameter([2, -4]);
    setGradient(p, [0, 0]);
    new AdamRule({ rate: 0.1, decoupledDecay: 0.01 }).update([p], 0.5);
    expect(Array.from(p.data)).toEqual([2 - 0.5 * 0.01 * 2, -4 - 0.5 * 0.01 * -4]);
    // The L2 penalty instead enters the moments: with g = 0, g' = κθ and the first step is α·sign(θ)·|κθ|/(|κθ|+ε).
    const q = parameter([2, -4]);
    setGradient(q, [0, 0]);
    new AdamRule({ rate: 0.1, l2Penalty: 0.01 }).update([q]);
    expect(Math.abs(q.data[0] - (2 - (0.1 * 0.02) / (0.02 + 1e-8)))).toBeLessThan(1e-15);
    expect(Math.abs(q.data[1] - (-4 + (0.1 * 0.04) / (0.04 + 1e-8)))).toBeLessThan(1e-15);
  });
});
