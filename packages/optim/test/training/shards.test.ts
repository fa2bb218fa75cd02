/**
 * Fixed shards (training/shards.ts): the cut depends on the batch alone; a shard travels as plain arrays and comes
 * back the same batch; and the shards' gradients, each scaled by its share of the loss weight, add up to the
 * whole batch's gradient (the gradient of a weighted mean is the weighted sum of its parts' gradients: common
 * practice), here within f64 rounding on a ragged, masked batch of a sequence model with carried rows.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, Tensor, randomUniform } from '@weft/core';
import { buildModel } from '@weft/cells';
import { batchOf, lossWeight, shardGradients, shardOf, shardRanges } from '@weft/optim/internal';
import type { Batch } from '@weft/optim';
import type { FloatArray } from '@weft/core';

const random = new Random('shards');
const lengths = Int32Array.of(5, 3, 4, 1, 5);
const batch: Batch = {
  input: randomUniform([5, 5, 3], random, -1, 1, 'f64'),
  steps: 5,
  batch: 5,
  lengths,
  targets: { kind: 'classes', perStep: true, classes: Int32Array.from({ length: 25 }, () => random.integer(4)), weights: null },
  positions: 18,
};

describe('fixed shards of a batch', () => {
  it('cut rows into shards of the given size whatever computes them, the last one smaller', () => {
    expect(shardRanges(5, 2)).toEqual([
      [0, 2],
      [2, 4],
      [4, 5],
    ]);
    expect(shardRanges(32, 8)).toHaveLength(4);
    expect(lossWeight(batch)).toBe(18);
  });

  it('travel as plain arrays and come back as the same rows', () => {
    const made: FloatArray[] = [];
    const shard = batchOf(shardOf(batch, 1, 3), 'f64', new Tape().pool, made);
    expect([shard.steps, shard.batch, Array.from(shard.lengths!), shard.positions]).toEqual([5, 2, [3, 4], 7]);
    const input = shard.input as Tensor;
    const whole = batch.input as Tensor;
    for (let t = 0; t < 5; t++)
      for (let b = 0; b < 2; b++) for (let f = 0; f < 3; f++) expect(input.data[(t * 2 + b) * 3 + f]).toBe(whole.data[(t * 5 + b + 1) * 3 + f]);
    if (shard.targets.kind !== 'classes' || batch.targets.kind !== 'classes') throw new Error('classes expected');
    for (let t = 0; t < 5; t++)
      expect([shard.targets.classes[t * 2], shard.targets.classes[t * 2 + 1]]).toEqual([batch.targets.classes[t * 5 + 1], batch.targets.classes[t * 5 + 2]]);
  });

  it("give gradients that add up to the whole batch's, within f64 rounding", () => {
    const model = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 4 } }, { seed: 2, dtype: 'f64' });
    const parameters = model.parameters().map((p) => p.tensor);
    const tape = new Tape();
    const state = model.stateSlots().map((slot) => randomUniform([5, slot.width], random, -0.5, 0.5, 'f64'));
    const whole = shardGradients(model, parameters, tape, batch, state, 'seed', 1);
    const expected = parameters.map((p) => Float64Array.from(p.gradient!));
    const sums = parameters.map((p) => new Float64Array(p.size));
    let loss = 0;
    for (const [from, to] of shardRanges(5, 2)) {
      const made: FloatArray[] = [];
      const shard = batchOf(shardOf(batch, from, to), 'f64', tape.pool, made);
      const rows = state.map((s) => new Tensor(s.data.slice(from * s.shape[1], to * s.shape[1]), [to - from, s.shape[1]]));
      loss += shardGradients(model, parameters, tape, shard, rows, 'seed', lossWeight(shard) / lossWeight(batch)).loss;
      parameters.forEach((p, i) => p.gradient!.forEach((g, k) => (sums[i][k] += g)));
    }
    expect(Math.abs(loss - whole.loss)).toBeLessThan(1e-12);
    expected.forEach((g, i) => g.forEach((value, k) => expect(Math.abs(sums[i][k] - value)).toBeLessThan(1e-12)));
  });

  it("cut weights per target value with their rows, and the shards' gradients still add up to the whole batch's", () => {
    const model = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 2 } }, { seed: 3, dtype: 'f64' });
    const parameters = model.parameters().map((p) => p.tensor);
    const tape = new Tape();
    const weights = Float64Array.of(1, 0, 1, 1, 0, 1, 1, 1, 0, 0);
    const valued: Batch = { ...batch, targets: { kind: 'values', perStep: false, width: 2, values: randomUniform([5, 2], random, -1, 1, 'f64'), weights } };
    const state = model.stateSlots().map((slot) => randomUniform([5, slot.width], random, -0.5, 0.5, 'f64'));
    const whole = shardGradients(model, parameters, tape, valued, state, 'seed', 1);
    const expected = parameters.map((p) => Float64Array.from(p.gradient!));
    const sums = parameters.map((p) => new Float64Array(p.size));
    let loss = 0;
    for (const [from, to] of shardRanges(5, 2)) {
      const made: FloatArray[] = [];
      const shard = batchOf(shardOf(valued, from, to), 'f64', tape.pool, made);
      expect(shard.targets.weights === null ? [] : Array.from(shard.targets.weights)).toEqual(Array.from(weights.subarray(2 * from, 2 * to)));
      const rows = state.map((s) => new Tensor(s.data.slice(from * s.shape[1], to * s.shape[1]), [to - from, s.shape[1]]));
      loss += shardGradients(model, parameters, tape, shard, rows, 'seed', lossWeight(shard) / lossWeight(valued)).loss;
      parameters.forEach((p, i) => p.gradient!.forEach((g, k) => (sums[i][k] += g)));
    }
    expect(Math.abs(loss - whole.loss)).toBeLessThan(1e-12);
    expected.forEach((g, i) => g.forEach((value, k) => expect(Math.abs(sums[i][k] - value)).toBeLessThan(1e-12)));
  });
});
