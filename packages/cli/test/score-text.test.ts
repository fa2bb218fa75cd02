import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { logits, scoreText } from '../src/score-text.js';

const vocabulary = ['<unknown>', 'a', 'b', 'c', ' '];

describe('scoring a text model', () => {
  it('finds the largest logit and the log-sum-exp of a row (log Σ e^x, computed here directly)', () => {
    const row = [0.5, -1, 2.25, 2.25, 0];
    expect(logits(row).best).toBe(2);
    expect(Math.abs(logits(row).logSumExp - Math.log(row.reduce((n, x) => n + Math.exp(x), 0)))).toBeLessThan(1e-12);
  });

  it('gives the perplexity exp(mean −log p) of the scored tokens, each predicted from all before it', async () => {
    const model = buildModel(
      { input: { kind: 'embedding', vocabulary: 5, width: 3 }, layers: [{ cell: 'gru', hidden: 6 }], readout: { width: 5 } },
      { seed: 4 },
    );
    const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)));
    const random = new Random('score-text');
    const text = Array.from({ length: 400 }, () => 'abc '[random.integer(4)]).join('');
    const report = scoreText(runtime, { vocabulary, tokens: 'characters' }, text, 'notes.txt', { share: 0.1, trainedOn: false, split: null });
    // The definition, from a fresh stream over the whole text (the warm-up only sets the state before the part).
    const ids = Array.from(text, (c) => vocabulary.indexOf(c));
    const scored = Math.round(ids.length * 0.1);
    const streams = runtime.streams(1);
    let total = 0;
    for (let p = 0; p + 1 < ids.length; p++) {
      const out = streams.step([ids[p]]);
      if (p + 1 >= ids.length - scored) total += Math.log(Array.from(out).reduce((n, x) => n + Math.exp(x), 0)) - out[ids[p + 1]];
    }
    expect(report.metric).toBe('perplexity');
    expect(Math.abs(report.model.value - Math.exp(total / scored)) / report.model.value).toBeLessThan(1e-4);
    expect(report.baselines.map((b) => b.name)).toEqual(['unigram', expect.stringMatching(/^\d-gram$/)]);
  });

  it('refuses a text of fewer than ten tokens, naming the file', async () => {
    const model = buildModel({ input: { kind: 'embedding', vocabulary: 5, width: 3 }, layers: [{ cell: 'gru', hidden: 2 }], readout: { width: 5 } });
    const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)));
    expect(() => scoreText(runtime, { vocabulary, tokens: 'characters' }, 'abc', 'short.txt', { share: 0.1, trainedOn: false, split: null })).toThrowError(
      'short.txt: 3 tokens are too few to score beside baselines counted on the text before them (at least 10)',
    );
  });
});
