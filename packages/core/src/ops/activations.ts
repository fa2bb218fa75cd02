/**
 * Activations on the tape: sigmoid, tanh, relu, exp, log. Each saves nothing beyond its own output, from which
 * its derivative follows (σ' = y(1−y), tanh' = 1−y², relu' = [y > 0], exp' = y); log's is 1/x from its input.
 */
import { fail } from '../errors.js';
import * as activation from '../kernels/activations.js';
import { multiplyInto } from '../kernels/elementwise.js';
import type { OperationKind, Tape, TapeNode } from '../tape.js';
import type { Tensor } from '../tensor.js';
import type { FloatArray } from '../dtype.js';

type Forward = (out: FloatArray, a: FloatArray, length: number) => FloatArray;

function unary(name: string, forward: Forward, backward: (node: TapeNode, tape: Tape) => void): (tape: Tape, a: Tensor) => Tensor {
  const kind: OperationKind = { name, backward };
  return (tape: Tape, a: Tensor): Tensor => {
    if (a === undefined || a === null) fail('invalid_argument', `${name}.a`, 'a tensor', String(a));
    const out = tape.output(a.shape, a.dtype, a.tracked);
    forward(out.data, a.data, a.size);
    tape.record(kind, out, a);
    return out;
  };
}

function input(node: TapeNode): Tensor {
  return node.first as Tensor;
}

function output(node: TapeNode): Tensor {
  return node.output as Tensor;
}

/** The logistic function 1/(1+e^−x), computed without overflow for any x. */
export const sigmoid = unary('sigmoid', activation.sigmoid, (node, tape) => {
  const y = output(node);
  activation.sigmoidGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

export const tanh = unary('tanh', activation.tanh, (node, tape) => {
  const y = output(node);
  activation.tanhGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

export const relu = unary('relu', activation.relu, (node, tape) => {
  const y = output(node);
  activation.reluGradientInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

export const exp = unary('exp', activation.exp, (node, tape) => {
  const y = output(node);
  multiplyInto(tape.gradientOf(input(node)), y.gradient!, y.data, y.size);
});

/** Natural logarithm; its derivative 1/x is taken from the input. */
export const log = unary('log', activation.log, (node, tape) => {
  const x = input(node);
  const g = output(node).gradient!;
  const gx = tape.gradientOf(x);
  for (let i = 0; i < x.size; i++) gx[i] += g[i] / x.data[i];
});
