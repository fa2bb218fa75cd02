/**
 * A cell of your own (the minimal gated unit of packages/cells/test/plans/mgu.ts, written as a plan) through every
 * place a built-in cell goes: a weight file written and read back, a model loaded from it, and the runtime, which
 * streams it with nothing allocated per step; with one-line errors where the program forgot its plan or the plan
 * does not fit the file.
 */
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { Random, Tape, WeftError, defaultBackend, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { CellPlan } from '@weft/cells';
import { loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createRuntime, runtimeCounts } from '@weft/io/runtime';
import { onnxFromWeightFile } from '@weft/io/onnx';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { evaluateGraph } from '../packages/io/test/onnx/evaluate.js';
import { decodeIndependently } from '../packages/io/test/onnx/independent.js';
import { mguPlan } from '../packages/cells/test/plans/mgu.js';

const description = {
  input: { kind: 'values', width: 3 },
  layers: [
    { cell: 'test.mgu', hidden: 6 },
    { cell: 'gru', hidden: 5 },
  ],
  readout: { width: 2 },
} as const;
const plans = { 'test.mgu': mguPlan };

async function written(): Promise<{ text: string; model: ReturnType<typeof buildModel> }> {
  const model = buildModel(description, { seed: 7, plans });
  const random = new Random('own-cells');
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.2, 0.2);
  return { text: await writeWeightFile(model.description, modelTensors(model)), model };
}

function oneLine(error: unknown): string {
  expect(error).toBeInstanceOf(WeftError);
  const message = (error as Error).message;
  expect(message.split('\n')).toHaveLength(1);
  return message;
}

describe('a new cell written in this test as a plan, and nothing else', () => {
  // An input-gated leaky unit (made up for this test): g = σ(x·W_g + b_g), n = tanh(x·W + h₋·R + b),
  // h = h₋ + g ⊙ (n − h₋). Its parameters: gate [I, H], gateBias [H], input [I, H], recurrent [H, H], bias [H].
  const leaky: CellPlan = {
    kind: 'test.leaky',
    state: ({ hidden }) => [{ name: 'h', width: hidden }],
    parameters: ({ inputWidth, hidden }) => [
      { name: 'gate', shape: [inputWidth, hidden] },
      { name: 'gateBias', shape: [hidden] },
      { name: 'input', shape: [inputWidth, hidden] },
      { name: 'recurrent', shape: [hidden, hidden] },
      { name: 'bias', shape: [hidden] },
    ],
    step(w) {
      const [h] = w.state;
      const g = w.sigmoid(w.add(w.product(w.input, 'gate'), w.vector('gateBias')));
      const n = w.tanh(w.add(w.add(w.product(w.input, 'input'), w.product(h, 'recurrent')), w.vector('bias')));
      return [w.add(h, w.multiply(g, w.subtract(n, h)))];
    },
  };
  const leakyPlans = { 'test.leaky': leaky };

  it('trains, streams in the runtime as the trained model computes, and runs from its ONNX file as the model does', async () => {
    const model = buildModel(
      { input: { kind: 'values', width: 1 }, layers: [{ cell: 'test.leaky', hidden: 8 }], readout: { width: 1 } },
      { seed: 2, plans: leakyPlans },
    );
    const values = Array.from({ length: 600 }, (_, i) => Math.sin(i / 6));
    const trainer = new Trainer({
      model,
      data: streamBatches({ kind: 'values', values, features: 1 }, { window: 24 }),
      optimizer: new AdamRule({ rate: 0.02 }),
      epochs: 12,
    });
    const first = trainer.step();
    let last = first;
    while (!trainer.finished) last = trainer.step();
    console.log(`a cell written in the test: training loss ${first.toFixed(4)} → ${last.toFixed(4)}`);
    expect(last).toBeLessThan(first / 5);
    const text = await writeWeightFile(model.description, modelTensors(model));
    const runtime = await createRuntime(text, { plans: leakyPlans });
    const input = Float32Array.from(values.slice(0, 40));
    const expected = model.run(new Tape({ recording: false }), tensor(input, [40, 1, 1])).outputs.data;
    const streams = runtime.streams(1);
    let worst = 0;
    for (let t = 0; t < 40; t++) worst = Math.max(worst, Math.abs(streams.step(input.subarray(t, t + 1))[0] - expected[t]));
    expect(worst).toBeLessThan(defaultBackend().name === 'javascript' ? 1e-6 : 1e-5);
    // ONNX: decoded by protobufjs with ONNX's schema and run by the test evaluator of the operators.
    const graph = (decodeIndependently(await onnxFromWeightFile(text, { plans: leakyPlans })) as { graph: Record<string, unknown> }).graph;
    const fromOnnx = evaluateGraph(graph, new Map([['input', { dims: [40, 1, 1], data: Array.from(input) }]])).get('output')!;
    worst = 0;
    fromOnnx.data.forEach((v, i) => (worst = Math.max(worst, Math.abs(v - expected[i]))));
    expect(worst).toBeLessThan(1e-5);
  });
});

describe('a cell of your own, as a plan', () => {
  it('is written to a weight file under its kind, and read back only with its plan (one line naming the layer otherwise)', async () => {
    const { text, model } = await written();
    const refused = await readWeightFile(text).then(
      () => null,
      (error: unknown) => oneLine(error),
    );
    expect(refused).toMatch(
      /model\.layers\[0\]\.cell: expected one of 'lstm', 'gru', 'plain' \(test\.mgu is a cell of your own: give its plan, plans: \{ 'test\.mgu': … \}\), received "test\.mgu"/,
    );
    const file = await readWeightFile(text, { plans });
    expect((file.model as typeof description).layers[0].cell).toBe('test.mgu');
    const loaded = loadModel(file, { plans });
    expect(loaded.parameters().map((p) => p.name)).toEqual(model.parameters().map((p) => p.name));
    loaded.parameters().forEach((p, i) => expect(Array.from(p.tensor.data)).toEqual(Array.from(model.parameters()[i].tensor.data)));
  });

  it("is refused where its plan does not fit the file's tensors, naming the tensor and both shapes", async () => {
    const { text } = await written();
    const wider: CellPlan = {
      ...mguPlan,
      parameters: (shape) => mguPlan.parameters(shape).map((p) => (p.name === 'recurrentGate' ? { ...p, shape: [shape.hidden, 2 * shape.hidden] } : p)),
    };
    const file = await readWeightFile(text, { plans: { 'test.mgu': wider } });
    const fromLoad = (() => {
      try {
        loadModel(file, { plans: { 'test.mgu': wider } });
      } catch (error) {
        return (error as Error).message;
      }
      return 'loaded';
    })();
    expect(fromLoad).toMatch(/layers\[0\]\.forward\.recurrentGate.*\[6, 12\].*\[6, 6\]/);
    const fromRuntime = await createRuntime(text, { plans: { 'test.mgu': wider } }).then(
      () => 'made',
      (error: unknown) => oneLine(error),
    );
    expect(fromRuntime).toMatch(/layers\[0\]\.forward\.recurrentGate.*\[6, 12\].*\[6, 6\]/);
    const noPlan = await createRuntime(text, { plans: {} }).then(
      () => 'made',
      (error: unknown) => oneLine(error),
    );
    expect(noPlan).toMatch(/model\.layers\[0\]\.cell.*test\.mgu is a cell of your own/);
  });

  it('streams in the runtime as the training model computes it, making no array per step', async () => {
    const { text, model } = await written();
    const runtime = await createRuntime(text, { plans });
    const steps = 12;
    const random = new Random('own-cells-input');
    const values = Float32Array.from({ length: steps * 2 * 3 }, () => random.between(-1, 1));
    const expected = model.run(new Tape({ recording: false }), tensor(values, [steps, 2, 3])).outputs.data;
    const streams = runtime.streams(2);
    streams.step(values.subarray(0, 6));
    const made = runtimeCounts.arrays;
    let worst = 0;
    streams.reset();
    for (let t = 0; t < steps; t++) {
      const out = streams.step(values.subarray(t * 6, (t + 1) * 6));
      for (let i = 0; i < 4; i++) worst = Math.max(worst, Math.abs(out[i] - expected[t * 4 + i]));
    }
    expect(runtimeCounts.arrays).toBe(made);
    // JavaScript kernels: 1e-6; WebAssembly's f32 products in another order: 1e-5 (the runtime tests' bound).
    expect(worst).toBeLessThan(defaultBackend().name === 'javascript' ? 1e-6 : 1e-5);
    const whole = runtime.run(values, steps, 2);
    for (let i = 0; i < whole.length; i++) worst = Math.max(worst, Math.abs(whole[i] - expected[i]));
    expect(worst).toBeLessThan(defaultBackend().name === 'javascript' ? 1e-6 : 1e-5);
  });

  it('streams 100,000 steps without a young-generation collection (node --expose-gc, a 1 MB young generation)', () => {
    const probe = fileURLToPath(new URL('./helpers/own-cell-probe.mjs', import.meta.url));
    const output = execFileSync(process.execPath, ['--expose-gc', '--max-semi-space-size=1', '--import', 'tsx', probe], { encoding: 'utf8' });
    const { collections, major, rounds, steps, control, backend } = JSON.parse(output.trim().split('\n').at(-1)!) as {
      collections: number;
      major: number;
      rounds: number;
      steps: number;
      control: number;
      backend: string;
    };
    console.log(
      `${collections} young-generation collections over ${steps} streaming steps of a cell of your own on ${backend} (${major} full; steady in round ${rounds} of at most 5); ${control} when each also makes an array of four numbers`,
    );
    expect(control).toBeGreaterThan(0);
    expect(collections).toBe(0);
  });
});
