import { describe, expect, it } from 'vitest';
import { Random, randomUniform, tensor, trainable } from '@weft/core';
import type { Tensor } from '@weft/core';
import { AdagradRule, AdamRule, RmsPropRule, SgdRule, limitGradientNorm, limitGradientValues, gradientNorm } from '@weft/optim';

function parameter(values: number[]): Tensor {
  return trainable(tensor(values, [values.length], 'f64'));
}

function setGradient(p: Tensor, values: number[]): void {
  p.gradient!.set(values);
}

describe('Adam', () => {
  it("moves every parameter by about the learning rate on its first step: lr·g/(|g|+ε) (Kingma & Ba 2015, §2.1)", () => {
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
    expect(Math.abs(p.data[0] - 0.900000001999999960)).toBeLessThanOrEqual(1e-12);
    setGradient(p, [-0.25]);
    adam.update([p]);
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

  it('round-trips its state as plain data and continues identically', () => {
    const random = new Random(4);
    const a = trainable(randomUniform([6], random, -1, 1, 'f32'));
    const b = trainable(tensor(Array.from(a.data), [6], 'f32'));
    const first = new AdamRule({ rate: 0.05 });
    const grads = Array.from({ length: 5 }, () => Array.from({ length: 6 }, () => random.between(-1, 1)));
    for (let s = 0; s < 2; s++) {
      a.gradient!.set(grads[s]);
      first.update([a]);
      b.gradient!.set(grads[s]);
    }
    const second = new AdamRule({ rate: 0.05 });
    const warm = new AdamRule({ rate: 0.05 });
    warm.update([b]);
    b.data.set(a.data);
    second.restore(JSON.parse(JSON.stringify(first.state())), [b]);
    for (let s = 2; s < 5; s++) {
      a.gradient!.set(grads[s]);
      first.update([a]);
      b.gradient!.set(grads[s]);
      second.update([b]);
    }
    expect(Array.from(b.data)).toEqual(Array.from(a.data));
    expect(() => new SgdRule({ rate: 0.1 }).restore(first.state(), [b])).toThrowError('Invalid argument at optimizer state.kind: expected sgd, received adam');
  });
});

describe('the other optimisers', () => {
  it('SGD with momentum and with Nesterov momentum follow their update rules', () => {
    const p = parameter([1]);
    const sgd = new SgdRule({ rate: 0.1, momentum: 0.9 });
    setGradient(p, [2]);
    sgd.update([p]); // v = 2, θ = 1 − 0.2
    setGradient(p, [1]);
    sgd.update([p]); // v = 1.8 + 1 = 2.8, θ = 0.8 − 0.28
    expect(p.data[0]).toBeCloseTo(0.52, 15);
    const q = parameter([1]);
    const nesterov = new SgdRule({ rate: 0.1, momentum: 0.9, nesterov: true });
    setGradient(q, [2]);
    nesterov.update([q]); // v = 2, step = 0.1·(2 + 0.9·2) = 0.38
    expect(q.data[0]).toBeCloseTo(0.62, 15);
  });

  it('RMSProp and Adagrad scale by the root of their accumulated squares', () => {
    const p = parameter([1]);
    setGradient(p, [2]);
    new RmsPropRule({ rate: 0.01, decay: 0.9, epsilon: 1e-300 }).update([p]); // s = 0.4, step = 0.01·2/√0.4
    expect(p.data[0]).toBeCloseTo(1 - 0.02 / Math.sqrt(0.4), 15);
    const q = parameter([1]);
    const adagrad = new AdagradRule({ rate: 0.5, epsilon: 1e-300 });
    setGradient(q, [3]);
    adagrad.update([q]); // s = 9, step = 0.5
    setGradient(q, [4]);
    adagrad.update([q]); // s = 25, step = 0.5·4/5 = 0.4
    expect(q.data[0]).toBeCloseTo(1 - 0.5 - 0.4, 15);
  });

  it('refuse bad options by name', () => {
    expect(() => new AdamRule({ rate: 0 })).toThrowError('Invalid option at adam.rate: expected a finite number > 0, received 0');
    expect(() => new AdamRule({ rate: 0.1, beta1: 1 })).toThrowError('Invalid option at adam.beta1: expected a number in [0, 1), received 1');
    expect(() => new SgdRule({ rate: Number.NaN })).toThrowError('Invalid option at sgd.rate: expected a finite number > 0, received NaN');
  });
});

describe('gradient clipping', () => {
  it('by global norm matches Pascanu, Mikolov & Bengio 2013, Algorithm 1, on a hand example', () => {
    // ĝ = (3, 4 | 12): ‖ĝ‖ = 13 ≥ threshold 6.5, so ĝ ← (6.5/13)·ĝ = (1.5, 2 | 6).
    const a = parameter([0, 0]);
    const b = parameter([0]);
    setGradient(a, [3, 4]);
    setGradient(b, [12]);
    expect(limitGradientNorm([a, b], 6.5)).toBe(13);
    expect(Array.from(a.gradient!)).toEqual([1.5, 2]);
    expect(Array.from(b.gradient!)).toEqual([6]);
    expect(gradientNorm([a, b])).toBe(6.5);
    // Below the threshold nothing changes.
    expect(limitGradientNorm([a, b], 100)).toBe(6.5);
    expect(Array.from(a.gradient!)).toEqual([1.5, 2]);
  });

  it('by value limits each entry', () => {
    const a = parameter([0, 0, 0]);
    setGradient(a, [-5, 0.5, 7]);
    expect(limitGradientValues([a], 1)).toBe(2);
    expect(Array.from(a.gradient!)).toEqual([-1, 0.5, 1]);
  });
});
