/**
 * Activation kernels and their derivative kernels, out-first over `length` elements. Aliasing: `out` may alias
 * the input in every forward kernel, and `inputGradient` may alias either input of a derivative kernel (each
 * entry is read before the same entry is written). The derivative kernels add `outputGradient · f'(·)` into `inputGradient`, expressed
 * through the forward output `y` where that is the cheaper form (σ' = y(1 − y), tanh' = 1 − y²).
 */
import type { FloatArray } from '../dtype.js';
import { logistic } from './logistic.js';

/**
 * The logistic function, written so that no exponential overflows: for x ≥ 0 it is 1 / (1 + e^−x), for x < 0
 * it is e^x / (1 + e^x) (common practice). Saturates to exactly 0 or 1 far out instead of producing NaN.
 * `out` may alias `a`.
 */
export function sigmoid(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = logistic(a[i]);
  return out;
}

/** out[i] = tanh(a[i]) for the first `length` elements; `out` may alias `a`. */
export function tanh(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = Math.tanh(a[i]);
  return out;
}

/** out[i] = max(0, a[i]); `out` may alias `a`. */
export function relu(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) {
    const x = a[i];
    out[i] = x > 0 ? x : 0;
  }
  return out;
}

/** out[i] = e^a[i]; `out` may alias `a`. */
export function exp(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = Math.exp(a[i]);
  return out;
}

/** out[i] = ln a[i]; `out` may alias `a`. */
export function log(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = Math.log(a[i]);
  return out;
}

/** inputGradient += outputGradient · y(1 − y), with y = σ(x) the forward output. */
export function sigmoidGradientInto(inputGradient: FloatArray, outputGradient: FloatArray, y: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) {
    const v = y[i];
    inputGradient[i] += outputGradient[i] * v * (1 - v);
  }
  return inputGradient;
}

/** inputGradient += outputGradient · (1 − y²), with y = tanh(x) the forward output. */
export function tanhGradientInto(inputGradient: FloatArray, outputGradient: FloatArray, y: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) {
    const v = y[i];
    inputGradient[i] += outputGradient[i] * (1 - v * v);
  }
  return inputGradient;
}

/** inputGradient += outputGradient where the forward output y is positive (ReLU; the derivative at 0 is taken as 0). */
export function reluGradientInto(inputGradient: FloatArray, outputGradient: FloatArray, y: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) if (y[i] > 0) inputGradient[i] += outputGradient[i];
  return inputGradient;
}
