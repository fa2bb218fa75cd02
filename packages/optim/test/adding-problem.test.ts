/**
 * The adding problem (Hochreiter & Schmidhuber 1997, experiment 4; in the setup of Le, Jaitly & Hinton 2015):
 * each step carries a value drawn from U(0, 1) and a marker; exactly two steps are marked, one in each half of
 * the sequence, and the target is the sum of the two marked values. Always answering 1 gives MSE = Var(U₁ + U₂)
 * = 2/12 ≈ 0.167. An LSTM on sequences of length 50 must reach test MSE < 0.01 within a fixed step budget.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, sequenceBatches } from '@weft/optim';
import type { LabelledSequence } from '@weft/optim';

const LENGTH = 50;
const BUDGET = 700;

function addingSequences(count: number, seed: string): LabelledSequence[] {
  const random = new Random(seed);
  return Array.from({ length: count }, () => {
    const first = random.integer(LENGTH / 2);
    const second = LENGTH / 2 + random.integer(LENGTH / 2);
    const values: number[] = [];
    let sum = 0;
    for (let t = 0; t < LENGTH; t++) {
      const value = random.uniform();
      const marked = t === first || t === second;
      if (marked) sum += value;
      values.push(value, marked ? 1 : 0);
    }
    return { values, target: [sum] };
  });
}

function train(cell: 'lstm' | 'plain'): { testLoss: number; steps: number; baseline: number } {
  const data = sequenceBatches(addingSequences(6400, 'adding-train'), { batchSize: 32, features: 2, seed: 1 });
  const testSet = addingSequences(1000, 'adding-test');
  const test = sequenceBatches(testSet, { batchSize: 250, features: 2 });
  const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell, hidden: 32 }], readout: { width: 1 } }, { seed: 3 });
  const trainer = new Trainer({ model, data, validation: test, optimizer: new AdamRule({ rate: 0.01 }), epochs: 10, gradientNormLimit: 1 });
  let testLoss = Infinity;
  while (trainer.stepsTaken < BUDGET) {
    trainer.step();
    if (trainer.stepsTaken % 50 === 0) {
      testLoss = trainer.validate().loss;
      if (testLoss < 0.005) break;
    }
  }
  const baseline = testSet.reduce((s, q) => s + (q.target![0] - 1) ** 2, 0) / testSet.length;
  return { testLoss, steps: trainer.stepsTaken, baseline };
}

describe('the adding problem, length 50', () => {
  it(`an LSTM reaches test MSE < 0.01 within ${BUDGET} steps, against ≈ 0.167 for always answering 1`, () => {
    const { testLoss, steps, baseline } = train('lstm');
    console.log(`adding problem: LSTM test MSE ${testLoss.toFixed(5)} after ${steps} steps; always-1 baseline ${baseline.toFixed(4)}`);
    expect(baseline).toBeGreaterThan(0.14);
    expect(baseline).toBeLessThan(0.19);
    expect(testLoss).toBeLessThan(0.01);
  });

  it('records what a tanh plain RNN reaches with the same budget (no assertion on its level)', () => {
    const { testLoss, steps } = train('plain');
    console.log(`adding problem: tanh plain RNN test MSE ${testLoss.toFixed(5)} after ${steps} steps`);
    expect(Number.isFinite(testLoss)).toBe(true);
  });
});
