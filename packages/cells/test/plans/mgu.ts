/**
 * A cell that is not built in, for the plan tests: the example's minimal gated unit (Zhou, Wu, Zhang & Zhou 2016, "Minimal
 * gated unit for recurrent neural networks", eqs. 8–10), one gate f that both forgets and resets:
 *
 *   f = σ(x·W_f + h₋·U_f + b_f)
 *   ĥ = tanh(x·W_h + (f ⊙ h₋)·U_h + b_h)
 *   h = (1 − f) ⊙ h₋ + f ⊙ ĥ,  written h₋ + f ⊙ (ĥ − h₋)
 *
 * Parameters: input [I, 2H] (blocks f, h), bias [2H], recurrentGate [H, H], recurrentCandidate [H, H].
 */
import type { CellPlan } from '@weft/cells/description';
import { mguPlan as examplePlan } from '../../../../examples/custom-cell/mgu-plan.js';

/** The example's plan (examples/custom-cell/mgu-plan.ts) filed under a kind of the tests. */
export const mguPlan: CellPlan = { ...examplePlan, kind: 'test.mgu' };

/** The minimal gated unit computed directly from the equations above in f64, one row: a reference for the tests. */
export function mguReference(x: readonly number[], h: readonly number[], p: Readonly<Record<string, ArrayLike<number>>>): number[] {
  const H = h.length;
  const I = x.length;
  const sigma = (v: number): number => 1 / (1 + Math.exp(-v));
  const f: number[] = [];
  for (let j = 0; j < H; j++) {
    let a = p.bias[j];
    for (let i = 0; i < I; i++) a += x[i] * p.input[i * 2 * H + j];
    for (let k = 0; k < H; k++) a += h[k] * p.recurrentGate[k * H + j];
    f.push(sigma(a));
  }
  return h.map((hj, j) => {
    let a = p.bias[H + j];
    for (let i = 0; i < I; i++) a += x[i] * p.input[i * 2 * H + H + j];
    for (let k = 0; k < H; k++) a += f[k] * h[k] * p.recurrentCandidate[k * H + j];
    return (1 - f[j]) * hj + f[j] * Math.tanh(a);
  });
}
