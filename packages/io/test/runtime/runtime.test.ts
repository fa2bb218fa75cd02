import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Random, Tape, defaultBackend, tensor } from '@weft/core';
import { sharedPool } from '@weft/core/internal';
import type { SequenceModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { Runtime, createRuntime, runtimeCounts } from '@weft/io/runtime';
import { createForwardWebAssembly, forwardWebAssemblyUnavailable } from '@weft/core/forward';
import { descriptions, shaken } from '../models.js';

async function runtimeFor(model: SequenceModel): Promise<Runtime> {
  return createRuntime(await writeWeightFile(model.description, modelTensors(model)));
}

function inputFor(
  model: SequenceModel,
  steps: number,
  batch: number,
  seed: string,
): { values: Float32Array | Int32Array; training: Parameters<SequenceModel['run']>[1] } {
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
    expect(() => runtime.streams(1)).toThrowError(
      'Invalid argument at Runtime.streams: expected a model whose layers all run forward in time, received a layer that reads backward (use run() on whole sequences)',
    );
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

describe('misused streams', () => {
  const small = { input: { kind: 'values' as const, width: 3 }, layers: [{ cell: 'gru' as const, hidden: 4 }], readout: { width: 2 } };

  it('refuse every call once closed, close once however often asked, and leave other streams untouched', async () => {
    const runtime = await runtimeFor(shaken(small, 11));
    const a = runtime.streams(1);
    const b = runtime.streams(1);
    const reference = runtime.streams(1);
    const x = Float32Array.of(0.5, -0.25, 1);
    b.step(x);
    reference.step(x);
    a.close();
    a.close();
    expect(() => a.step(x)).toThrowError(
      'Invalid argument at Streams.step: expected open streams, received streams closed by close() (make new ones with runtime.streams())',
    );
    expect(() => a.reset()).toThrowError(/^Invalid argument at Streams\.reset: expected open streams/);
    expect(() => a.readState()).toThrowError(/^Invalid argument at Streams\.readState: expected open streams/);
    expect(() => a.restoreState(new Float32Array(4))).toThrowError(/^Invalid argument at Streams\.restoreState: expected open streams/);
    // Two streams made after a double close never share a block: each keeps its own state.
    const c = runtime.streams(1);
    const d = runtime.streams(1);
    c.step(x);
    const fresh = Float32Array.from(d.step(Float32Array.of(0, 0, 0)));
    const own = runtime.streams(1);
    expect(Array.from(fresh)).toEqual(Array.from(own.step(Float32Array.of(0, 0, 0))));
    expect(Array.from(b.step(x))).toEqual(Array.from(reference.step(x)));
  });

  it('leave every stream as it was when a call is refused: a wrong output length, a NaN input, a bad stream number', async () => {
    const runtime = await runtimeFor(shaken(small, 12));
    const streams = runtime.streams(2);
    const reference = runtime.streams(2);
    const x = Float32Array.of(0.5, -0.25, 1, 0.1, 0.2, -0.3);
    streams.step(x);
    reference.step(x);
    expect(() => streams.step(x, new Float32Array(3))).toThrowError('Shape mismatch at Streams.step.into: expected 4 numbers, received 3');
    expect(() => streams.step(Float32Array.of(0.5, NaN, 1, 0, 0, 0))).toThrowError(
      'Non-finite value at Streams.step.input[1]: expected a finite number, received NaN',
    );
    expect(() => streams.reset(0.5)).toThrowError('Invalid argument at Streams.reset.stream: expected a stream number in [0, 2), received 0.5');
    expect(() => streams.reset(-1)).toThrowError(/^Invalid argument at Streams\.reset\.stream: /);
    expect(() => streams.restoreState(new Float32Array(streams.readState().length).fill(Infinity))).toThrowError(
      /^Non-finite value at Streams\.restoreState\[0\]/,
    );
    expect(Array.from(streams.step(x))).toEqual(Array.from(reference.step(x)));
  });

  it('skip the finite check of inputs where a trusted hot path turns it off, and otherwise give the same outputs', async () => {
    const runtime = await runtimeFor(shaken(small, 14));
    const checked = runtime.streams(1);
    const x = Float32Array.of(0.5, -0.25, 1);
    const expected = Array.from(checked.step(x));
    runtime.checksFinite = false;
    const trusted = runtime.streams(1);
    expect(Array.from(trusted.step(x))).toEqual(expected);
    // Unchecked, a NaN flows into the state (IEEE 754: NaN propagates through every arithmetic operation).
    expect(Array.from(trusted.step(Float32Array.of(NaN, 0, 0))).every(Number.isNaN)).toBe(true);
    runtime.checksFinite = true;
    expect(() => checked.step(Float32Array.of(NaN, 0, 0))).toThrowError(/^Non-finite value at Streams\.step\.input\[0\]/);
  });

  it('refuse whole runs of a negative length, and lengths that are not whole numbers', async () => {
    const runtime = await runtimeFor(shaken(small, 13));
    expect(() => runtime.run(new Float32Array(3), -1, 1)).toThrowError('Invalid argument at Runtime.run.steps: expected a whole number ≥ 0, received -1');
    expect(() => runtime.run(new Float32Array(6), 2, 1, [NaN])).toThrowError(
      'Invalid argument at Runtime.run.lengths[0]: expected a whole number in [0, 2], received NaN',
    );
    expect(() => runtime.run(new Float32Array(6), 2, 1, [1.5])).toThrowError(/lengths\[0\]: expected a whole number in \[0, 2\], received 1\.5$/);
  });

  it('never interfere, over 1,000 random sequences of steps, resets, closes and restores on shared memory (fast-check)', async () => {
    const file = await writeWeightFile(shaken(small, 14).description, modelTensors(shaken(small, 14)));
    const runtime = await createRuntime(file);
    // The expected state is each stream's inputs since its last reset, run whole by a runtime of its own.
    const reference = await createRuntime(file);
    const command = fc.oneof(
      fc.record({
        kind: fc.constant('step' as const),
        set: fc.integer({ min: 0, max: 2 }),
        values: fc.array(fc.float({ min: -2, max: 2, noNaN: true }), { minLength: 6, maxLength: 6 }),
      }),
      fc.record({
        kind: fc.constant('reset' as const),
        set: fc.integer({ min: 0, max: 2 }),
        stream: fc.option(fc.integer({ min: 0, max: 1 }), { nil: undefined }),
      }),
      fc.record({ kind: fc.constant('reopen' as const), set: fc.integer({ min: 0, max: 2 }) }),
      fc.record({ kind: fc.constant('restore' as const), set: fc.integer({ min: 0, max: 2 }), from: fc.integer({ min: 0, max: 2 }) }),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(command, { maxLength: 12 }), async (commands) => {
        const sets = [0, 1, 2].map(() => ({ streams: runtime.streams(2), history: [[], []] as number[][][] }));
        try {
          for (const c of commands) {
            const set = sets[c.set];
            if (c.kind === 'step') {
              const out = Array.from(set.streams.step(Float32Array.from(c.values)));
              for (let row = 0; row < 2; row++) {
                set.history[row].push(c.values.slice(3 * row, 3 * row + 3));
                const steps = set.history[row].length;
                const whole = reference.run(Float32Array.from(set.history[row].flat()), steps, 1);
                const expected = whole.subarray((steps - 1) * 2, steps * 2);
                for (let j = 0; j < 2; j++) expect(Math.abs(out[2 * row + j] - expected[j])).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(expected[j])));
              }
            } else if (c.kind === 'reset') {
              set.streams.reset(c.stream);
              for (let row = 0; row < 2; row++) if (c.stream === undefined || c.stream === row) set.history[row] = [];
            } else if (c.kind === 'reopen') {
              // Misuse on the way: closed twice, then stepped; neither may touch the other sets.
              set.streams.close();
              set.streams.close();
              expect(() => set.streams.step(new Float32Array(6))).toThrowError(/closed by close\(\)/);
              set.streams = runtime.streams(2);
              set.history = [[], []];
            } else {
              set.streams.restoreState(sets[c.from].streams.readState());
              set.history = sets[c.from].history.map((rows) => rows.map((r) => [...r]));
            }
          }
        } finally {
          for (const set of sets) set.streams.close();
        }
      }),
      { numRuns: 1000, seed: 20261205 },
    );
  }, 120_000);
});

describe('closing a runtime', () => {
  it("gives its weights back and refuses every later call, its streams' too, in one line; closing again does nothing", async () => {
    const model = shaken(descriptions.stacked, 3);
    const runtime = await runtimeFor(model);
    const streams = runtime.streams(1);
    streams.step(new Float32Array(3));
    runtime.close();
    runtime.close();
    expect(runtime.closed).toBe(true);
    expect(() => runtime.streams(1)).toThrowError(
      'Invalid argument at Runtime.streams: expected an open runtime, received a runtime closed by close() (make a new one with createRuntime)',
    );
    expect(() => runtime.run(new Float32Array(3), 1, 1)).toThrowError(/Runtime\.run: expected an open runtime/);
    expect(() => streams.step(new Float32Array(3))).toThrowError(/Runtime\.streams\.step: expected an open runtime/);
    streams.close();
  });

  it.skipIf(forwardWebAssemblyUnavailable() !== null)(
    'lets a later runtime on the same WebAssembly backend reuse the memory a closed one gave back',
    async () => {
      const text = await writeWeightFile(descriptions.stacked, modelTensors(shaken(descriptions.stacked, 4)));
      const backend = createForwardWebAssembly({ memoryBytes: 1048576 });
      // Without closing, the reservation fills after some runtimes: the next is refused.
      const kept: Runtime[] = [];
      let refused = '';
      for (let i = 0; i < 100_000 && refused === ''; i++) {
        try {
          kept.push(await createRuntime(text, { backend }));
        } catch (error) {
          refused = (error as Error).message;
        }
      }
      expect(refused).not.toBe('');
      for (const runtime of kept) runtime.close();
      // Closed, their blocks serve the next ones: three times as many, made and closed in turn, all fit.
      for (let i = 0; i < 3 * kept.length; i++) (await createRuntime(text, { backend })).close();
      console.log(`${kept.length} runtimes filled a 1 MiB reservation; ${3 * kept.length} made and closed in turn fit`);
    },
  );
});
