/**
 * Encoder-decoders, with and without attention. Outside checks: central finite differences in f64 (checkGradients)
 * through every parameter, for each attention form (Luong, Pham & Manning 2015; Bahdanau, Cho & Bengio 2015) with
 * ragged sources, a bidirectional encoder, a two-layer decoder and masked targets; and the attentional logits
 * recomputed here from Luong et al.'s eqs. 5–8 in plain loops from the encoder's outputs and the decoder's states.
 */
import { describe, expect, it } from 'vitest';
import { Tape, checkGradients, crossEntropyAtTargets, reshape } from '@weft/core';
import { EncoderDecoderModel, parameterLayout } from '@weft/cells';
import { decoderStart, reverseTokens } from '@weft/cells/internal';
import type { AttentionForm, EncoderDecoderDescription } from '@weft/cells';

const description = {
  kind: 'encoder-decoder' as const,
  encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }] },
  decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 5 } },
};
// Two sources of lengths 3 and 2 (time-major), and target inputs of 2 steps.
const source = { tokens: Int32Array.of(1, 4, 2, 5, 3, 0), steps: 3, batch: 2 };
const targetInput = { tokens: Int32Array.of(0, 0, 2, 3), steps: 2, batch: 2 };

describe('encoder-decoder models', () => {
  it("name the encoder's parameters encoder.… and the decoder's decoder.…, and give logits [T_target, B, V]", () => {
    const model = new EncoderDecoderModel(description, { seed: 4 });
    const names = model.parameters().map((p) => p.name);
    expect(names[0]).toBe('encoder.embedding.table');
    expect(names).toContain('decoder.layers[0].forward.recurrentCandidate');
    const run = model.run(new Tape({ recording: false }), source, [3, 2], targetInput);
    expect(run.outputs.shape).toEqual([2, 2, 5]);
    expect(run.encoded).toHaveLength(1);
  });

  it('reverse each source row within its length (Sutskever, Vinyals & Le 2014), leaving padding where it was', () => {
    // Time-major: rows (1, 2, 3) and (4, 5) become (3, 2, 1) and (5, 4), the padding 0 stays at step 2 of row 1.
    expect(Array.from(reverseTokens(source, [3, 2]).tokens)).toEqual([3, 5, 2, 4, 1, 0]);
  });

  it('give the teacher-forced loss the gradients of finite differences through both halves (f64)', () => {
    const model = new EncoderDecoderModel(description, { seed: 4, dtype: 'f64' });
    const report = checkGradients(
      (tape) => {
        const { outputs } = model.run(tape, source, [3, 2], targetInput, [2, 1]);
        return crossEntropyAtTargets(tape, reshape(tape, outputs, [4, 5]), [2, 3, 1, 0], { weights: [1, 1, 1, 0] });
      },
      model.parameters().map((p) => p.tensor),
      { tolerance: 1e-6 },
    );
    if (!report.passed) throw new Error(report.text());
    expect(report.passed).toBe(true);
  });

  it('refuse a description that is not an encoder-decoder, and batches of two sizes', () => {
    expect(() => new EncoderDecoderModel(description.encoder)).toThrowError(
      /^Invalid option at description\.kind: expected 'encoder-decoder', received nothing/,
    );
    const model = new EncoderDecoderModel(description);
    expect(() => model.run(new Tape(), source, null, { tokens: Int32Array.of(0, 0, 0), steps: 1, batch: 3 })).toThrowError(
      'Shape mismatch at encoderDecoder.targetInput.batch: expected 2 (the source batch), received 3',
    );
  });

  it('refuse an unknown attention form, and dot attention between unequal widths, naming the field', () => {
    expect(() => new EncoderDecoderModel({ ...description, attention: 'cosine' })).toThrowError(
      /description\.attention: expected 'dot', 'general', 'additive' or null, received "cosine"/,
    );
    const wide = { ...description, attention: 'dot', encoder: { ...description.encoder, layers: [{ cell: 'gru', hidden: 4, bidirectional: true }] } };
    expect(() => new EncoderDecoderModel(wide)).toThrowError(/dot needs the encoder's output width 8 to equal the decoder's hidden size 4/);
  });
});

/** A bidirectional two-layer LSTM encoder and a two-layer LSTM decoder, with the given attention. */
function attentive(attention: AttentionForm, reverseSource = false): EncoderDecoderDescription {
  const layers = (bidirectional: boolean) => [
    { cell: 'lstm', hidden: 3, bidirectional },
    { cell: 'lstm', hidden: 3, bidirectional },
  ];
  return {
    kind: 'encoder-decoder',
    attention,
    reverseSource,
    // dot needs the encoder's output width (6 when bidirectional) to equal the decoder's hidden size (3).
    encoder: { input: { kind: 'embedding', vocabulary: 6, width: 3 }, layers: layers(attention !== 'dot') },
    decoder: { input: { kind: 'embedding', vocabulary: 5, width: 2 }, layers: layers(false), readout: { width: 5 } },
  };
}

// Three sources of lengths 4, 2 and 3 (time-major), target inputs of 3 steps with lengths 3, 1 and 2.
const sources = { tokens: Int32Array.of(1, 4, 2, 5, 3, 3, 2, 0, 1, 4, 0, 0), steps: 4, batch: 3 };
const targets = { tokens: Int32Array.of(0, 0, 0, 2, 0, 3, 1, 0, 0), steps: 3, batch: 3 };
const sourceLengths = [4, 2, 3];
const targetLengths = [3, 1, 2];

describe('encoder-decoders with attention', () => {
  for (const [form, reverseSource] of [
    ['dot', false],
    ['general', false],
    ['additive', false],
    ['general', true],
  ] as const) {
    it(`give the ${form} form${reverseSource ? ' (source reversed)' : ''} the gradients of finite differences for every parameter, with ragged sources and masked targets (f64)`, () => {
      const model = new EncoderDecoderModel(attentive(form, reverseSource), { seed: 7, dtype: 'f64' });
      const report = checkGradients(
        (tape) => {
          const { outputs } = model.run(tape, sources, sourceLengths, targets, targetLengths);
          return crossEntropyAtTargets(tape, reshape(tape, outputs, [9, 5]), [2, 1, 4, 3, 0, 1, 1, 0, 0], { weights: [1, 1, 1, 1, 0, 1, 1, 0, 0] });
        },
        model.parameters().map((p) => p.tensor),
        { tolerance: 1e-6 },
      );
      if (!report.passed) throw new Error(report.text());
      expect(report.passed).toBe(true);
    });
  }

  it('have the parameters the layout names, in its order (attention.keys, query, vector, combine last)', () => {
    for (const form of ['dot', 'general', 'additive'] as const) {
      const model = new EncoderDecoderModel(attentive(form));
      const layout = parameterLayout(model.description).parameters;
      expect(model.parameters().map((p) => [p.name, p.tensor.shape])).toEqual(layout.map((p) => [p.name, p.shape]));
    }
    expect(
      parameterLayout(attentive('additive'))
        .parameters.slice(-4)
        .map((p) => `${p.name} [${p.shape.join(', ')}]`),
    ).toEqual(['attention.keys [6, 3]', 'attention.query [3, 3]', 'attention.vector [3]', 'attention.combine [9, 3]']);
  });

  it('compute the logits of Luong et al. 2015, eqs. 5–8, recomputed here in plain loops, and weights that sum to 1 over each source', () => {
    for (const form of ['dot', 'general', 'additive'] as const) {
      const model = new EncoderDecoderModel(attentive(form), { seed: 3, dtype: 'f64' });
      const tape = new Tape({ recording: false });
      const run = model.run(tape, sources, sourceLengths, targets, targetLengths);
      const encoder = model.encoder.run(tape, sources, { lengths: sourceLengths });
      const decoder = model.decoder.run(tape, targets, { lengths: targetLengths, initialState: decoderStart(model.encoder, encoder.state), readout: false });
      const [S, B, E] = encoder.outputs.shape;
      const [T, , D] = decoder.outputs.shape;
      const p = (name: string) => model.attention.get(name)?.data ?? new Float64Array(0);
      const h = (t: number, b: number, j: number) => decoder.outputs.data[(t * B + b) * D + j];
      const hbar = (s: number, b: number, i: number) => encoder.outputs.data[(s * B + b) * E + i];
      const weights = model.decoder.readoutWeights!.data;
      const bias = model.decoder.readoutBias!.data;
      for (let t = 0; t < T; t++) {
        for (let b = 0; b < B; b++) {
          if (t >= targetLengths[b]) continue;
          const scores = Array.from({ length: sourceLengths[b] }, (_, s) => {
            let e = 0;
            if (form === 'dot') for (let j = 0; j < D; j++) e += h(t, b, j) * hbar(s, b, j);
            else if (form === 'general')
              for (let j = 0; j < D; j++) for (let i = 0; i < E; i++) e += h(t, b, j) * p('attention.keys')[i * D + j] * hbar(s, b, i);
            else {
              for (let j = 0; j < D; j++) {
                let pre = 0;
                for (let i = 0; i < D; i++) pre += h(t, b, i) * p('attention.query')[i * D + j];
                for (let i = 0; i < E; i++) pre += hbar(s, b, i) * p('attention.keys')[i * D + j];
                e += p('attention.vector')[j] * Math.tanh(pre);
              }
            }
            return e;
          });
          const total = scores.reduce((n, e) => n + Math.exp(e), 0);
          const a = scores.map((e) => Math.exp(e) / total);
          a.forEach((w, s) => expect(Math.abs(run.attentionWeights![(t * B + b) * S + s] - w)).toBeLessThan(1e-12));
          const joined = [
            ...Array.from({ length: E }, (_, i) => a.reduce((n, w, s) => n + w * hbar(s, b, i), 0)),
            ...Array.from({ length: D }, (_, j) => h(t, b, j)),
          ];
          const tilde = Array.from({ length: D }, (_, j) => Math.tanh(joined.reduce((n, x, i) => n + x * p('attention.combine')[i * D + j], 0)));
          for (let v = 0; v < 5; v++) {
            const logit = tilde.reduce((n, x, j) => n + x * weights[j * 5 + v], bias[v]);
            expect(Math.abs(run.outputs.data[(t * B + b) * 5 + v] - logit)).toBeLessThan(1e-12);
          }
        }
      }
    }
  });

  it("start each decoder layer from its encoder layer's backward cell when that layer is bidirectional", () => {
    const model = new EncoderDecoderModel(attentive('general'), { seed: 1, dtype: 'f64' });
    const encoder = model.encoder.run(new Tape({ recording: false }), sources, { lengths: sourceLengths });
    // Encoder slots: layer 0 forward h, c, backward h, c; layer 1 the same. The decoder takes each backward pair.
    expect(decoderStart(model.encoder, encoder.state)).toEqual([encoder.state[2], encoder.state[3], encoder.state[6], encoder.state[7]]);
  });
});
