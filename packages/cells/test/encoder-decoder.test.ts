import { describe, expect, it } from 'vitest';
import { Tape, checkGradients, crossEntropyAtTargets, reshape } from '@weft/core';
import { EncoderDecoderModel, reverseTokens } from '@weft/cells';

const description = {
  kind: 'encoder-decoder' as const,
  encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }] },
  decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 5 } },
};
// Two sources of lengths 3 and 2 (time-major), and target inputs of 2 steps.
const source = { tokens: Int32Array.of(1, 4, 2, 5, 3, 0), steps: 3, batch: 2 };
const targetInput = { tokens: Int32Array.of(0, 0, 2, 3), steps: 2, batch: 2 };

describe('encoder-decoder models', () => {
  it('name the encoder\'s parameters encoder.… and the decoder\'s decoder.…, and give logits [T_target, B, V]', () => {
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
    const report = checkGradients((tape) => {
      const { outputs } = model.run(tape, source, [3, 2], targetInput, [2, 1]);
      return crossEntropyAtTargets(tape, reshape(tape, outputs, [4, 5]), [2, 3, 1, 0], { weights: [1, 1, 1, 0] });
    }, model.parameters().map((p) => p.tensor), { tolerance: 1e-6 });
    if (!report.passed) throw new Error(report.text());
    expect(report.passed).toBe(true);
  });

  it('refuse a description that is not an encoder-decoder, and batches of two sizes', () => {
    expect(() => new EncoderDecoderModel(description.encoder)).toThrowError(/^Invalid option at description\.kind: expected 'encoder-decoder', received nothing/);
    const model = new EncoderDecoderModel(description);
    expect(() => model.run(new Tape(), source, null, { tokens: Int32Array.of(0, 0, 0), steps: 1, batch: 3 })).toThrowError(
      'Shape mismatch at encoderDecoder.targetInput.batch: expected 2 (the source batch), received 3',
    );
  });
});
