/**
 * Adagrad (Duchi, Hazan & Singer 2011, "Adaptive subgradient methods for online learning and stochastic
 * optimization", diagonal form): s ← s + g², θ ← θ − η_t·α·g / (√s + ε), with g = ∇ + κθ.
 */
import type { FloatArray } from '@weft/core';
import { UpdateRule, checkRate } from './update-rule.js';

/** Options of Adagrad. */
export interface AdagradOptions {
  /** α, the base learning rate (> 0). */
  readonly rate: number;
  /** ε, default 1e-10. */
  readonly epsilon?: number;
  /** κ: L2 penalty added to the gradient. Default 0. */
  readonly l2Penalty?: number;
}

/** Adagrad: each step divided by the root of the sum of all squared gradients so far. */
export class AdagradRule extends UpdateRule {
  /** Always `adagrad`. */
  readonly kind = 'adagrad';
  /** ε, added to the root in the denominator. */
  readonly epsilon: number;
  /** κ, the L2 penalty added to the gradient. */
  readonly l2Penalty: number;

  constructor(options: AdagradOptions) {
    super(options.rate, ['sumOfSquares'], 'adagrad');
    this.epsilon = checkRate(options.epsilon ?? 1e-10, 'adagrad.epsilon');
    this.l2Penalty = checkRate(options.l2Penalty ?? 0, 'adagrad.l2Penalty', true);
  }

  protected apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number): void {
    const s = this.slot('sumOfSquares', index);
    const rate = this.rate * multiplier;
    for (let i = 0; i < values.length; i++) {
      const g = gradient[i] + this.l2Penalty * values[i];
      s[i] += g * g;
      values[i] -= (rate * g) / (Math.sqrt(s[i]) + this.epsilon);
    }
  }
}
