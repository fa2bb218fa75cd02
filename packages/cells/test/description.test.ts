import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { buildModel, checkDescription, describeAnyProblems, describeProblems, isEncoderDecoder } from '@weft/cells';

function problemsOf(run: () => unknown): WeftError {
  try {
    run();
  } catch (error) {
    if (error instanceof WeftError) return error;
    throw error;
  }
  throw new Error('expected a WeftError');
}

describe('model descriptions', () => {
  it('lists every problem of a description, with paths, including an unknown cell kind', () => {
    const error = problemsOf(() =>
      buildModel({
        input: { kind: 'values', width: 0 },
        layers: [
          { cell: 'lstm', hidden: 4, activation: 'relu' },
          { cell: 'transformer', hidden: 8 },
        ],
        dropout: 1.5,
      }),
    );
    expect(error.problems.map((p) => `${p.path}: ${p.received}`)).toEqual([
      'description.input.width: 0',
      'description.layers[0].activation: "relu"',
      'description.layers[1].cell: "transformer"',
      'description.dropout: 1.5',
    ]);
    expect(error.message).toContain("Invalid option at description.layers[1].cell: expected one of 'lstm', 'gru', 'plain', received \"transformer\"");
  });

  it('pass a good description through unchanged, and refuse a field of no layer kind by its path', () => {
    const good = {
      input: { kind: 'embedding', vocabulary: 9, width: 4 },
      layers: [{ cell: 'gru', hidden: 8, resetAfterProduct: true }],
      dropout: 0.1,
      readout: { width: 9 },
    };
    expect(checkDescription(good)).toEqual(good);
    expect(describeProblems({ ...good, layers: [{ cell: 'gru', hidden: 8, peepholes: true }] }).map((p) => p.path)).toEqual([
      'description.layers[0].peepholes',
    ]);
    expect(describeProblems({ ...good, extra: 1 }).map((p) => p.path)).toEqual(['description.extra']);
  });

  it('tell an encoder-decoder from a sequence model, and check both halves of one', () => {
    const half = { input: { kind: 'embedding', vocabulary: 5, width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }] };
    const pair = { kind: 'encoder-decoder', encoder: half, decoder: { ...half, readout: { width: 5 } } };
    expect([isEncoderDecoder(pair), isEncoderDecoder(half)]).toEqual([true, false]);
    expect(describeAnyProblems(pair)).toEqual([]);
    const mismatched = { ...pair, decoder: { ...pair.decoder, layers: [{ cell: 'gru', hidden: 4 }] } };
    expect(describeAnyProblems(mismatched).map((p) => `${p.path}: expected ${p.expected}, received ${p.received}`)).toEqual([
      "description.decoder.layers[0]: expected a lstm layer of 4 (as the encoder's), received gru of 4",
    ]);
  });

  it('take a reverse layer, but not one that is also bidirectional', () => {
    const base = { input: { kind: 'values', width: 2 } };
    expect(describeProblems({ ...base, layers: [{ cell: 'plain', hidden: 3, reverse: true }] })).toEqual([]);
    expect(
      describeProblems({ ...base, layers: [{ cell: 'plain', hidden: 3, reverse: true, bidirectional: true }] }).map((p) => `${p.path}: expected ${p.expected}`),
    ).toEqual(['description.layers[0].reverse: expected not with bidirectional']);
  });
});
