/**
 * Stochastic gradient descent with momentum, plain or Nesterov's (common practice; in the form of Sutskever,
 * Martens, Dahl & Hinton 2013): with g' = g + κθ (the L2 penalty κ, added to the gradient),
 *   v ← μv + g',   θ ← θ − η_t(α·v + λθ)            (momentum)
 *   v ← μv + g',   θ ← θ − η_t(α·(g' + μv) + λθ)    (Nesterov)
 * where λ is the decoupled weight decay (Loshchilov & Hutter 2019). With μ = 0 it is plain SGD.
 */
import type { FloatArray, KernelTable } from '@weft/core';
import type { MomentumBuffers, MomentumConstants } from '@weft/core/kernels';
import { UpdateRule, checkFactor, checkRate } from './update-rule.js';

/** A placeholder for the update records' arrays until the first update fills them. */
const noValues = new Float32Array(0);

/** Options of stochastic gradient descent. */
export interface SgdOptions {
  /** α, the base learning rate (> 0). */
  readonly rate: number;
  /** μ, default 0. */
  readonly momentum?: number;
  /** Nesterov's look-ahead form. Default false. */
  readonly nesterov?: boolean;
  /** κ: adds κθ to the gradient. Default 0. */
  readonly l2Penalty?: number;
  /** λ: decoupled decay, θ ← θ − η_t·λθ. Default 0. */
  readonly decoupledDecay?: number;
}

/** Stochastic gradient descent with optional momentum (heavy-ball or Nesterov), L2 penalty and decoupled decay. */
export class SgdRule extends UpdateRule {
  /** Always `sgd`. */
  readonly kind = 'sgd';
  /** μ, in [0, 1). */
  readonly momentum: number;
  /** Whether the look-ahead (Nesterov) form of momentum is used. */
  readonly nesterov: boolean;
  /** κ, the L2 penalty added to the gradient (κθ). */
  readonly l2Penalty: number;
  /** λ, the decoupled weight decay. */
  readonly decoupledDecay: number;

  constructor(options: SgdOptions) {
    super(options.rate, ['velocity'], 'sgd');
    this.momentum = checkFactor(options.momentum ?? 0, 'sgd.momentum');
    this.nesterov = options.nesterov === true;
    this.l2Penalty = checkRate(options.l2Penalty ?? 0, 'sgd.l2Penalty', true);
    this.decoupledDecay = checkRate(options.decoupledDecay ?? 0, 'sgd.decoupledDecay', true);
  }

  /** The update's argument records, made once and refilled per parameter. */
  private readonly buffers: MomentumBuffers = { values: noValues, gradient: noValues, velocity: noValues };
  private readonly constants: MomentumConstants = { rate: 0, decay: 0, mu: 0, kappa: 0 };

  protected apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number, kernels: KernelTable): void {
    const buffers = this.buffers;
    buffers.values = values;
    buffers.gradient = gradient;
    buffers.velocity = this.slot('velocity', index);
    const constants = this.constants;
    constants.rate = this.rate * multiplier;
    constants.decay = this.decoupledDecay * multiplier;
    constants.mu = this.momentum;
    constants.kappa = this.l2Penalty;
    if (this.nesterov) kernels.nesterovUpdate(buffers, values.length, constants);
    else kernels.sgdUpdate(buffers, values.length, constants);
  }
}
