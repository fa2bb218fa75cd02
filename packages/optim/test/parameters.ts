/** Parameters for the update-rule tests: small f64 trainable vectors whose gradients a test sets by hand. */
import { tensor, trainable } from '@weft/core';
import type { Tensor } from '@weft/core';

export function parameter(values: number[]): Tensor {
  return trainable(tensor(values, [values.length], 'f64'));
}

export function setGradient(p: Tensor, values: number[]): void {
  p.gradient!.set(values);
}
