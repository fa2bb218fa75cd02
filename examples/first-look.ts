// The README's first look at the library, kept runnable: npx tsx examples/first-look.ts
import { Random, Tape, add, checkGradients, matmul, randomUniform, sum, tanh, trainable, multiply } from '@weft/core';

const random = new Random(7); // every random choice is seeded
const weights = trainable(randomUniform([3, 4], random, -1, 1, 'f64'), 'weights');
const bias = trainable(randomUniform([4], random, -1, 1, 'f64'), 'bias');
const input = randomUniform([2, 3], random, -1, 1, 'f64');

const tape = new Tape();
const hidden = tanh(tape, add(tape, matmul(tape, input, weights), bias));
const loss = sum(tape, multiply(tape, hidden, hidden));
tape.reverseSweep(loss); // weights.gradient and bias.gradient now hold ∂loss
tape.clear(); // buffers go back to the pool for the next step

// Prove those gradients against central finite differences:
const report = checkGradients(
  (t) => {
    const h = tanh(t, add(t, matmul(t, input, weights), bias));
    return sum(t, multiply(t, h, h));
  },
  [weights, bias],
);
console.log(report.text());
