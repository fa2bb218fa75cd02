import { describe, expect, it } from 'vitest';
import { Random, Tape, tensor, zeros } from '@weft/core';
import { LstmCell, buildModel, runBidirectional, runReversed, runSequence } from '@weft/cells';
import { cellCases, f64Input } from './helpers.js';

const T = 6;
const B = 3;
const I = 4;
const H = 5;
const lengths = Int32Array.of(6, 4, 0);

describe('sequence layers', () => {
  const model = buildModel({
    input: { kind: 'values', width: 3 },
    layers: [
      { cell: 'lstm', hidden: 4 },
      { cell: 'gru', hidden: 2, bidirectional: true },
    ],
  });
  const tape = new Tape();

  it('zeroes the outputs beyond each row length and holds the state from the last valid step', () => {
    const { make } = cellCases[0];
    const cell = make('fused', I, H, 3);
    const random = new Random('ragged');
    const inputs = f64Input(random, [T, B, I], 'inputs');
    const tape = new Tape();
    const ragged = runSequence(tape, cell, inputs, { lengths });
    // Row 1 has length 4: run it alone over its first 4 steps and compare.
    const alone = f64Input(random, [4, 1, I], 'alone');
    for (let t = 0; t < 4; t++) for (let j = 0; j < I; j++) alone.data[t * I + j] = inputs.data[(t * B + 1) * I + j];
    const single = runSequence(tape, cell, alone);
    for (let t = 0; t < T; t++) {
      for (let j = 0; j < H; j++) {
        const value = ragged.outputs.data[(t * B + 1) * H + j];
        if (t < 4) expect(value).toBe(single.outputs.data[t * H + j]);
        else expect(value).toBe(0);
      }
    }
    for (let j = 0; j < H; j++) expect(ragged.state[0].data[1 * H + j]).toBe(single.state[0].data[j]);
    // Row 2 has length 0: all outputs zero and the final state is the (zero) initial state.
    for (let t = 0; t < T; t++) for (let j = 0; j < H; j++) expect(ragged.outputs.data[(t * B + 2) * H + j]).toBe(0);
    for (let j = 0; j < H; j++) expect(ragged.state[1].data[2 * H + j]).toBe(0);
  });

  it('names the state slot for a wrong state shape', () => {
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4]), zeros([2, 5]), zeros([2, 2]), zeros([2, 2])] })).toThrowError(
      'Shape mismatch at layers[0].initialState.c: expected [2, 4], received [2, 5]',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4])] })).toThrowError(
      'Invalid argument at model.initialState: expected 4 tensors (layers[0].forward.h, layers[0].forward.c, layers[1].forward.h, layers[1].backward.h), received 1',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { initialState: [zeros([2, 4]), zeros([2, 4]), zeros([2, 2]), zeros([3, 2])] })).toThrowError(
      'Shape mismatch at layers[1].backward.initialState.h: expected [2, 2], received [3, 2]',
    );
  });

  it('refuses a length beyond T or below 0, and a lengths array of the wrong size', () => {
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [5, 6] })).toThrowError(
      'Invalid argument at model.lengths[1]: expected a whole number in [0, 5], received 6',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [-1, 2] })).toThrowError(
      'Invalid argument at model.lengths[0]: expected a whole number in [0, 5], received -1',
    );
    expect(() => model.run(tape, zeros([5, 2, 3]), { lengths: [5, 5, 5] })).toThrowError(
      'Shape mismatch at model.lengths: expected 2 lengths (one per batch row), received 3',
    );
    const cell = new LstmCell({ inputWidth: 3, hidden: 4 });
    expect(() => runSequence(tape, cell, zeros([5, 2, 3]), { lengths: Int32Array.of(1, 2, 3) }, 'layers[0]')).toThrowError(
      'Shape mismatch at layers[0].lengths: expected 2 lengths (one per batch row), received 3',
    );
  });

  it('refuses a dtype mismatch between input and cell', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 4, dtype: 'f64' });
    expect(() => runSequence(tape, cell, tensor(new Array(6).fill(0), [1, 2, 3]), {}, 'layers[0]')).toThrowError(
      'Dtype mismatch at layers[0].inputs: expected f64, received f32',
    );
  });

  it('runs a reverse layer as the backward half of a bidirectional one: same outputs, same final state', () => {
    const random = new Random('reverse');
    const cell = new LstmCell({ inputWidth: 3, hidden: 2, random: 4 });
    const other = new LstmCell({ inputWidth: 3, hidden: 2, random: 5 });
    const inputs = tensor(
      Float32Array.from({ length: 5 * 3 * 3 }, () => random.between(-1, 1)),
      [5, 3, 3],
    );
    const lengths = Int32Array.of(5, 2, 0);
    const both = runBidirectional(new Tape(), other, cell, inputs, { lengths });
    const alone = runReversed(new Tape(), cell, inputs, { lengths });
    for (let p = 0; p < 15; p++) for (let j = 0; j < 2; j++) expect(alone.outputs.data[p * 2 + j]).toBe(both.outputs.data[p * 4 + 2 + j]);
    expect(Array.from(alone.state[0].data)).toEqual(Array.from(both.state[2].data));
    const model = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'gru', hidden: 2, reverse: true }] });
    expect(model.parameters().map((p) => p.name)).toEqual([
      'layers[0].backward.input',
      'layers[0].backward.bias',
      'layers[0].backward.recurrent',
      'layers[0].backward.recurrentCandidate',
    ]);
    expect(model.stateSlots().map((s) => s.path)).toEqual(['layers[0].backward.h']);
  });
});
