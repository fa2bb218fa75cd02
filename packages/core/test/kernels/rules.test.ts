import { describe, expect, it } from 'vitest';
import { kernels } from '@weft/core';

describe('the update-rule loops', () => {
  it('take one Adam step as Kingma & Ba 2015, Algorithm 1, with L2 penalty κ and decoupled decay λ', () => {
    const values = Float64Array.of(0.5, -1);
    const gradient = Float64Array.of(0.2, 0.1);
    const m = Float64Array.of(0.01, 0);
    const v = Float64Array.of(0.001, 0);
    const [b1, b2, rate, decay, kappa, eps] = [0.9, 0.999, 0.01, 0.001, 0.1, 1e-8];
    const [c1, c2] = [1 - b1 ** 2, 1 - b2 ** 2];
    // The algorithm written out for entry 0: g = ∇ + κθ; m, v updated; θ − (α·m̂/(√v̂ + ε) + λθ).
    const g0 = 0.2 + kappa * 0.5;
    const m0 = b1 * 0.01 + (1 - b1) * g0;
    const v0 = b2 * 0.001 + (1 - b2) * g0 * g0;
    const theta0 = 0.5 - (rate * (m0 / c1 / (Math.sqrt(v0 / c2) + eps)) + decay * 0.5);
    kernels.adamUpdate({ values, gradient, firstMoment: m, secondMoment: v }, 2, {
      beta1: b1,
      beta2: b2,
      correction1: c1,
      correction2: c2,
      rate,
      decay,
      kappa,
      epsilon: eps,
    });
    expect([m[0], v[0], values[0]]).toEqual([m0, v0, theta0]);
  });

  it("take one SGD step with momentum μ as v ← μv + g, θ ← θ − ηv, and Nesterov's in its common reformulation θ ← θ − η(g + μv) (common practice)", () => {
    for (const nesterov of [false, true]) {
      const values = Float64Array.of(1);
      const velocity = Float64Array.of(0.5);
      const update = nesterov ? kernels.nesterovUpdate : kernels.sgdUpdate;
      update({ values, gradient: Float64Array.of(0.2), velocity }, 1, { rate: 0.1, decay: 0, mu: 0.9, kappa: 0 });
      const v = 0.9 * 0.5 + 0.2;
      expect(velocity[0]).toBe(v);
      expect(values[0]).toBe(1 - 0.1 * (nesterov ? 0.2 + 0.9 * v : v));
    }
  });
});
