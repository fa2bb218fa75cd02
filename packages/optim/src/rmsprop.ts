/**
 * RMSProp (Tieleman & Hinton 2012, Coursera lecture 6.5; common practice): s ← ρs + (1 − ρ)g²,
 * θ ← θ − η_t·α·g / (√s + ε), with g = ∇ + κθ.
 */
import type { FloatArray } from '@weft/core';
import { UpdateRule, checkFactor, checkRate } from './update-rule.js';

export interface RmsPropOptions {
  readonly rate: number;
  /** ρ, default 0.9. */
  readonly decay?: number;
  /** ε, default 1e-8. */
  readonly epsilon?: number;
  readonly l2Penalty?: number;
}

export class RmsPropRule extends UpdateRule {
  readonly kind = 'rmsprop';
  readonly decay: number;
  readonly epsilon: number;
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
