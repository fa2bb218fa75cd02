/** Small models for the io tests: built from descriptions and, where it matters, briefly trained. */
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';

export const descriptions: Record<string, ModelDescription> = {
  'plain tanh': { input: { kind: 'values', width: 3 }, layers: [{ cell: 'plain', hidden: 5 }], readout: { width: 2 } },
  'plain ReLU': { input: { kind: 'values', width: 3 }, layers: [{ cell: 'plain', hidden: 5, activation: 'relu' }], readout: { width: 2 } },
  LSTM: { input: { kind: 'embedding', vocabulary: 7, width: 4 }, layers: [{ cell: 'lstm', hidden: 6 }], readout: { width: 7 } },
  'LSTM with peepholes': { input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 6, peepholes: true }], readout: { width: 2 } },
  'GRU (reset before)': { input: { kind: 'values', width: 3 }, layers: [{ cell: 'gru', hidden: 6 }], readout: { width: 2 } },
  'GRU (reset after)': { input: { kind: 'embedding', vocabulary: 7, width: 4 }, layers: [{ cell: 'gru', hidden: 6, resetAfterProduct: true }] },
  stacked: {
    input: { kind: 'values', width: 3 },
    layers: [
      { cell: 'lstm', hidden: 6, peepholes: true },
      { cell: 'gru', hidden: 5, resetAfterProduct: true },
      { cell: 'plain', hidden: 4 },
    ],
    readout: { width: 2 },
  },
  bidirectional: {
    input: { kind: 'embedding', vocabulary: 7, width: 4 },
    layers: [
      { cell: 'gru', hidden: 5, bidirectional: true },
      { cell: 'lstm', hidden: 4, bidirectional: true, peepholes: true },
    ],
    readout: { width: 3 },
  },
  reverse: {
    input: { kind: 'values', width: 3 },
    layers: [
      { cell: 'lstm', hidden: 5, reverse: true, peepholes: true },
      { cell: 'gru', hidden: 4 },
    ],
    readout: { width: 2 },
  },
};

/** A model with every parameter moved off its initial values (biases and peepholes included). */
export function shaken(description: ModelDescription, seed = 1): SequenceModel {
  const model = buildModel(description, { seed });
  const random = new Random(`shake-${seed}`);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  return model;
}

/** A next-character model trained for a few hundred steps on an invented text. */
export function trainedTextModel(): { model: SequenceModel; tokens: Int32Array } {
  const text = [
    'the loom hums at dawn while the dyer stirs a vat of indigo.',
    'a shuttle flies left, then right; the warp threads rise and fall.',
    'by noon the bolt of cloth is long enough to cover the bench.',
    'the weaver counts the picks per inch and tightens the reed.',
    'at dusk the looms rest and the spools are stacked by colour.',
  ]
    .join(' ')
    .repeat(4);
  const symbols = [...new Set(text)].sort();
  const tokens = Int32Array.from([...text].map((c) => symbols.indexOf(c)));
  const model = buildModel(
    { input: { kind: 'embedding', vocabulary: symbols.length, width: 8 }, layers: [{ cell: 'lstm', hidden: 24 }], readout: { width: symbols.length } },
    { seed: 2 },
  );
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'tokens', tokens, vocabulary: symbols.length }, { streams: 4, window: 16 }),
    optimizer: new AdamRule({ rate: 0.02 }),
    epochs: 6,
    gradientNormLimit: 1,
  });
  while (!trainer.finished) trainer.step();
  return { model, tokens };
}

/** A two-sensor forecaster trained briefly on invented periodic readings. */
export function trainedForecaster(): { model: SequenceModel; values: number[] } {
  const values: number[] = [];
  for (let i = 0; i < 800; i++) values.push(Math.sin(i / 6) + 0.3 * Math.sin(i / 2.3), Math.cos(i / 6) * 0.8);
  const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 16 }], readout: { width: 2 } }, { seed: 5 });
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'values', values, features: 2 }, { streams: 4, window: 20 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: 10,
  });
  while (!trainer.finished) trainer.step();
  return { model, values };
}
