/**
 * The update rules' loops over one parameter's buffers, out-first in the sense that `values` and the state
 * buffers are updated in place. Equations beside the rules in @weft/optim (adam.ts, sgd.ts); the caller passes
 * the per-update constants (bias corrections 1 − βᵗ, the scheduled rate α·η_t and decay λ·η_t).
 */
import type { FloatArray } from '../dtype.js';

/** Adam (Kingma & Ba 2015, Algorithm 1) with L2 penalty κ and decoupled decay λ (Loshchilov & Hutter 2019). */
export function adamUpdate(
  values: FloatArray,
  gradient: FloatArray,
  firstMoment: FloatArray,
  secondMoment: FloatArray,
  length: number,
  beta1: number,
  beta2: number,
  correction1: number,
  correction2: number,
  rate: number,
  decay: number,
  kappa: number,
  epsilon: number,
): void {
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

/** SGD with momentum μ, Nesterov's form when `nesterov`, L2 penalty κ and decoupled decay λ. */
export function sgdUpdate(
  values: FloatArray,
  gradient: FloatArray,
  velocity: FloatArray,
  length: number,
  rate: number,
  decay: number,
  mu: number,
  kappa: number,
  nesterov: boolean,
): void {
  for (let i = 0; i < length; i++) {
    const theta = values[i];
    const g = gradient[i] + kappa * theta;
    const v = mu * velocity[i] + g;
    velocity[i] = v;
    const direction = nesterov ? g + mu * v : v;
    values[i] = theta - (rate * direction + decay * theta);
  }
}
