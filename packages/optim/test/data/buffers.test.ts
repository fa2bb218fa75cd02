/**
 * Batch buffers are given back before the next batch is made, so a long run reuses the same few: a 1,000-step run on
 * each kind of source makes no typed array after its first epoch and leaves its pools where they were.
 */
import { describe, expect, it } from 'vitest';
import { defaultBackend, zeros } from '@weft/core';
import type { PoolCounts } from '@weft/core/internal';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, sequenceBatches, streamBatches } from '@weft/optim';
import type { DataSource } from '@weft/optim';
import { BatchBuffers } from '../../src/data/buffers.js';

describe('batch buffers', () => {
  it('give what they kept back to its pool when recycled, so the next batch takes the same arrays', () => {
    const pool = defaultBackend().pool;
    const buffers = new BatchBuffers();
    const kept = buffers.keep(zeros([3, 5], 'f32', pool));
    const before = pool.counts().bytesInUse;
    buffers.recycle();
    expect(pool.counts().bytesInUse).toBe(before - 60);
    expect(pool.take('f32', 15)).toBe(kept.data);
  });
});

/**
 * Counts the typed arrays `body` makes, by standing counting proxies in for the typed-array constructors (and
 * their `from`/`of`) on the global object while it runs: every `new Float32Array(…)` in weft resolves them there.
 */
function typedArraysMadeBy(body: () => void): number {
  const names = ['Float32Array', 'Float64Array', 'Int32Array', 'Uint8Array', 'Uint32Array', 'Int8Array', 'Uint16Array'] as const;
  const globals = globalThis as unknown as Record<string, unknown>;
  const originals = names.map((name) => globals[name]);
  let made = 0;
  names.forEach((name, i) => {
    const original = originals[i] as new (...args: unknown[]) => unknown;
    globals[name] = new Proxy(original, {
      construct(target, args, newTarget) {
        made++;
        return Reflect.construct(target, args, newTarget) as object;
      },
      get(target, key, receiver) {
        const value = Reflect.get(target, key, receiver) as unknown;
        if ((key === 'from' || key === 'of') && typeof value === 'function') {
          return (...args: unknown[]) => {
            made++;
            return (value as (...a: unknown[]) => unknown).apply(target, args);
          };
        }
        return value;
      },
    });
  });
  try {
    body();
  } finally {
    names.forEach((name, i) => {
      globals[name] = originals[i];
    });
  }
  return made;
}

describe('a 1,000-step run', () => {
  const series = Array.from({ length: 4 * 20_000 }, (_, i) => Math.sin(i / 7) + 0.1 * Math.cos(i / 3));
  const corpus = Int32Array.from({ length: 20_000 }, (_, i) => (i * 7 + (i >> 3)) % 5);
  const sequences = Array.from({ length: 200 }, (_, i) => ({ values: series.slice(4 * i, 4 * (i + 3 + (i % 7))), label: i % 3 }));
  const cases: [string, () => DataSource, 'values' | 'tokens' | 'classes'][] = [
    ['a value stream', () => streamBatches({ kind: 'values', values: series, features: 4 }, { streams: 2, window: 10 }), 'values'],
    ['a value stream with a lookback', () => streamBatches({ kind: 'values', values: series, features: 4 }, { streams: 2, window: 10, lookback: 5 }), 'values'],
    ['a token stream', () => streamBatches({ kind: 'tokens', tokens: corpus, vocabulary: 5 }, { streams: 2, window: 10 }), 'tokens'],
    ['padded sequences with labels', () => sequenceBatches(sequences, { batchSize: 8, features: 4 }), 'classes'],
  ];
  for (const [name, source, kind] of cases) {
    it(`on ${name} keeps its pools' counts and the number of typed arrays flat after the first epoch`, () => {
      const model =
        kind === 'tokens'
          ? buildModel({ input: { kind: 'embedding', vocabulary: 5, width: 4 }, layers: [{ cell: 'lstm', hidden: 8 }], readout: { width: 5 } }, { seed: 1 })
          : buildModel(
              { input: { kind: 'values', width: 4 }, layers: [{ cell: 'gru', hidden: 8 }], readout: { width: kind === 'classes' ? 3 : 4 } },
              { seed: 1 },
            );
      const data = source();
      const trainer = new Trainer({ model, data, optimizer: new AdamRule({ rate: 0.01 }), epochs: 2000 });
      const perEpoch = data.batchesPerEpoch;
      const counts = (): { trainer: PoolCounts; shared: PoolCounts } => ({ trainer: trainer.pool.counts(), shared: defaultBackend().pool.counts() });
      // The buffers held between steps (the batch being trained on) differ with the batch, so what is in use is
      // compared with the most the first epoch had in use; what was ever created must not move at all.
      let firstEpochPeak = 0;
      for (let i = 0; i < perEpoch; i++) {
        trainer.step();
        firstEpochPeak = Math.max(firstEpochPeak, counts().shared.bytesInUse + counts().trainer.bytesInUse);
      }
      const after = counts();
      let laterPeak = 0;
      // Whole epochs, so the comparison is between the same places in the batch order.
      const epochs = Math.ceil((1000 - perEpoch) / perEpoch);
      const made = typedArraysMadeBy(() => {
        for (let i = 0; i < epochs * perEpoch; i++) {
          trainer.step();
          laterPeak = Math.max(laterPeak, counts().shared.bytesInUse + counts().trainer.bytesInUse);
        }
      });
      const end = counts();
      expect(trainer.stepsTaken).toBeGreaterThanOrEqual(1000);
      expect(made).toBe(0);
      expect(end.trainer.created).toBe(after.trainer.created);
      expect(end.shared.created).toBe(after.shared.created);
      expect(laterPeak).toBeLessThanOrEqual(firstEpochPeak);
      // On streams every batch has the same shape, so the bytes in use are exactly those after the first epoch.
      if (kind !== 'classes') expect(end.shared.bytesInUse + end.trainer.bytesInUse).toBe(after.shared.bytesInUse + after.trainer.bytesInUse);
    });
  }
});
