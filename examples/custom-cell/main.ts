/**
 * A cell of your own, in your own code: the minimal gated unit of minimal-gated-cell.ts, gradient-checked with
 * finite differences, then registered by name and trained inside a described model on the vibration bursts of
 * the classification example.
 *
 * Run: npx tsx examples/custom-cell/main.ts
 */
import { Random, type Tape, checkGradients, multiply, randomUniform, sum } from '@weft/core';
import { buildModel, runSequence } from '@weft/cells';
import { AdamRule, Trainer, sequenceBatches } from '@weft/optim';
import { bursts } from '../classify-vibration/main.js';
import { runIfMain, smallBudget } from '../shared.js';
import { MinimalGatedCell } from './minimal-gated-cell.js';

export async function customCell(): Promise<{ gradientsPass: boolean; accuracy: number }> {
  // 1. Prove the gradients, in f64, over a ragged batch.
  const cell = new MinimalGatedCell(2, 5, 'f64', 3);
  const inputs = randomUniform([7, 3, 2], new Random(1), -1, 1, 'f64');
  const report = checkGradients(
    (tape: Tape) => {
      const { outputs } = runSequence(tape, cell, inputs, { lengths: [7, 4, 2] });
      return sum(tape, multiply(tape, outputs, outputs));
    },
    cell.parameters().map((p) => {
      p.tensor.name = p.name;
      return p.tensor;
    }),
  );
  console.log(report.text());
  // 2. Train it, registered under its own kind, in a described model.
  const model = buildModel(
    { input: { kind: 'values', width: 1 }, layers: [{ cell: 'minimal-gated', hidden: 16 }], readout: { width: 3 } },
    { seed: 2, cells: { 'minimal-gated': (request) => new MinimalGatedCell(request.inputWidth, request.hidden, request.dtype, 5) } },
  );
  const trainer = new Trainer({
    model,
    data: sequenceBatches(bursts(smallBudget() ? 300 : 900, 'pumps-train'), { batchSize: 32, seed: 1 }),
    validation: sequenceBatches(bursts(300, 'pumps-test'), { batchSize: 100 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: smallBudget() ? 6 : 12,
    gradientNormLimit: 1,
  });
  await trainer.run();
  const accuracy = trainer.validate().metric;
  console.log(`minimal gated cell, held-out accuracy on the vibration bursts: ${(100 * accuracy).toFixed(1)}%`);
  return { gradientsPass: report.passed, accuracy };
}

runIfMain(import.meta.url, customCell);
