/** Test inputs shared by the packages' gradient tests: named f64 tensors and a weighted sum that reads every entry. */
import { multiply, randomUniform, sum } from '@weft/core';
import type { Random, Tape, Tensor } from '@weft/core';

/** An f64 tensor of uniform values in [low, high), named for the gradient report. */
export function f64Input(random: Random, shape: number[], name: string, low = -1, high = 1): Tensor {
  const t = randomUniform(shape, random, low, high, 'f64');
  t.name = name;
  return t;
}

/** Σ w ⊙ t: a scalar that depends on every entry of `t` with its own weight, so no gradient entry is trivially zero. */
export function weightedSum(tape: Tape, t: Tensor, w: Tensor): Tensor {
  return sum(tape, multiply(tape, t, w));
}
