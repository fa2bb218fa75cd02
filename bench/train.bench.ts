/**
 * One training step through the trainer: forward, reverse sweep, clipping by global norm, the finiteness checks
 * and the Adam update, on a [T, B, 64] input with an affine readout to V classes and softmax cross-entropy at
 * every position; reported in µs per token (B·T tokens per step). `…update-share` is the time of the update
 * path alone (clipping, the finiteness checks with their backup copy, and Adam) over the whole step, both from
 * this run.
 *
 * Decision these numbers led to: the update path stays a small share of a step, so the trainer can afford its
 * safety checks (non-finite gradients and parameters, with an undo copy) on every step.
 *
 * On the WebAssembly backend the main step ran 6.4–9.0× the JavaScript backend and the batch-1 LSTM 3.6–5.6× (≥ 5
 * and ≥ 2 asked), across four runs. The Adam update is computed in f64 in both backends, bit for bit alike, and stays about 5–7% of a step,
 * so it was not given a faster f32 SIMD form that would make the backends' weights differ.
 *
 * `train.lstm.b160t24i8h32v2.over-b32`: a step over 160 rows against one over 32 (LSTM 32 hidden, 24 steps, 8 inputs:
 * a forecasting window's shape), the time of each step, from one run. Five ensemble members trained side by side
 * could at best share every product of one step over five times the rows, so this ratio is a floor under what such
 * an ensemble's step would cost against one member's: 4.72 in its first run (6.52 against 1.38 ms), which is why
 * `--ensemble` trains its members one after another.
 */
import { Random, createWebAssemblyBackend, defaultBackend, randomUniform, relaxedKernelsUnavailable, setDefaultBackend, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { SequenceModel } from '@weft/cells';
import { AdamRule, Trainer, limitGradientNorm, firstNonFiniteEntry } from '@weft/optim';
import { startTrainingThreads } from '@weft/optim/node';
import type { Batch, DataSource } from '@weft/optim';
import type { BenchCase, BenchResult, Derived } from './harness.js';

interface Shape {
  readonly cell: 'lstm' | 'gru';
  readonly batch: number;
  readonly steps: number;
  readonly inputs: number;
  readonly hidden: number;
  readonly classes: number;
}

function idOf(s: Shape): string {
  return `train.${s.cell}.b${s.batch}t${s.steps}i${s.inputs}h${s.hidden}v${s.classes}`;
}

function setup(shape: Shape, threads?: Awaited<ReturnType<typeof startTrainingThreads>>): { model: SequenceModel; trainer: Trainer; optimizer: AdamRule } {
  const random = new Random(`train-${idOf(shape)}`);
  const model = buildModel(
    { input: { kind: 'values', width: shape.inputs }, layers: [{ cell: shape.cell, hidden: shape.hidden }], readout: { width: shape.classes } },
    { seed: 1 },
  );
  const batch: Batch = {
    input: randomUniform([shape.steps, shape.batch, shape.inputs], random, -1, 1, 'f32'),
    steps: shape.steps,
    batch: shape.batch,
    lengths: null,
    targets: {
      kind: 'classes',
      perStep: true,
      classes: Int32Array.from({ length: shape.steps * shape.batch }, () => random.integer(shape.classes)),
      weights: null,
    },
    positions: shape.steps * shape.batch,
  };
  // The same batch every step, so the bench measures the step, not data preparation.
  const data: DataSource = { batchesPerEpoch: 1_000_000, carriesState: false, batch: () => batch };
  const optimizer = new AdamRule({ rate: 1e-4 });
  const trainer = new Trainer({
    model,
    data,
    optimizer,
    epochs: 1,
    gradientNormLimit: 1,
    ...(threads === undefined ? {} : { workers: threads, shardRows: shape.batch / 2 }),
  });
  return { model, trainer, optimizer };
}

function stepCase(shape: Shape): BenchCase {
  return {
    id: idOf(shape),
    unit: 'µs/token',
    setup: () => {
      const { trainer } = setup(shape);
      return () => void trainer.step();
    },
    value: (hz) => 1e6 / (hz * shape.steps * shape.batch),
  };
}

/**
 * The main step on the relaxed kernel set (fused multiply-adds), where the engine has it and the default backend runs
 * the standard set: `…relaxed-speedup` is the default step's time over the relaxed one's, both from this run.
 */
function relaxedKernelsCase(shape: Shape): BenchCase {
  return {
    id: `${idOf(shape)}.relaxed-kernels`,
    unit: 'µs/token',
    defaultOnly: true,
    setup: () => {
      // The run puts its default backend back after this case (run.ts).
      setDefaultBackend(createWebAssemblyBackend({ kernels: 'relaxed' }));
      const { trainer } = setup(shape);
      return () => void trainer.step();
    },
    value: (hz) => 1e6 / (hz * shape.steps * shape.batch),
  };
}

function updateCase(shape: Shape): BenchCase {
  return {
    id: `${idOf(shape)}.update-only`,
    unit: 'µs/token',
    setup: () => {
      const { model, trainer, optimizer } = setup(shape);
      trainer.step(); // gradients in place
      const parameters = model.parameters().map((p) => p.tensor);
      const backup = parameters.map((p) => tensor(new Float32Array(p.size), [p.size]));
      return () => {
        firstNonFiniteEntry(parameters, 'gradient');
        limitGradientNorm(parameters, 1);
        for (let i = 0; i < parameters.length; i++) backup[i].data.set(parameters[i].data);
        optimizer.update(parameters);
        firstNonFiniteEntry(parameters, 'values');
      };
    },
    value: (hz) => 1e6 / (hz * shape.steps * shape.batch),
  };
}

const main: Shape = { cell: 'lstm', batch: 32, steps: 32, inputs: 64, hidden: 128, classes: 64 };
const shapes: Shape[] = [
  main,
  { ...main, cell: 'gru' },
  { ...main, hidden: 256 },
  { ...main, cell: 'gru', hidden: 256 },
  { cell: 'lstm', batch: 1, steps: 64, inputs: 16, hidden: 32, classes: 16 },
  { cell: 'gru', batch: 1, steps: 64, inputs: 16, hidden: 32, classes: 16 },
];

/** Steps taken before the threads case is timed. */
const WARM_UP_STEPS = 100;

/**
 * The main step on training threads, in tokens per second: the batch in two shards of 16 rows, on 1 thread (the
 * trainer's own, both shards in turn) and on 2 (the trainer's thread and one started thread, a shard each); the
 * trainer's thread then adds the gradients and updates.
 */
function threadsCase(shape: Shape, count: number): BenchCase {
  return {
    id: `${idOf(shape)}.workers${count}`,
    unit: 'tokens/s',
    defaultOnly: true,
    setup: () => () => undefined,
    measureAsync: async (_backend, seconds) => {
      const model = buildModel(
        { input: { kind: 'values', width: shape.inputs }, layers: [{ cell: shape.cell, hidden: shape.hidden }], readout: { width: shape.classes } },
        { seed: 1 },
      );
      const threads = await startTrainingThreads({ count, model });
      try {
        const { trainer } = setup(shape, threads);
        // Warm-up: a new thread's JavaScript reaches full speed only after some 50–100 steps (its shards took ~17 ms
        // over steps 20–50 against ~14 ms after step 100, measured); both counts warm up alike.
        for (let i = 0; i < WARM_UP_STEPS; i++) await trainer.stepAsync();
        const started = performance.now();
        let steps = 0;
        while (performance.now() - started < seconds * 1000) {
          await trainer.stepAsync();
          steps++;
        }
        return steps / ((performance.now() - started) / 1000);
      } finally {
        await threads.close();
      }
    },
    value: (hz) => hz * shape.steps * shape.batch,
  };
}

/** The relaxed-set case exists where the default backend runs the standard set and the engine has relaxed SIMD (Node 22+). */
const kernelSets = defaultBackend().kernelSet === 'standard' && relaxedKernelsUnavailable() === null ? [relaxedKernelsCase(main)] : [];

/** A forecasting window's shape, one member's rows and five members' (see the top of this file). */
const memberRows: Shape = { cell: 'lstm', batch: 32, steps: 24, inputs: 8, hidden: 32, classes: 2 };
const fiveMembersRows: Shape = { ...memberRows, batch: 160 };

/** The time of one whole step (not per token). */
function wholeStepCase(shape: Shape): BenchCase {
  return { ...stepCase(shape), unit: 'ms/step', value: (hz) => 1e3 / hz };
}

export const cases: BenchCase[] = [
  ...shapes.map(stepCase),
  ...kernelSets,
  updateCase(main),
  threadsCase(main, 1),
  threadsCase(main, 2),
  wholeStepCase(memberRows),
  wholeStepCase(fiveMembersRows),
];

export const derived: Derived = (results): Record<string, BenchResult> => {
  const out: Record<string, BenchResult> = {};
  const step = results[idOf(main)];
  const update = results[`${idOf(main)}.update-only`];
  if (step !== undefined && update !== undefined)
    out[`${idOf(main)}.update-share`] = { value: Number((update.value / step.value).toPrecision(4)), unit: 'ratio' };
  const relaxed = results[`${idOf(main)}.relaxed-kernels`];
  if (step !== undefined && relaxed !== undefined)
    out[`${idOf(main)}.relaxed-speedup`] = { value: Number((step.value / relaxed.value).toPrecision(4)), unit: 'ratio' };
  const one = results[`${idOf(main)}.workers1`];
  const two = results[`${idOf(main)}.workers2`];
  if (one !== undefined && two !== undefined) out[`${idOf(main)}.workers2.speedup`] = { value: Number((two.value / one.value).toPrecision(4)), unit: 'ratio' };
  const member = results[idOf(memberRows)];
  const five = results[idOf(fiveMembersRows)];
  if (member !== undefined && five !== undefined)
    out[`${idOf(fiveMembersRows)}.over-b32`] = { value: Number((five.value / member.value).toPrecision(4)), unit: 'ratio' };
  return out;
};
