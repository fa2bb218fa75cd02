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
import type { AdamBuffers, AdamConstants } from '@weft/core/kernels';
import { UpdateRule, checkFactor, checkRate } from './update-rule.js';

/** A placeholder for the update records' arrays until the first update fills them. */
const noValues = new Float32Array(0);

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

  /** The update's argument records, made once and refilled per parameter. */
  private readonly buffers: AdamBuffers = { values: noValues, gradient: noValues, firstMoment: noValues, secondMoment: noValues };
  private readonly constants: AdamConstants = { beta1: 0, beta2: 0, correction1: 1, correction2: 1, rate: 0, decay: 0, kappa: 0, epsilon: 0 };

  protected apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number, kernels: KernelTable): void {
    const t = this.steps;
    const buffers = this.buffers;
    buffers.values = values;
    buffers.gradient = gradient;
    buffers.firstMoment = this.slot('firstMoment', index);
    buffers.secondMoment = this.slot('secondMoment', index);
    const constants = this.constants;
    constants.beta1 = this.beta1;
    constants.beta2 = this.beta2;
    constants.correction1 = 1 - this.beta1 ** t;
    constants.correction2 = 1 - this.beta2 ** t;
    constants.rate = this.rate * multiplier;
    constants.decay = this.decoupledDecay * multiplier;
    constants.kappa = this.l2Penalty;
    constants.epsilon = this.epsilon;
    kernels.adamUpdate(buffers, values.length, constants);
  }
}
