import { describe, expect, it } from 'vitest';
import { Random, WeftError, tensor } from '@weft/core';
import { EncoderDecoderModel, buildModel } from '@weft/cells';
import { AdamRule, SgdRule, Trainer, pairBatches, sequenceBatches, streamBatches } from '@weft/optim';
import type { Batch, TrainingEvent, TrainerOptions } from '@weft/optim';

function corpus(length: number, seed: string): Int32Array {
  // A small invented "language": repeating motifs with random choices, over 6 symbols.
  const random = new Random(seed);
  const out = new Int32Array(length);
  for (let i = 0; i < length; i++) out[i] = i % 3 === 2 ? (out[i - 1] + out[i - 2]) % 6 : random.integer(6);
  return out;
}

function textModel(seed = 1) {
  return buildModel(
    { input: { kind: 'embedding', vocabulary: 6, width: 4 }, layers: [{ cell: 'gru', hidden: 8 }], dropout: 0, readout: { width: 6 } },
    { seed },
  );
}

function weights(model: { parameters(): { tensor: { data: ArrayLike<number> } }[] }): number[][] {
  return model.parameters().map((p) => Array.from(p.tensor.data));
}

describe('the trainer', () => {
  it('gives bit-identical weights for two runs with one seed', async () => {
    const make = () => {
      const model = buildModel(
        {
          input: { kind: 'embedding', vocabulary: 6, width: 4 },
          layers: [
            { cell: 'lstm', hidden: 8 },
            { cell: 'gru', hidden: 6 },
          ],
          dropout: 0.3,
          readout: { width: 6 },
        },
        { seed: 9 },
      );
      return new Trainer({
        model,
        data: streamBatches({ kind: 'tokens', tokens: corpus(2000, 'c'), vocabulary: 6 }, { streams: 4, window: 10 }),
        optimizer: new AdamRule({ rate: 0.01 }),
        epochs: 1,
        seed: 5,
        gradientNormLimit: 1,
      });
    };
    const a = make();
    const b = make();
    await a.run();
    await b.run();
    expect(weights(b.model)).toEqual(weights(a.model));
    expect(a.stepsTaken).toBe(49);
  });

  it('resumes from a snapshot bit-identical to an uninterrupted run (stream with carried state, dropout, schedule)', () => {
    const options = (model: ReturnType<typeof textModel>): TrainerOptions => ({
      model,
      data: streamBatches({ kind: 'tokens', tokens: corpus(3000, 'r'), vocabulary: 6 }, { streams: 3, window: 12 }),
      optimizer: new AdamRule({ rate: 0.02, decoupledDecay: 0.01 }),
      schedule: { kind: 'cosine', total: 160, warmup: 5 },
      epochs: 2,
      seed: 'resume',
      gradientNormLimit: 0.5,
    });
    const dropoutModel = () =>
      buildModel(
        {
          input: { kind: 'embedding', vocabulary: 6, width: 4 },
          layers: [
            { cell: 'lstm', hidden: 6 },
            { cell: 'lstm', hidden: 6 },
          ],
          dropout: 0.25,
          readout: { width: 6 },
        },
        { seed: 2 },
      );
    const whole = new Trainer(options(dropoutModel()));
    while (!whole.finished) whole.step();
    const first = new Trainer(options(dropoutModel()));
    for (let i = 0; i < 100; i++) first.step();
    const saved = JSON.parse(JSON.stringify(first.snapshot()));
    const resumed = new Trainer(options(dropoutModel()));
    resumed.restore(saved);
    while (!resumed.finished) resumed.step();
    expect(resumed.stepsTaken).toBe(whole.stepsTaken);
    expect(weights(resumed.model)).toEqual(weights(whole.model));
  });

  it('stops a divergent run naming the step and the first non-finite quantity, keeping the last finite weights', () => {
    // A forecaster of a sine wave with ReLU units and a learning rate far too large: the squared error explodes.
    const wave = Array.from({ length: 600 }, (_, i) => Math.sin(i / 5));
    const make = () => {
      const model = buildModel(
        { input: { kind: 'values', width: 1 }, layers: [{ cell: 'plain', hidden: 8, activation: 'relu' }], readout: { width: 1 } },
        { seed: 3 },
      );
      return new Trainer({
        model,
        data: streamBatches({ kind: 'values', values: wave, features: 1 }, { streams: 2, window: 8 }),
        optimizer: new SgdRule({ rate: 50 }),
        epochs: 5,
      });
    };
    const trainer = make();
    let error: unknown;
    try {
      while (!trainer.finished) trainer.step();
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(WeftError);
    const problem = (error as WeftError).problems[0];
    expect(problem.code).toBe('not_finite');
    const failedStep = Number(/^training step (\d+): /.exec(problem.path)?.[1]);
    expect(failedStep).toBeGreaterThan(1);
    expect(problem.path).toMatch(/^training step \d+: (loss|parameter [\w.]+\[\d+\])$/);
    // The same run stopped one step earlier has exactly these weights.
    const reference = make();
    for (let i = 1; i < failedStep; i++) reference.step();
    const values = (t: Trainer) => t.model.parameters().map((p) => Array.from(p.tensor.data));
    expect(values(trainer)).toEqual(values(reference));
    console.log(`divergent run: ${(error as WeftError).message}`);
    for (const row of values(trainer)) expect(row.every(Number.isFinite)).toBe(true);
  });

  it('skips the update of a step whose gradient is not finite, naming the entry, whole or in shards', () => {
    // Infinity at a padded step (row 1 is 3 steps of 4): the loss never reads it, but the input weights' gradient
    // is Σ x·δ over every step, and Infinity · 0 is NaN (IEEE 754 §7.2), so the gradient is not finite.
    const x = Float32Array.from({ length: 8 }, (_, i) => (i % 3) / 3);
    x[3 * 2 + 1] = Infinity;
    const batch: Batch = {
      input: tensor(x, [4, 2, 1]),
      steps: 4,
      batch: 2,
      lengths: Int32Array.of(4, 3),
      targets: { kind: 'values', perStep: false, width: 1, values: tensor(Float32Array.of(0.5, -0.5), [2, 1]), weights: null },
      positions: 7,
    };
    for (const shardRows of [undefined, 1]) {
      const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 3 }], readout: { width: 1 } }, { seed: 1 });
      const before = model.parameters().map((p) => Array.from(p.tensor.data));
      const events: TrainingEvent[] = [];
      const trainer = new Trainer({
        model,
        data: { batchesPerEpoch: 1, carriesState: false, batch: () => batch },
        optimizer: new AdamRule({ rate: 0.01 }),
        epochs: 1,
        gradientNormLimit: 1,
        onProgress: (e) => events.push(e),
        ...(shardRows === undefined ? {} : { shardRows }),
      });
      const loss = trainer.step();
      expect(Number.isFinite(loss)).toBe(true);
      const skipped = events.filter((e) => e.kind === 'skipped');
      expect(skipped.length, `shardRows ${shardRows}`).toBe(1);
      expect(skipped[0].reason).toBe('non-finite gradient of layers[0].forward.input[0] = NaN; update skipped');
      expect(Number.isNaN(skipped[0].gradientNorm)).toBe(true);
      expect(model.parameters().map((p) => Array.from(p.tensor.data))).toEqual(before);
    }
  });

  it('stops early with patience and restores the best weights; reports progress', async () => {
    const events: TrainingEvent[] = [];
    const model = textModel(4);
    const trainer = new Trainer({
      model,
      data: streamBatches({ kind: 'tokens', tokens: corpus(1500, 'p'), vocabulary: 6 }, { window: 10 }),
      validation: streamBatches({ kind: 'tokens', tokens: corpus(300, 'v'), vocabulary: 6 }, { window: 10 }),
      optimizer: new AdamRule({ rate: 0.3 }),
      epochs: 30,
      validateEvery: 10,
      patience: 2,
      onProgress: (event) => events.push(event),
    });
    const summary = await trainer.run();
    expect(summary.stoppedBy).toBe('patience');
    const validations = events.filter((e) => e.kind === 'validation');
    const best = Math.min(...validations.map((e) => e.validationLoss!));
    expect(summary.bestValidation!.loss).toBe(best);
    expect(trainer.validate().loss).toBe(best);
    const step = events.find((e) => e.kind === 'step')!;
    expect(step.learningRate).toBe(0.3);
    expect(step.gradientNorm).toBeGreaterThan(0);
    expect(step.totalSteps).toBe(30 * 149);
    expect(events.at(-1)!.kind).toBe('finished');
  });

  it('puts back the best validation weights when the epochs run out, and says which step it kept', async () => {
    const make = (keepBest?: boolean) =>
      new Trainer({
        model: textModel(4),
        data: streamBatches({ kind: 'tokens', tokens: corpus(600, 'p'), vocabulary: 6 }, { window: 10 }),
        validation: streamBatches({ kind: 'tokens', tokens: corpus(300, 'v'), vocabulary: 6 }, { window: 10 }),
        // A rate this large makes the validation loss go up and down, so the last validation is rarely the best.
        optimizer: new AdamRule({ rate: 0.3 }),
        epochs: 6,
        validateEvery: 7,
        ...(keepBest === undefined ? {} : { keepBest }),
      });
    const trainer = make();
    const summary = await trainer.run();
    expect(summary.stoppedBy).toBe('epochs');
    expect(trainer.validate().loss).toBe(summary.bestValidation!.loss);
    expect(summary.keptStep).toBeLessThanOrEqual(summary.steps);
    const last = make(false);
    const lastSummary = await last.run();
    expect(lastSummary.keptStep).toBe(lastSummary.steps);
    // Unless the last validation was the best, the two runs end on different weights.
    // With this seed the best validation came before the end (deterministic), so the two runs end apart.
    expect(summary.keptStep).toBeLessThan(summary.steps);
    expect(last.validate().loss).toBeGreaterThan(summary.bestValidation!.loss);
    expect(
      () =>
        new Trainer({
          model: textModel(4),
          data: streamBatches({ kind: 'tokens', tokens: corpus(600, 'p'), vocabulary: 6 }, { window: 10 }),
          optimizer: new AdamRule({ rate: 0.1 }),
          epochs: 1,
          keepBest: 'yes' as unknown as boolean,
        }),
    ).toThrowError(/^Invalid option at trainer\.keepBest/);
  });

  it('honours an abort signal between steps', async () => {
    const controller = new AbortController();
    let seen = 0;
    const trainer = new Trainer({
      model: textModel(5),
      data: streamBatches({ kind: 'tokens', tokens: corpus(1500, 'a'), vocabulary: 6 }, { window: 10 }),
      optimizer: new AdamRule({ rate: 0.01 }),
      epochs: 3,
      signal: controller.signal,
      onProgress: (event) => {
        if (event.kind === 'step' && ++seen === 7) controller.abort();
      },
    });
    const summary = await trainer.run();
    expect(summary.stoppedBy).toBe('signal');
    expect(summary.steps).toBe(7);
  });

  it('refuses the clipping options by their old names instead of training unclipped', () => {
    const options = {
      model: textModel(5),
      data: streamBatches({ kind: 'tokens', tokens: corpus(200, 'a'), vocabulary: 6 }, { window: 10 }),
      optimizer: new AdamRule({ rate: 0.01 }),
      epochs: 1,
    };
    for (const [old, now] of [
      ['clipNorm', 'gradientNormLimit'],
      ['clipValue', 'gradientValueLimit'],
    ]) {
      const error = (() => {
        try {
          return new Trainer({ ...options, [old]: 1 } as TrainerOptions);
        } catch (caught) {
          return caught;
        }
      })();
      expect(error).toBeInstanceOf(WeftError);
      expect((error as WeftError).message).toBe(`Invalid option at trainer.${old}: expected trainer.${now} (the option's name now), received trainer.${old}`);
    }
  });

  it('trains a sequence classifier on padded, masked, bucketed batches', async () => {
    // Label: whether the sequence holds more 1s than 0s (invented task).
    const random = new Random('classify');
    const sequences = Array.from({ length: 240 }, () => {
      const length = 3 + random.integer(10);
      const tokens = Array.from({ length }, () => random.integer(2));
      return { tokens, label: tokens.filter((t) => t === 1).length * 2 > length ? 1 : 0 };
    });
    const model = buildModel(
      { input: { kind: 'embedding', vocabulary: 2, width: 3 }, layers: [{ cell: 'gru', hidden: 8, bidirectional: true }], readout: { width: 2 } },
      { seed: 1 },
    );
    const data = sequenceBatches(sequences.slice(0, 200), { batchSize: 16, seed: 2 });
    const validation = sequenceBatches(sequences.slice(200), { batchSize: 40 });
    const trainer = new Trainer({ model, data, validation, optimizer: new AdamRule({ rate: 0.03 }), epochs: 25 });
    const before = trainer.validate();
    await trainer.run();
    const after = trainer.validate();
    expect(after.metricName).toBe('accuracy');
    expect(after.loss).toBeLessThan(before.loss);
    expect(after.metric).toBeGreaterThan(0.85);
  });

  describe('with an encoder-decoder on pairs', () => {
    // Invented task: write the source's tokens (ids 2–7) in reverse order.
    const pairs = (count: number, seed: string) => {
      const random = new Random(seed);
      return Array.from({ length: count }, () => {
        const source = Array.from({ length: 2 + random.integer(4) }, () => 2 + random.integer(6));
        return { source, target: [...source].reverse() };
      });
    };
    const model = (attention: 'general' | null) =>
      new EncoderDecoderModel(
        {
          kind: 'encoder-decoder',
          attention,
          encoder: { input: { kind: 'embedding', vocabulary: 8, width: 6 }, layers: [{ cell: 'gru', hidden: 16, bidirectional: true }], dropout: 0.1 },
          decoder: { input: { kind: 'embedding', vocabulary: 8, width: 6 }, layers: [{ cell: 'gru', hidden: 16 }], readout: { width: 8 } },
        },
        { seed: 2 },
      );
    const options = (m: EncoderDecoderModel, epochs: number): TrainerOptions => ({
      model: m,
      data: pairBatches(pairs(240, 'train'), { batchSize: 16, startToken: 0, endToken: 1, seed: 1 }),
      validation: pairBatches(pairs(60, 'held out'), { batchSize: 30, startToken: 0, endToken: 1 }),
      optimizer: new AdamRule({ rate: 0.02 }),
      epochs,
      seed: 'pairs',
      gradientNormLimit: 1,
    });

    it('learn by teacher forcing, validated on held-out pairs (accuracy per target token well above chance)', async () => {
      const trainer = new Trainer(options(model('general'), 12));
      const before = trainer.validate();
      const summary = await trainer.run();
      const after = trainer.validate();
      console.log(`reversal with attention: validation loss ${before.loss.toFixed(3)} → ${after.loss.toFixed(3)}, token accuracy ${after.metric.toFixed(3)}`);
      expect(summary.steps).toBe(12 * 15);
      expect(after.loss).toBeLessThan(before.loss / 2);
      // Chance is 1 in 8 per token.
      expect(after.metric).toBeGreaterThan(0.6);
    });

    it('resume from a snapshot bit-identical to an uninterrupted run (dropout on)', () => {
      const whole = new Trainer(options(model('general'), 2));
      while (!whole.finished) whole.step();
      const first = new Trainer(options(model('general'), 2));
      for (let i = 0; i < 17; i++) first.step();
      const saved = JSON.parse(JSON.stringify(first.snapshot()));
      expect(saved.carried).toBe(null);
      const resumed = new Trainer(options(model('general'), 2));
      resumed.restore(saved);
      while (!resumed.finished) resumed.step();
      expect(weights(resumed.model)).toEqual(weights(whole.model));
      expect(() => resumed.restore({ ...saved, carried: [[0, 0]] })).toThrowError(
        'Shape mismatch at snapshot.carried: expected null (an encoder-decoder carries no state), received 1 slots',
      );
    });

    it('refuse batches without sources for an encoder-decoder, and batches of pairs for a sequence model', () => {
      const streams = streamBatches({ kind: 'tokens', tokens: corpus(200, 'x'), vocabulary: 6 }, { window: 5 });
      expect(() => new Trainer({ ...options(model(null), 1), data: streams }).step()).toThrowError(
        'Invalid argument at trainer.batch.source: expected batches of pairs (pairBatches) for an encoder-decoder, received a batch without sources',
      );
      expect(() => new Trainer({ ...options(model(null), 1), model: textModel() }).step()).toThrowError(
        'Invalid argument at trainer.batch.source: expected no sources (batches of pairs train an encoder-decoder), received a batch of pairs',
      );
    });
  });
});
