/** Sum and mean of all elements, to a scalar (shape [1]). Backward: every element receives g (or g/n). */
import type { OperationKind, Tape, TapeNode } from '../tape.js';
import type { Tensor } from '../tensor.js';

const reduceKind: OperationKind = {
  name: 'sum',
  backward(node: TapeNode, tape: Tape): void {
    const a = node.first as Tensor;
    const share = (node.output as Tensor).gradient![0] * node.number0;
    const ga = tape.gradientOf(a);
    for (let i = 0; i < a.size; i++) ga[i] += share;
  },
};

function reduce(tape: Tape, a: Tensor, factor: number): Tensor {
  const out = tape.output([1], a.dtype, a.tracked);
  out.data[0] = tape.kernels.sum(a.data, a.size) * factor;
  const node = tape.record(reduceKind, out, a);
  if (node !== null) node.number0 = factor;
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
