/**
 * Activations on the tape: sigmoid, tanh, relu, exp, log. Each saves nothing beyond its own output, from which
 * its derivative follows (σ' = y(1−y), tanh' = 1−y², relu' = [y > 0], exp' = y); log's is 1/x from its input.
 */
import { fail } from '../errors.js';
import type { KernelTable } from '../backend/kernel-table.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape, TapeNode } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { requireBackend } from './checks.js';

type ForwardName = 'sigmoid' | 'tanh' | 'relu' | 'exp' | 'log';

/** What an activation saves: its input (the output is the node's). */
interface UnarySaved {
  input: Tensor;
}

function unary(name: ForwardName, backward: (node: TapeNode<UnarySaved>, tape: Tape) => void): (tape: Tape, a: Tensor) => Tensor {
  const kind: OperationKind<UnarySaved> = { name, saves: () => ({ input: noTensor }), backward };
  return (tape: Tape, a: Tensor): Tensor => {
    if (a === undefined || a === null) fail('invalid_argument', `${name}.a`, 'a tensor', String(a));
    requireBackend(tape, name, 'a', a);
    const out = tape.output(a.shape, a.dtype, a.tracked);
    (tape.kernels as KernelTable)[name](out.data, a.data, a.size);
    const saved = tape.record(kind, out);
    if (saved !== null) saved.input = a;
    return out;
  };
}

function input(node: TapeNode<UnarySaved>): Tensor {
  return node.saved.input;
}

function output(node: TapeNode<UnarySaved>): Tensor {
  return node.output;
}

/** The logistic function 1/(1+e^−x), computed without overflow for any x. */
export const sigmoid = unary('sigmoid', (node, tape) => {
  const y = output(node);
  tape.kernels.sigmoidGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

/** The hyperbolic tangent, element by element. */
export const tanh = unary('tanh', (node, tape) => {
  const y = output(node);
  tape.kernels.tanhGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

/** max(0, x), element by element (gradient 0 at 0). */
export const relu = unary('relu', (node, tape) => {
  const y = output(node);
  tape.kernels.reluGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

/** e^x, element by element. */
export const exp = unary('exp', (node, tape) => {
  const y = output(node);
  tape.kernels.multiplyInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

/** Natural logarithm; its derivative 1/x is taken from the input. */
export const log = unary('log', (node, tape) => {
  const x = input(node);
  const g = output(node).gradient!;
  const gx = tape.gradientOf(x);
  for (let i = 0; i < x.size; i++) gx[i] += g[i] / x.data[i];
});
