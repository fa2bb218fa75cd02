/**
 * RMSProp (Tieleman & Hinton 2012, Coursera lecture 6.5; common practice): s ← ρs + (1 − ρ)g²,
 * θ ← θ − η_t·α·g / (√s + ε), with g = ∇ + κθ.
 */
import type { FloatArray } from '@weft/core';
import { UpdateRule, checkFactor, checkRate } from './update-rule.js';

/** Options of RMSProp. */
export interface RmsPropOptions {
  /** α, the base learning rate (> 0). */
  readonly rate: number;
  /** ρ, default 0.9. */
  readonly decay?: number;
  /** ε, default 1e-8. */
  readonly epsilon?: number;
  /** κ: L2 penalty added to the gradient. Default 0. */
  readonly l2Penalty?: number;
}

/** RMSProp: each step divided by a running root mean square of the gradients. */
export class RmsPropRule extends UpdateRule {
  /** Always `rmsprop`. */
  readonly kind = 'rmsprop';
  /** ρ, the decay of the running mean of squared gradients. */
  readonly decay: number;
  /** ε, added to the root in the denominator. */
  readonly epsilon: number;
  /** κ, the L2 penalty added to the gradient. */
  readonly l2Penalty: number;

  constructor(options: RmsPropOptions) {
    super(options.rate, ['meanSquare'], 'rmsprop');
    this.decay = checkFactor(options.decay ?? 0.9, 'rmsprop.decay');
    this.epsilon = checkRate(options.epsilon ?? 1e-8, 'rmsprop.epsilon');
    this.l2Penalty = checkRate(options.l2Penalty ?? 0, 'rmsprop.l2Penalty', true);
  }

  protected apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number): void {
    const s = this.slot('meanSquare', index);
    const rho = this.decay;
    const rate = this.rate * multiplier;
    for (let i = 0; i < values.length; i++) {
      const g = gradient[i] + this.l2Penalty * values[i];
      const si = rho * s[i] + (1 - rho) * g * g;
      s[i] = si;
      values[i] -= (rate * g) / (Math.sqrt(si) + this.epsilon);
    }
  }
}
