import { describe, expect, it } from 'vitest';
import { Tape, defaultBackend, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import { streamBatches } from '@weft/optim';
import { figuresOn, forEachOutputBatch } from '@weft/optim/internal';

// One stream of 61 rows, windows of 12: evaluating window by window with the state carried must equal one run of
// the model over the first 60 rows at once (the targets are rows 1–60).
const series = Array.from({ length: 61 }, (_, i) => Math.sin(i / 4));
const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'lstm', hidden: 6 }], readout: { width: 1 } }, { seed: 3 });

describe('the evaluation loop', () => {
  it('gives the mean squared and absolute error of one whole-sequence run (direct formula), state carried across windows', () => {
    const whole = model.run(new Tape({ recording: false }), tensor(series.slice(0, 60), [60, 1, 1])).outputs.data;
    let squared = 0;
    let absolute = 0;
    for (let t = 0; t < 60; t++) {
      squared += (whole[t] - series[t + 1]) ** 2;
      absolute += Math.abs(whole[t] - series[t + 1]);
    }
    const result = figuresOn(model, streamBatches({ kind: 'values', values: series, features: 1 }, { window: 12 }));
    expect(result.metricName).toBe('meanAbsoluteError');
    expect(Math.abs(result.loss - squared / 60)).toBeLessThanOrEqual(1e-6 * Math.max(1, squared / 60));
    expect(Math.abs(result.metric - absolute / 60)).toBeLessThanOrEqual(1e-6 * Math.max(1, absolute / 60));
    expect(result.perplexity).toBe(result.loss);
  });

  it('visits every batch with its loss positions, and gives the carried state back to the pool', () => {
    const pool = defaultBackend().pool;
    const source = streamBatches({ kind: 'values', values: series, features: 1 }, { window: 12 });
    source.batch(0, 0);
    const before = pool.counts().bytesInUse;
    const rows: number[] = [];
    forEachOutputBatch(model, source, (_batch, visited) => rows.push(visited.rows * visited.width));
    expect(rows).toEqual([12, 12, 12, 12, 12]);
    // The source still holds its last batch's buffers, as it held the first's before: the same bytes.
    expect(pool.counts().bytesInUse).toBe(before);
  });
});
