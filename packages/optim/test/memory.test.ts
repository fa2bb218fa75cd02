/**
 * Truncated BPTT bounds memory by the window, not the stream: the tape's peak buffer bytes (read from its buffer
 * pool, not from timing or the heap) are the same for a stream ten times longer and grow linearly with the window.
 */
import { describe, expect, it } from 'vitest';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';

function peakBytes(streamLength: number, window: number): number {
  const values = Array.from({ length: streamLength }, (_, i) => Math.sin(i / 7) + 0.1 * Math.cos(i / 3));
  const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'lstm', hidden: 8 }], readout: { width: 1 } }, { seed: 1 });
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'values', values, features: 1 }, { window }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: 1,
  });
  while (!trainer.finished) trainer.step();
  return trainer.pool.counts().peakBytesInUse;
}

describe('training memory on a stream', () => {
  it('is the same (± 10%) for a stream of 10,000 and one of 100,000 steps', () => {
    const short = peakBytes(10_000, 20);
    const long = peakBytes(100_000, 20);
    console.log(`tape peak bytes, window 20: stream 10,000 → ${short}, stream 100,000 → ${long}`);
    expect(Math.abs(long / short - 1)).toBeLessThanOrEqual(0.1);
  });

  it('grows linearly with the window', () => {
    const [a, b, c] = [10, 20, 40].map((window) => peakBytes(2_000, window));
    console.log(`tape peak bytes by window 10, 20, 40: ${a}, ${b}, ${c}`);
    // Doubling the window doubles the peak within 10% (a small constant part, the carried state, does not grow).
    expect(b / a).toBeGreaterThan(1.8);
    expect(b / a).toBeLessThan(2.2);
    expect(c / b).toBeGreaterThan(1.8);
    expect(c / b).toBeLessThan(2.2);
  });
});

describe("a long run's buffers", () => {
  it('stop being created after the first epoch: batches, carried state and validation reuse their buffers', async () => {
    // On the WebAssembly backend memory is reclaimed only by giving buffers back, so this is what keeps a long run
    // inside its reservation; the counts below are the pools' own, on whichever backend runs.
    const { defaultBackend } = await import('@weft/core');
    const values = Array.from({ length: 8 * 3000 }, (_, i) => Math.sin(i / 7) + 0.1 * Math.cos(i / 3));
    const model = buildModel({ input: { kind: 'values', width: 8 }, layers: [{ cell: 'gru', hidden: 16 }], readout: { width: 8 } }, { seed: 1 });
    const created: number[] = [];
    const trainer = new Trainer({
      model,
      data: streamBatches({ kind: 'values', values: values.slice(0, 8 * 2400), features: 8 }, { streams: 4, window: 20 }),
      validation: streamBatches({ kind: 'values', values: values.slice(8 * 2400), features: 8 }, { window: 20 }),
      validateEvery: 7,
      optimizer: new AdamRule({ rate: 0.01 }),
      epochs: 12,
      onProgress: (event) => {
        if (event.kind === 'step' && event.step % 30 === 0) created.push(defaultBackend().pool.counts().created + trainer.pool.counts().created);
      },
    });
    await trainer.run();
    // 30 steps an epoch: every count after the first two epochs equals the one before it.
    expect(created.length).toBeGreaterThan(8);
    expect(new Set(created.slice(2)).size).toBe(1);
  });
});
