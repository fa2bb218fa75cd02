import { describe, expect, it } from 'vitest';
import { Random, Tape } from '@weft/core';
import { EncoderDecoderModel } from '@weft/cells';
import type { EncoderDecoderDescription } from '@weft/cells';
import { loadEncoderDecoder, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

const START = 0;
const END = 1;

function description(reverseSource: boolean): EncoderDecoderDescription {
  return {
    kind: 'encoder-decoder',
    reverseSource,
    encoder: {
      input: { kind: 'embedding', vocabulary: 6, width: 4 },
      layers: [
        { cell: 'gru', hidden: 5 },
        { cell: 'lstm', hidden: 4 },
      ],
    },
    decoder: {
      input: { kind: 'embedding', vocabulary: 4, width: 3 },
      layers: [
        { cell: 'gru', hidden: 5 },
        { cell: 'lstm', hidden: 4 },
      ],
      readout: { width: 4 },
    },
  };
}

function shakenModel(reverseSource = false): EncoderDecoderModel {
  const model = new EncoderDecoderModel(description(reverseSource), { seed: 3 });
  const random = new Random('beam');
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.8, 0.8);
  return model;
}

/** log P(tokens | source) by teacher forcing on the training-side model (f32). */
function logProbability(model: EncoderDecoderModel, source: number[], tokens: number[]): number {
  const tape = new Tape({ recording: false });
  const input = Int32Array.from([START, ...tokens.slice(0, -1)]);
  const { outputs } = model.run(tape, { tokens: Int32Array.from(source), steps: source.length, batch: 1 }, null, {
    tokens: input,
    steps: input.length,
    batch: 1,
  });
  let total = 0;
  tokens.forEach((token, t) => {
    const row = Array.from(outputs.data.subarray(t * 4, t * 4 + 4));
    const max = Math.max(...row);
    total += row[token] - max - Math.log(row.reduce((s, z) => s + Math.exp(z - max), 0));
  });
  return total;
}

describe('encoder-decoder models and beam search', () => {
  it('run in the runtime as they run in training (logits within 1e-6), with and without reversed sources', async () => {
    for (const reverse of [false, true]) {
      const model = shakenModel(reverse);
      const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
      const runtime = await createEncoderDecoderRuntime(file);
      const source = [2, 5, 3, 4];
      const tape = new Tape({ recording: false });
      const target = Int32Array.of(START, 2, 3);
      const trained = model.run(tape, { tokens: Int32Array.from(source), steps: 4, batch: 1 }, null, { tokens: target, steps: 3, batch: 1 }).outputs.data;
      const decoder = runtime.decoder.streams(1);
      decoder.restoreState(runtime.encode(source));
      for (let t = 0; t < 3; t++) {
        const logits = decoder.step(target.subarray(t, t + 1));
        for (let j = 0; j < 4; j++) expect(Math.abs(logits[j] - trained[t * 4 + j])).toBeLessThanOrEqual(1e-6);
      }
      // The same file reloads as a training model, and a sequence runtime refuses it by name.
      expect(loadEncoderDecoder(file).parameters().length).toBe(model.parameters().length);
      await expect(createRuntime(file)).rejects.toThrowError(
        'Bad weight file at model.kind: expected a sequence model (use createEncoderDecoderRuntime for this file), received "encoder-decoder"',
      );
    }
  });

  it('with a beam wide enough to keep everything, finds the exhaustive best by length-normalised score', async () => {
    const model = shakenModel();
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
    const source = [3, 1, 4, 1];
    // Every output of at most 3 tokens: the first tokens from {2, 3, 0} (anything but the end token) and an end.
    const outputs: number[][] = [];
    const extend = (prefix: number[]) => {
      if (prefix.length > 0 && prefix[prefix.length - 1] === END) {
        outputs.push(prefix);
        return;
      }
      if (prefix.length === 3) return;
      for (const token of [0, 1, 2, 3]) extend([...prefix, token]);
    };
    extend([]);
    for (const alpha of [0, 1]) {
      const ranked = outputs
        .map((tokens) => ({ tokens, score: logProbability(model, source, tokens) / tokens.length ** alpha }))
        .sort((a, b) => b.score - a.score);
      const found = runtime.beamSearch(source, { width: 64, startToken: START, endToken: END, maxLength: 3, lengthPenalty: alpha });
      expect(found[0].finished).toBe(true);
      expect(found[0].tokens).toEqual(ranked[0].tokens);
      expect(Math.abs(found[0].score - ranked[0].score)).toBeLessThan(1e-5);
      // The scores it reports are the true length-normalised log-probabilities.
      for (const result of found.slice(0, 5)) {
        expect(Math.abs(result.score - logProbability(model, source, result.tokens) / result.tokens.length ** alpha)).toBeLessThan(1e-5);
      }
    }
  });

  it('with width 1 is greedy decoding, and stops at the maximum length', async () => {
    const model = shakenModel();
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
    const source = [5, 4, 3];
    const [best] = runtime.beamSearch(source, { width: 1, startToken: START, endToken: END, maxLength: 6 });
    const decoder = runtime.decoder.streams(1);
    decoder.restoreState(runtime.encode(source));
    const greedy: number[] = [];
    let token = START;
    for (let t = 0; t < 6; t++) {
      const logits = decoder.step([token]);
      token = Array.from(logits).indexOf(Math.max(...logits));
      greedy.push(token);
      if (token === END) break;
    }
    expect(best.tokens).toEqual(greedy);
    const short = runtime.beamSearch(source, { width: 3, startToken: START, endToken: END, maxLength: 2 });
    for (const result of short) expect(result.tokens.length).toBeLessThanOrEqual(2);
    expect(() => runtime.beamSearch(source, { width: 0, startToken: START, endToken: END, maxLength: 2 })).toThrowError(
      'Invalid option at beamSearch.width: expected a whole number ≥ 1, received 0',
    );
  });

  it('refuses an encoder-decoder whose layers do not match', () => {
    const bad = {
      ...description(false),
      decoder: {
        ...description(false).decoder,
        layers: [
          { cell: 'lstm', hidden: 5 },
          { cell: 'lstm', hidden: 4 },
        ],
      },
    };
    expect(() => new EncoderDecoderModel(bad)).toThrowError(
      "Invalid option at description.decoder.layers[0]: expected a gru layer of 5 (as the encoder's), received lstm of 5",
    );
  });
});
