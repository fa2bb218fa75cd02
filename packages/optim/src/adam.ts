/**
 * Adam (Kingma & Ba 2015, "Adam: a method for stochastic optimization", Algorithm 1), with an optional L2
 * penalty (added to the gradient) and optional decoupled weight decay (Loshchilov & Hutter 2019, "Decoupled
 * weight decay regularization", Algorithm 2), kept distinct:
 *   g ← ∇ + κθ
 *   m ← β₁m + (1 − β₁)g,   v ← β₂v + (1 − β₂)g²
 *   m̂ = m / (1 − β₁ᵗ),     v̂ = v / (1 − β₂ᵗ)
 *   θ ← θ − η_t(α·m̂ / (√v̂ + ε) + λθ)
 */
import type { FloatArray, KernelTable } from '@weft/core';
import { UpdateRule, checkFactor, checkRate } from './update-rule.js';

/** Options of Adam. */
export interface AdamOptions {
  /** α, the base learning rate (> 0). */
  readonly rate: number;
  /** β₁, default 0.9. */
  readonly beta1?: number;
  /** β₂, default 0.999. */
  readonly beta2?: number;
  /** ε, default 1e-8. */
  readonly epsilon?: number;
  /** κ: L2 penalty added to the gradient. Default 0. */
  readonly l2Penalty?: number;
  /** λ: decoupled weight decay. Default 0. */
  readonly decoupledDecay?: number;
}

/** Adam (Kingma & Ba 2015), with an L2 penalty or decoupled weight decay (Loshchilov & Hutter 2019). */
export class AdamRule extends UpdateRule {
  /** Always `adam`. */
  readonly kind = 'adam';
  /** β₁, the decay of the first-moment estimate. */
  readonly beta1: number;
  /** β₂, the decay of the second-moment estimate. */
  readonly beta2: number;
  /** ε, added to √v̂ in the denominator. */
  readonly epsilon: number;
  /** κ, the L2 penalty added to the gradient. */
  readonly l2Penalty: number;
  /** λ, the decoupled weight decay. */
  readonly decoupledDecay: number;

  constructor(options: AdamOptions) {
    super(options.rate, ['firstMoment', 'secondMoment'], 'adam');
    this.beta1 = checkFactor(options.beta1 ?? 0.9, 'adam.beta1');
    this.beta2 = checkFactor(options.beta2 ?? 0.999, 'adam.beta2');
    this.epsilon = checkRate(options.epsilon ?? 1e-8, 'adam.epsilon');
    this.l2Penalty = checkRate(options.l2Penalty ?? 0, 'adam.l2Penalty', true);
    this.decoupledDecay = checkRate(options.decoupledDecay ?? 0, 'adam.decoupledDecay', true);
  }

  protected apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number, kernels: KernelTable): void {
    const t = this.steps;
    kernels.adamUpdate(
      values,
      gradient,
      this.slot('firstMoment', index),
      this.slot('secondMoment', index),
      values.length,
      this.beta1,
      this.beta2,
      1 - this.beta1 ** t,
      1 - this.beta2 ** t,
      this.rate * multiplier,
      this.decoupledDecay * multiplier,
      this.l2Penalty,
      this.epsilon,
    );
  }
}
