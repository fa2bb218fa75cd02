import { describe, expect, it } from 'vitest';
import { Random, Tape, defaultBackend, sharedPool, tensor } from '@weft/core';
import type { SequenceModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { Runtime, createRuntime, runtimeCounts } from '@weft/io/runtime';
import { descriptions, shaken } from '../models.js';

async function runtimeFor(model: SequenceModel): Promise<Runtime> {
  return createRuntime(await writeWeightFile(model.description, modelTensors(model)));
}

function inputFor(model: SequenceModel, steps: number, batch: number, seed: string): { values: Float32Array | Int32Array; training: Parameters<SequenceModel['run']>[1] } {
  const random = new Random(seed);
  const described = model.description.input;
  if (described.kind === 'embedding') {
    const tokens = Int32Array.from({ length: steps * batch }, () => random.integer(described.vocabulary));
    return { values: tokens, training: { tokens, steps, batch } };
  }
  const values = Float32Array.from({ length: steps * batch * described.width }, () => random.between(-1, 1));
  return { values, training: tensor(values, [steps, batch, described.width]) };
}

function maxGap(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
  return worst;
}

// The JavaScript kernels accumulate products in f64 and round once, so the runtime and the training forward agree
// to 1e-6 there; the WebAssembly SIMD kernels accumulate in f32, in an order that differs between the runtime's
// fused layer step (bias first) and the training side's packed product, so they are held to the backends'
// agreement bound instead, |a − b| ≤ 1e-5·max(1, |a|, |b|).
const onJavaScript = defaultBackend().name === 'javascript';
function withinRuntimeBound(a: ArrayLike<number>, b: ArrayLike<number>): void {
  if (onJavaScript) {
    expect(maxGap(a, b)).toBeLessThanOrEqual(1e-6);
    return;
  }
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.max(1, Math.abs(a[i]), Math.abs(b[i])));
  expect(worst).toBeLessThanOrEqual(1e-5);
}

describe('the inference runtime', () => {
  for (const [label, description] of Object.entries(descriptions)) {
    it(`${label}: whole-sequence run equals the training-side forward (f32: 1e-6 on JavaScript, 1e-5 relative on WebAssembly), ragged lengths`, async () => {
      const model = shaken(description, 3);
      const runtime = await runtimeFor(model);
      const { values, training } = inputFor(model, 7, 4, label);
      const lengths = [7, 3, 5, 1];
      const expected = model.run(new Tape({ recording: false }), training, { lengths }).outputs.data;
      withinRuntimeBound(runtime.run(values, 7, 4, lengths), expected);
    });
  }

  for (const label of ['plain tanh', 'plain ReLU', 'LSTM', 'LSTM with peepholes', 'GRU (reset before)', 'GRU (reset after)', 'stacked']) {
    it(`${label}: streaming steps equal the whole-sequence run, several streams at once`, async () => {
      const model = shaken(descriptions[label], 4);
      const runtime = await runtimeFor(model);
      const steps = 9;
      const batch = 3;
      const { values } = inputFor(model, steps, batch, `${label}-stream`);
      const whole = runtime.run(values, steps, batch);
      const streams = runtime.streams(batch);
      const per = values.length / (steps * batch);
      for (let t = 0; t < steps; t++) {
        const out = streams.step(values.subarray(t * batch * per, (t + 1) * batch * per));
        expect(maxGap(out, whole.subarray(t * batch * runtime.outputWidth, (t + 1) * batch * runtime.outputWidth))).toBeLessThanOrEqual(1e-6);
      }
    });
  }

  it('resets one stream, and reads and restores state', async () => {
    const model = shaken(descriptions.stacked, 5);
    const runtime = await runtimeFor(model);
    const streams = runtime.streams(2);
    const random = new Random('state');
    const feed = () => Float32Array.from({ length: 6 }, () => random.between(-1, 1));
    for (let i = 0; i < 4; i++) streams.step(feed());
    const saved = streams.readState();
    const probe = feed();
    const first = Float32Array.from(streams.step(probe));
    streams.restoreState(saved);
    expect(Array.from(streams.step(probe))).toEqual(Array.from(first));
    // A reset stream behaves as a fresh one: compare with stream 0 of new streams.
    streams.reset(1);
    const fresh = runtime.streams(2);
    const x = feed();
    const both = Float32Array.from(streams.step(x));
    const fromFresh = fresh.step(x);
    expect(Array.from(both.subarray(2, 4))).toEqual(Array.from(fromFresh.subarray(2, 4)));
    expect(Array.from(both.subarray(0, 2))).not.toEqual(Array.from(fromFresh.subarray(0, 2)));
    expect(runtime.stateWidths()).toEqual([6, 6, 5, 4]);
  });

  it('creates no typed arrays in 10,000 streaming steps after warm-up', async () => {
    const model = shaken(descriptions.stacked, 6);
    const runtime = await runtimeFor(model);
    for (const count of [1, 5]) {
      const streams = runtime.streams(count);
      const input = new Float32Array(count * 3).fill(0.25);
      streams.step(input);
      const made = runtimeCounts.arrays;
      const kernelArrays = sharedPool.counts().created;
      for (let i = 0; i < 10_000; i++) {
        input[0] = Math.sin(i);
        streams.step(input);
      }
      expect(runtimeCounts.arrays).toBe(made);
      expect(sharedPool.counts().created).toBe(kernelArrays);
    }
  });

  it('refuses to stream a bidirectional or reverse model and names the input problems', async () => {
    const runtime = await runtimeFor(shaken(descriptions.bidirectional));
    const reversed = await runtimeFor(shaken(descriptions.reverse));
    expect(() => runtime.streams(1)).toThrowError('Invalid argument at Runtime.streams: expected a model whose layers all run forward in time, received a layer that reads backward (use run() on whole sequences)');
    expect(() => reversed.streams(1)).toThrowError(/received a layer that reads backward/);
    expect(() => runtime.run(Int32Array.of(1, 2, 9), 3, 1)).toThrowError('Invalid argument at Runtime.run.input[2]: expected a token id in [0, 7), received 9');
    const values = await runtimeFor(shaken(descriptions['plain tanh']));
    expect(() => values.streams(2).step(new Float32Array(5))).toThrowError('Shape mismatch at Streams.step.input: expected 6 numbers (2 × 3), received 5');
  });



  it('builds from a file already read, and refuses a model its kernels do not know', async () => {
    const model = shaken(descriptions['GRU (reset after)']);
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    expect(new Runtime(file).outputWidth).toBe(6);
  });
});
