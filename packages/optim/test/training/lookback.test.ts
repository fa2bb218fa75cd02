/**
 * Truncated BPTT with k2 > k1 (Williams & Peng 1990, BPTT(k2; k1)): windows of k1 new steps that re-read a
 * lookback of k2 − k1 earlier steps, with no loss there, so the reverse sweep reaches further back than each
 * update moves forward.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, reshape, crossEntropyAtTargets } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';

/** Blocks of six random symbols, each followed by a copy of itself: the copy needs a memory six steps long. */
function copies(blocks: number, seed: string): Int32Array {
  const random = new Random(seed);
  const out: number[] = [];
  for (let b = 0; b < blocks; b++) {
    const block = Array.from({ length: 6 }, () => random.integer(4));
    out.push(...block, ...block);
  }
  return Int32Array.from(out);
}

describe('truncated backpropagation with a lookback (k2 > k1)', () => {
  it('lays windows out with the lookback in front, weight 0 there, and the carried state k1 steps in', () => {
    const tokens = Int32Array.from({ length: 41 }, (_, i) => i % 7);
    const source = streamBatches({ kind: 'tokens', tokens, vocabulary: 7 }, { streams: 2, window: 4, lookback: 3 });
    // 40 pairs, 20 per stream, 5 windows of 4 new steps.
    expect(source.batchesPerEpoch).toBe(5);
    const first = source.batch(0, 0);
    expect([first.steps, first.carryAfter, first.targets.kind === 'classes' ? first.targets.weights : 'x']).toEqual([4, 1, null]);
    const second = source.batch(0, 1);
    // Window 1 covers positions 1..7 of each stream: 3 looked back (weight 0) and 4 new.
    expect(second.steps).toBe(7);
    expect(second.carryAfter).toBe(4);
    expect(second.input).toMatchObject({ steps: 7, batch: 2 });
    expect(Array.from((second.input as { tokens: Int32Array }).tokens.subarray(0, 4))).toEqual([tokens[1], tokens[21], tokens[2], tokens[22]]);
    expect(second.targets.kind === 'classes' && Array.from(second.targets.weights!)).toEqual([0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 1, 1]);
    expect(() => streamBatches({ kind: 'tokens', tokens, vocabulary: 7 }, { window: 4, lookback: 5 })).toThrowError(
      'Invalid option at stream.lookback: expected a whole number from 0 to the window (4), received 5',
    );
  });

  it('computes the same loss in two pieces as in one run over the window', () => {
    const tokens = copies(40, 'same');
    const model = buildModel(
      { input: { kind: 'embedding', vocabulary: 4, width: 3 }, layers: [{ cell: 'gru', hidden: 6 }], readout: { width: 4 } },
      { seed: 2 },
    );
    const source = streamBatches({ kind: 'tokens', tokens, vocabulary: 4 }, { streams: 3, window: 5, lookback: 2 });
    const batch = source.batch(0, 0);
    expect(batch.carryAfter).toBe(3);
    const tape = new Tape({ recording: false });
    const { outputs } = model.run(tape, batch.input);
    const expected = crossEntropyAtTargets(tape, reshape(tape, outputs, [batch.steps * batch.batch, 4]), (batch.targets as { classes: Int32Array }).classes)
      .data[0];
    const trainer = new Trainer({ model, data: source, optimizer: new AdamRule({ rate: 0.01 }), epochs: 1 });
    expect(trainer.step()).toBe(expected);
  });

  it('learns a six-step copy that windows of four cannot teach without it', () => {
    const accuracy = (lookback: number): number => {
      const model = buildModel(
        { input: { kind: 'embedding', vocabulary: 4, width: 4 }, layers: [{ cell: 'lstm', hidden: 32 }], readout: { width: 4 } },
        { seed: 1 },
      );
      const trainer = new Trainer({
        model,
        data: streamBatches({ kind: 'tokens', tokens: copies(800, 'train'), vocabulary: 4 }, { streams: 8, window: 4, lookback }),
        validation: streamBatches({ kind: 'tokens', tokens: copies(200, 'check'), vocabulary: 4 }, { window: 12 }),
        optimizer: new AdamRule({ rate: 0.01 }),
        epochs: 4,
        gradientNormLimit: 1,
      });
      while (!trainer.finished) trainer.step();
      return trainer.validate().metric;
    };
    const without = accuracy(0);
    const withLookback = accuracy(4);
    // Chance is 0.25; a perfect copier reaches 0.625 (the first copy of each block cannot be predicted).
    console.log(`copy task, held-out accuracy: k1 = k2 = 4: ${without.toFixed(3)}; k1 = 4, k2 = 8: ${withLookback.toFixed(3)}`);
    expect(withLookback).toBeGreaterThan(without + 0.08);
  });
});
