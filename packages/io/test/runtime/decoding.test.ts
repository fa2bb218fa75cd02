/**
 * Encoder-decoders with attention in the runtime, checked against the training-side model (whose attention is checked
 * against Luong et al. 2015's equations and finite differences in @weft/cells): the same logits and attention weights
 * step by step, the same greedy decode, beam width 1 equal to greedy, beam search against an exhaustive ranking, and
 * steps that allocate nothing (the runtime's array counter).
 */
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { Random, Tape } from '@weft/core';
import { EncoderDecoderModel } from '@weft/cells';
import type { AttentionForm, EncoderDecoderDescription } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime, runtimeCounts } from '@weft/io/runtime/encoder-decoder';
import type { EncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

const START = 0;
const END = 1;
const V = 5;

function description(attention: AttentionForm, bidirectional: boolean, reverseSource = false): EncoderDecoderDescription {
  const layers = (both: boolean) => [
    { cell: 'gru', hidden: 4, bidirectional: both },
    { cell: 'lstm', hidden: 4, bidirectional: both },
  ];
  return {
    kind: 'encoder-decoder',
    attention,
    reverseSource,
    encoder: { input: { kind: 'embedding', vocabulary: 7, width: 3 }, layers: layers(bidirectional) },
    decoder: { input: { kind: 'embedding', vocabulary: V, width: 3 }, layers: layers(false), readout: { width: V } },
  };
}

const cases: [string, EncoderDecoderDescription][] = [
  ['dot', description('dot', false)],
  ['general, bidirectional encoder', description('general', true)],
  ['additive, bidirectional encoder, source reversed', description('additive', true, true)],
  // A forward-only encoder is streamed token by token by decoding.start (no arrays made), in either order.
  ['general, source reversed', description('general', false, true)],
];

function shaken(d: EncoderDecoderDescription, seed = 'decode'): EncoderDecoderModel {
  const model = new EncoderDecoderModel(d, { seed: 5 });
  const random = new Random(seed);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.7, 0.7);
  return model;
}

async function runtimeOf(model: EncoderDecoderModel): Promise<EncoderDecoderRuntime> {
  return createEncoderDecoderRuntime(await readWeightFile(await writeWeightFile(model.description, modelTensors(model))), { backend: 'javascript' });
}

/** The training-side model's teacher-forced logits and attention weights for one source and a target input. */
function teacherForced(model: EncoderDecoderModel, source: number[], input: number[]): { logits: Float32Array; weights: Float64Array } {
  const run = model.run(new Tape({ recording: false }), { tokens: Int32Array.from(source), steps: source.length, batch: 1 }, null, {
    tokens: Int32Array.from(input),
    steps: input.length,
    batch: 1,
  });
  return { logits: Float32Array.from(run.outputs.data), weights: run.attentionWeights as Float64Array };
}

/** Greedy decoding on the training side: the whole decoder run again each step with the outputs so far. */
function trainingGreedy(model: EncoderDecoderModel, source: number[], maxLength: number): number[] {
  const out: number[] = [];
  while (out.length < maxLength) {
    const { logits } = teacherForced(model, source, [START, ...out]);
    const row = Array.from(logits.subarray(out.length * V, (out.length + 1) * V));
    const token = row.indexOf(Math.max(...row));
    out.push(token);
    if (token === END) break;
  }
  return out;
}

describe('encoder-decoders with attention in the runtime', () => {
  for (const [label, d] of cases) {
    it(`give the training model's logits and attention weights at every step (${label})`, async () => {
      const model = shaken(d);
      const runtime = await runtimeOf(model);
      expect(runtime.attention).toBe(d.attention);
      const source = [2, 6, 3, 3, 5];
      const input = [START, 2, 4, 3];
      const expected = teacherForced(model, source, input);
      const decoding = runtime.decoding({ rows: 2, maxSourceLength: 8 });
      decoding.start(source);
      for (let t = 0; t < input.length; t++) {
        // Two rows fed the same tokens: both must give the training model's row.
        const logits = decoding.step([input[t], input[t]]);
        for (const r of [0, 1]) {
          for (let v = 0; v < V; v++) expect(Math.abs(logits[r * V + v] - expected.logits[t * V + v])).toBeLessThanOrEqual(1e-5);
          for (let s = 0; s < source.length; s++)
            expect(Math.abs(decoding.weights[r * 8 + s] - expected.weights[t * source.length + s])).toBeLessThanOrEqual(1e-5);
        }
      }
      decoding.close();
    });
  }

  it('decodes greedily to the same tokens as greedy decoding on the training model, and beam width 1 agrees', async () => {
    for (const [, d] of cases) {
      for (const seed of ['one', 'two', 'three']) {
        const model = shaken(d, seed);
        const runtime = await runtimeOf(model);
        const source = [4, 2, 6, 5, 3, 2];
        const expected = trainingGreedy(model, source, 7);
        const decoded = runtime.decode(source, { startToken: START, endToken: END, maxLength: 7 });
        expect(decoded.tokens).toEqual(expected);
        expect(decoded.attention).toHaveLength(expected.length);
        for (const weights of decoded.attention) expect(Math.abs(weights.reduce((n, a) => n + a, 0) - 1)).toBeLessThan(1e-5);
        // Without length normalisation (α = 0) a beam of one is greedy; with it, a longer finished output may outscore
        // an output the greedy step ended at once (as the fourth case's first seed shows).
        expect(runtime.beamSearch(source, { width: 1, startToken: START, endToken: END, maxLength: 7, lengthPenalty: 0 })[0].tokens).toEqual(expected);
      }
    }
  });

  it('samples with a seeded generator: the same seed gives the same output, and each token is one the softmax allows', async () => {
    const runtime = await runtimeOf(shaken(description('additive', true), 'sampled'));
    const source = [2, 3, 4, 5, 6];
    const draw = (seed: string) =>
      runtime.decode(source, { startToken: START, endToken: END, maxLength: 12, random: new Random(seed), temperature: 1.5 }).tokens;
    expect(draw('a')).toEqual(draw('a'));
    const outputs = ['a', 'b', 'c', 'd', 'e', 'f'].map(draw);
    // At temperature 1.5 over 5 tokens, six seeds do not all draw the greedy output.
    const greedy = runtime.decode(source, { startToken: START, endToken: END, maxLength: 12 }).tokens;
    expect(outputs.some((o) => o.join() !== greedy.join())).toBe(true);
    // top-k 1 is greedy, whatever the seed.
    expect(runtime.decode(source, { startToken: START, endToken: END, maxLength: 12, random: new Random('z'), topK: 1 }).tokens).toEqual(greedy);
  });

  it("has the shape of a sequence runtime (metadata, backend), and samples with the generator of @weft/core/base as with the root's", async () => {
    const runtime = await runtimeOf(shaken(description('general', true), 'shape'));
    expect(runtime.metadata).toBe(runtime.encoder.metadata);
    expect(runtime.backend.name).toBe('javascript');
    const { Random: BaseRandom } = await import('@weft/core/base');
    const source = [2, 3, 4];
    const options = { startToken: START, endToken: END, maxLength: 8, temperature: 1.2 };
    expect(runtime.decode(source, { ...options, random: new BaseRandom('same') }).tokens).toEqual(
      runtime.decode(source, { ...options, random: new Random('same') }).tokens,
    );
  });

  it('with a beam wide enough to keep everything, finds the exhaustive best by length-normalised score (attention on)', async () => {
    const model = shaken(description('general', true), 'exhaustive');
    const runtime = await runtimeOf(model);
    const source = [3, 1, 4, 1, 5];
    const logProbability = (tokens: number[]): number => {
      const { logits } = teacherForced(model, source, [START, ...tokens.slice(0, -1)]);
      return tokens.reduce((total, token, t) => {
        const row = Array.from(logits.subarray(t * V, (t + 1) * V));
        const max = Math.max(...row);
        return total + row[token] - max - Math.log(row.reduce((n, z) => n + Math.exp(z - max), 0));
      }, 0);
    };
    const outputs: number[][] = [];
    const extend = (prefix: number[]): void => {
      if (prefix.length > 0 && prefix[prefix.length - 1] === END) outputs.push(prefix);
      else if (prefix.length < 3) for (let token = 0; token < V; token++) extend([...prefix, token]);
    };
    extend([]);
    for (const alpha of [0, 1]) {
      const ranked = outputs.map((tokens) => ({ tokens, score: logProbability(tokens) / tokens.length ** alpha })).sort((a, b) => b.score - a.score);
      const found = runtime.beamSearch(source, { width: 125, startToken: START, endToken: END, maxLength: 3, lengthPenalty: alpha });
      expect(found[0].tokens).toEqual(ranked[0].tokens);
      for (const result of found.slice(0, 5)) expect(Math.abs(result.score - logProbability(result.tokens) / result.tokens.length ** alpha)).toBeLessThan(1e-5);
    }
  });

  it('steps without making any array, for every attention form', async () => {
    for (const [, d] of cases) {
      const runtime = await runtimeOf(shaken(d));
      const decoding = runtime.decoding({ rows: 4, maxSourceLength: 16 });
      decoding.start([1, 2, 3, 4, 5, 6]);
      const tokens = Int32Array.of(0, 2, 3, 4);
      decoding.step(tokens);
      const before = runtimeCounts.arrays;
      for (let t = 0; t < 50; t++) decoding.step(tokens);
      decoding.keepRows([1, 0, 3, 2]);
      expect(runtimeCounts.arrays).toBe(before);
      decoding.close();
    }
  });

  it('refuses a source longer than the decoding was made for, and a file missing an attention tensor, by name', async () => {
    const model = shaken(description('additive', false));
    const runtime = await runtimeOf(model);
    const decoding = runtime.decoding({ maxSourceLength: 3 });
    expect(() => decoding.start([1, 2, 3, 4])).toThrowError(
      "Invalid argument at decoding.start.source: expected at most 3 tokens (the decoding's maxSourceLength), received 4",
    );
    decoding.close();
    const tensors = modelTensors(model).filter((t) => t.name !== 'attention.vector');
    await expect(createEncoderDecoderRuntime(await writeWeightFile(model.description, tensors), { backend: 'javascript' })).rejects.toThrowError(
      /attention\.vector/,
    );
    expect(() => runtime.decode([1, 2], { startToken: 9, endToken: END, maxLength: 4 })).toThrowError(
      'Invalid option at decode.startToken: expected a token id in [0, 5), received 9',
    );
    expect(() => runtime.decode([], { startToken: START, endToken: END, maxLength: 4 })).toThrowError(
      'Invalid argument at encode.source: expected at least one token, received none',
    );
  });

  for (const encoder of ['forward only', 'bidirectional'] as const) {
    it(`starts each source again without making garbage, its encoder ${encoder} (node --expose-gc, a 1 MB young generation)`, () => {
      const probe = fileURLToPath(new URL('./decoding-probe.mjs', import.meta.url));
      const output = execFileSync(
        process.execPath,
        ['--expose-gc', '--max-semi-space-size=1', probe, ...(encoder === 'bidirectional' ? ['bidirectional'] : [])],
        {
          encoding: 'utf8',
        },
      );
      const { collections, starts, control } = JSON.parse(output.trim().split('\n').at(-1)!) as { collections: number; starts: number; control: number };
      console.log(`encoder ${encoder}: ${collections} collections over ${starts} starts and steps; ${control} when each also makes an array of four numbers`);
      expect(control).toBeGreaterThan(0);
      expect(collections).toBe(0);
    });
  }
});

describe('closing an encoder-decoder runtime', () => {
  it('refuses every later call, a decoding made before it included, in one line; closing again does nothing', async () => {
    const runtime = await runtimeOf(shaken(description('general', true)));
    const decoding = runtime.decoding({ maxSourceLength: 4 });
    decoding.start([2, 3]);
    runtime.close();
    runtime.close();
    expect(runtime.closed).toBe(true);
    expect(() => runtime.decode([1, 2], { startToken: START, endToken: END, maxLength: 3 })).toThrowError(/expected an open runtime/);
    expect(() => decoding.start([2, 3])).toThrowError(/decoding\.start: expected an open runtime/);
    expect(() => decoding.step([START])).toThrowError(/streams\.step: expected an open runtime/);
    decoding.close();
  });
});
