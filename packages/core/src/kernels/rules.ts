/**
 * The update rules' loops over one parameter's buffers, out-first in the sense that `buffers.values` and the
 * state buffers are updated in place. Equations beside the rules in @weft/optim (adam.ts, sgd.ts); the caller
 * passes the per-update constants (bias corrections 1 − βᵗ, the scheduled rate α·η_t and decay λ·η_t) in a record
 * it makes once and refills per update.
 *
 * Aliasing: the values may alias their gradient (each entry is read before the same entry is written); the moment
 * estimates and the velocity are the rule's own state and must each be an array of their own.
 */
import type { FloatArray } from '../dtype.js';

/** One parameter's buffers under Adam: its values and gradient, and the two moment estimates. */
export interface AdamBuffers {
  /** The parameter's values θ, updated in place. */
  values: FloatArray;
  /** Its gradient g. */
  gradient: FloatArray;
  /** The first-moment estimate m, updated in place. */
  firstMoment: FloatArray;
  /** The second-moment estimate v, updated in place. */
  secondMoment: FloatArray;
}

/** One Adam update's constants: β₁, β₂, the bias corrections 1 − βᵗ, α·η_t, λ·η_t, the L2 penalty κ and ε. */
export interface AdamConstants {
  /** β₁, the decay of m. */
  beta1: number;
  /** β₂, the decay of v. */
  beta2: number;
  /** 1 − β₁ᵗ, the bias correction of m. */
  correction1: number;
  /** 1 − β₂ᵗ, the bias correction of v. */
  correction2: number;
  /** α·η_t, the scheduled learning rate. */
  rate: number;
  /** λ·η_t, the scheduled decoupled decay. */
  decay: number;
  /** κ, the L2 penalty added to the gradient. */
  kappa: number;
  /** ε, added to √v̂. */
  epsilon: number;
}

/** One parameter's buffers under SGD with momentum: its values and gradient, and the velocity. */
export interface MomentumBuffers {
  /** The parameter's values θ, updated in place. */
  values: FloatArray;
  /** Its gradient g. */
  gradient: FloatArray;
  /** The velocity v, updated in place. */
  velocity: FloatArray;
}

/** One SGD update's constants: α·η_t, λ·η_t, the momentum μ and the L2 penalty κ. */
export interface MomentumConstants {
  /** α·η_t, the scheduled learning rate. */
  rate: number;
  /** λ·η_t, the scheduled decoupled decay. */
  decay: number;
  /** μ, the momentum. */
  mu: number;
  /** κ, the L2 penalty added to the gradient. */
  kappa: number;
}

/** Adam (Kingma & Ba 2015, Algorithm 1) with L2 penalty κ and decoupled decay λ (Loshchilov & Hutter 2019). */
export function adamUpdate(buffers: AdamBuffers, length: number, constants: AdamConstants): void {
  const { values, gradient, firstMoment, secondMoment } = buffers;
  const { beta1, beta2, correction1, correction2, rate, decay, kappa, epsilon } = constants;
  for (let i = 0; i < length; i++) {
    const theta = values[i];
    const g = gradient[i] + kappa * theta;
    const mi = beta1 * firstMoment[i] + (1 - beta1) * g;
    const vi = beta2 * secondMoment[i] + (1 - beta2) * g * g;
    firstMoment[i] = mi;
    secondMoment[i] = vi;
    const mHat = mi / correction1;
    const vHat = vi / correction2;
    values[i] = theta - (rate * (mHat / (Math.sqrt(vHat) + epsilon)) + decay * theta);
  }
}

/** SGD with momentum μ (heavy ball: step along v = μ·v + g), L2 penalty κ and decoupled decay λ. */
export function sgdUpdate(buffers: MomentumBuffers, length: number, constants: MomentumConstants): void {
  momentumUpdate(buffers, length, constants, false);
}

/** SGD with Nesterov's momentum (Sutskever et al. 2013: step along g + μ·v), L2 penalty κ and decoupled decay λ. */
export function nesterovUpdate(buffers: MomentumBuffers, length: number, constants: MomentumConstants): void {
  momentumUpdate(buffers, length, constants, true);
}

function momentumUpdate(buffers: MomentumBuffers, length: number, constants: MomentumConstants, nesterov: boolean): void {
  const { values, gradient, velocity } = buffers;
  const { rate, decay, mu, kappa } = constants;
  for (let i = 0; i < length; i++) {
    const theta = values[i];
    const g = gradient[i] + kappa * theta;
    const v = mu * velocity[i] + g;
    velocity[i] = v;
    const direction = nesterov ? g + mu * v : v;
    values[i] = theta - (rate * direction + decay * theta);
  }
}
