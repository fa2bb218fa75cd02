/**
 * Adagrad (Duchi, Hazan & Singer 2011, "Adaptive subgradient methods for online learning and stochastic
 * optimization", diagonal form): s ← s + g², θ ← θ − η_t·α·g / (√s + ε), with g = ∇ + κθ.
 */
import type { FloatArray } from '@weft/core';
import { UpdateRule, checkRate } from './update-rule.js';

export interface AdagradOptions {
  readonly rate: number;
  /** ε, default 1e-10. */
  readonly epsilon?: number;
  readonly l2Penalty?: number;
}

export class AdagradRule extends UpdateRule {
  readonly kind = 'adagrad';
  readonly epsilon: number;
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
