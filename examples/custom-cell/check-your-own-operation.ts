/**
 * Checking the gradient of an operation of your own.
 *
 * A "softsign" operation y = x / (1 + |x|) is written twice: once with the right derivative 1 / (1 + |x|)², once
 * with a slip (the square forgotten). The gradient check passes the first and points at the second.
 *
 * Run: npx tsx examples/custom-cell/check-your-own-operation.ts
 */
import { Random, checkGradients, multiply, noTensor, randomUniform, sum } from '@weft/core';
import type { OperationKind, Tape, Tensor } from '@weft/core';

function softsignWith(derivative: (x: number) => number, name: string) {
  // What backward needs: the input x (the output is the node's own).
  const kind: OperationKind<{ x: Tensor }> = {
    name,
    saves: () => ({ x: noTensor }),
    backward(node, tape) {
      const x = node.saved.x;
      const g = node.output.gradient!;
      const gx = tape.gradientOf(x);
      for (let i = 0; i < x.size; i++) gx[i] += g[i] * derivative(x.data[i]);
    },
  };
  return (tape: Tape, x: Tensor): Tensor => {
    const out = tape.output(x.shape, x.dtype, x.tracked);
    for (let i = 0; i < x.size; i++) out.data[i] = x.data[i] / (1 + Math.abs(x.data[i]));
    const saved = tape.record(kind, out);
    if (saved !== null) saved.x = x;
    return out;
  };
}

const right = softsignWith((x) => 1 / (1 + Math.abs(x)) ** 2, 'softsign');
const slipped = softsignWith((x) => 1 / (1 + Math.abs(x)), 'softsign-with-a-slip');

const random = new Random(2026);
const x = randomUniform([3, 4], random, -2, 2, 'f64');
x.name = 'x';
const weights = randomUniform([3, 4], random, -1, 1, 'f64');

for (const op of [right, slipped]) {
  const report = checkGradients((tape) => sum(tape, multiply(tape, op(tape, x), weights)), [x]);
  console.log(report.text());
  console.log();
}
