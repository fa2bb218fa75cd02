/**
 * Sequence classification. Invented scenario: vibration bursts recorded from a workshop's pumps, each 20 to 60
 * readings long, to be sorted into "steady", "imbalance" (a strong once-per-turn swing) and "loose" (irregular
 * knocks). A bidirectional GRU reads each burst both ways; padded, masked batches of similar lengths.
 *
 * Run: npx tsx examples/classify-vibration/main.ts
 */
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, sequenceBatches } from '@weft/optim';
import type { LabelledSequence } from '@weft/optim';
import { runIfMain, smallBudget } from '../shared.js';

export const classes = ['steady', 'imbalance', 'loose'];

export function bursts(count: number, seed: string): LabelledSequence[] {
  const random = new Random(seed);
  return Array.from({ length: count }, () => {
    const label = random.integer(3);
    const length = 20 + random.integer(41);
    const turn = 5 + random.integer(4);
    const values: number[] = [];
    for (let t = 0; t < length; t++) {
      let v = 0.3 * Math.sin((2 * Math.PI * t) / 3) + 0.25 * random.normal();
      if (label === 1) v += 0.9 * Math.sin((2 * Math.PI * t) / turn);
      if (label === 2 && random.uniform() < 0.12) v += (random.uniform() < 0.5 ? -1 : 1) * (1.5 + random.uniform());
      values.push(v);
    }
    return { values, label };
  });
}

export async function classifyVibration(): Promise<{ accuracy: number; majority: number }> {
  const train = bursts(smallBudget() ? 300 : 900, 'pumps-train');
  const test = bursts(300, 'pumps-test');
  const model = buildModel(
    { input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 16, bidirectional: true }], readout: { width: 3 } },
    { seed: 1 },
  );
  const trainer = new Trainer({
    model,
    data: sequenceBatches(train, { batchSize: 32, seed: 1 }),
    validation: sequenceBatches(test, { batchSize: 100 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: smallBudget() ? 6 : 12,
    gradientNormLimit: 1,
  });
  await trainer.run();
  const { metric: accuracy } = trainer.validate();
  const majority = Math.max(...classes.map((_, k) => test.filter((s) => s.label === k).length)) / test.length;
  console.log(`held-out accuracy ${(100 * accuracy).toFixed(1)}% (always the most common class: ${(100 * majority).toFixed(1)}%)`);
  return { accuracy, majority };
}

runIfMain(import.meta.url, classifyVibration);
