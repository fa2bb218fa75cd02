/** Sum and mean of all elements, to a scalar (shape [1]). Backward: every element receives g (or g/n). */
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';

/** What a sum saves: its input and the factor on the sum (1 for `sum`, 1/n for `mean`). */
interface ReduceSaved {
  input: Tensor;
  factor: number;
}

const reduceKind: OperationKind<ReduceSaved> = {
  name: 'sum',
  saves: () => ({ input: noTensor, factor: 0 }),
  backward(node, tape): void {
    const a = node.saved.input;
    const share = node.output.gradient![0] * node.saved.factor;
    const ga = tape.gradientOf(a);
    for (let i = 0; i < a.size; i++) ga[i] += share;
  },
};

function reduce(tape: Tape, a: Tensor, factor: number): Tensor {
  const out = tape.output([1], a.dtype, a.tracked);
  out.data[0] = tape.kernels.sum(a.data, a.size) * factor;
  const saved = tape.record(reduceKind, out);
  if (saved !== null) {
    saved.input = a;
    saved.factor = factor;
  }
  return out;
}

/** Σ a, as a one-element tensor. */
export function sum(tape: Tape, a: Tensor): Tensor {
  return reduce(tape, a, 1);
}

/** (Σ a) / n; the mean of no elements is 0. */
export function mean(tape: Tape, a: Tensor): Tensor {
  return reduce(tape, a, a.size === 0 ? 0 : 1 / a.size);
}
