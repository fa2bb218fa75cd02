/**
 * The layout computed from a description alone names every parameter a built model has, in the same order and
 * with the same shapes, and gives each layer's widths: for every built-in cell and option, stacked and
 * bidirectional layers, embedding or value inputs, with and without a readout, and encoder-decoders.
 */
import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel, buildModel, modelLayout, parameterLayout } from '@weft/cells';
import type { ModelDescription } from '@weft/cells';

const descriptions: Record<string, ModelDescription> = {
  'an LSTM with peepholes over values, with a readout': {
    input: { kind: 'values', width: 3 },
    layers: [{ cell: 'lstm', hidden: 5, peepholes: true }],
    readout: { width: 2 },
  },
  'a stack of a bidirectional GRU (reset after) and a plain ReLU layer over an embedding': {
    input: { kind: 'embedding', vocabulary: 9, width: 4 },
    layers: [
      { cell: 'gru', hidden: 6, bidirectional: true, resetAfterProduct: true },
      { cell: 'plain', hidden: 3, activation: 'relu' },
    ],
    readout: { width: 9 },
  },
  'three layers of every cell, no readout': {
    input: { kind: 'values', width: 2 },
    layers: [
      { cell: 'plain', hidden: 4 },
      { cell: 'gru', hidden: 3 },
      { cell: 'lstm', hidden: 2, bidirectional: true },
    ],
  },
};

describe('the layout of a description', () => {
  for (const [label, description] of Object.entries(descriptions)) {
    it(`names the parameters a built model has, in order and shape: ${label}`, () => {
      const model = buildModel(description, { seed: 1 });
      const layout = modelLayout(description);
      expect(layout.builtIn).toBe(true);
      expect(layout.parameters.map((p) => `${p.name} [${p.shape.join(', ')}]`)).toEqual(
        model.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`),
      );
      expect(layout.outputWidth).toBe(model.outputWidth);
    });
  }

  it('gives each layer its input and output width (two directions double it)', () => {
    expect(modelLayout(descriptions['a stack of a bidirectional GRU (reset after) and a plain ReLU layer over an embedding']).layers).toEqual([
      { inputWidth: 4, outputWidth: 12 },
      { inputWidth: 12, outputWidth: 3 },
    ]);
  });

  it("names an encoder-decoder's parameters encoder first, then decoder, as the model does", () => {
    const description = {
      kind: 'encoder-decoder' as const,
      encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'lstm' as const, hidden: 4 }] },
      decoder: { input: { kind: 'embedding' as const, vocabulary: 7, width: 3 }, layers: [{ cell: 'lstm' as const, hidden: 4 }], readout: { width: 7 } },
    };
    const model = new EncoderDecoderModel(description, { seed: 2 });
    expect(parameterLayout(description).parameters.map((p) => `${p.name} [${p.shape.join(', ')}]`)).toEqual(
      model.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`),
    );
  });

  it("says when a layer's cell is not built in, so its parameters cannot be known from the description", () => {
    expect(modelLayout({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'mine' as 'lstm', hidden: 3 }] }).builtIn).toBe(false);
  });
});
