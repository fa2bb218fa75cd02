/** The training worker: trains off the main thread and reports progress in batches, at most every 100 ms. */
import { Random, add, checkGradients, multiply, randomUniform, sum } from '@weft/core';
import { GruCell, LstmCell, PlainCell, runSequence } from '@weft/cells';
import type { RecurrentCell } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import type { ChartPoint, FromWorker, ToWorker } from './protocol.js';
import { startThreadGroup, webWorkerThread } from '@weft/optim';
import type { ShardWorkers, TrainableModel, TrainingSummary } from '@weft/optim';
import { f32Bits, prepare } from './training.js';

/** Web Workers running shard.js, as many as asked: the page's training threads (cross-origin isolated pages only). */
function startThreads(model: TrainableModel, count: number): Promise<ShardWorkers> {
  return startThreadGroup({ count, model, spawn: (start) => webWorkerThread(new Worker(new URL('./shard.js', import.meta.url), { type: 'module' }), start) });
}

/** Threads a run may use: the cores the browser reports, where the page may share memory; else none. */
function availableThreads(): number {
  const isolated = (self as unknown as { crossOriginIsolated?: boolean }).crossOriginIsolated === true;
  return isolated ? Math.max(1, navigator.hardwareConcurrency || 1) : 1;
}

let controller: AbortController | null = null;
const post = (message: FromWorker) => (self as unknown as { postMessage(m: FromWorker): void }).postMessage(message);

function gradientChecks(): FromWorker {
  const cells: [string, () => RecurrentCell][] = [];
  for (const mode of ['fused', 'composed'] as const) {
    cells.push(
      [`LSTM (${mode})`, () => new LstmCell({ inputWidth: 3, hidden: 4, dtype: 'f64', mode, random: 5 })],
      [`LSTM with peepholes (${mode})`, () => new LstmCell({ inputWidth: 3, hidden: 4, dtype: 'f64', mode, peepholes: true, random: 1 })],
      [`GRU, reset before (${mode})`, () => new GruCell({ inputWidth: 3, hidden: 4, dtype: 'f64', mode, random: 2 })],
      [`GRU, reset after (${mode})`, () => new GruCell({ inputWidth: 3, hidden: 4, dtype: 'f64', mode, resetAfterProduct: true, random: 3 })],
      [`plain tanh (${mode})`, () => new PlainCell({ inputWidth: 3, hidden: 4, dtype: 'f64', mode, random: 4 })],
    );
  }
  const reports = cells.map(([label, make]) => {
    const cell = make();
    const random = new Random(label);
    for (const p of cell.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
    const inputs = randomUniform([5, 3, 3], random, -1, 1, 'f64');
    const weights = randomUniform([5, 3, 4], random, -1, 1, 'f64');
    const report = checkGradients(
      (tape) => {
        const { outputs, state } = runSequence(tape, cell, inputs, { lengths: [5, 3, 1] });
        return add(tape, sum(tape, multiply(tape, outputs, weights)), sum(tape, multiply(tape, state[0], state[0])));
      },
      [...cell.parameters().map((p) => p.tensor), inputs],
    );
    return { label, passed: report.passed, worst: Math.max(...report.tensors.map((t) => t.worstRelativeError)) };
  });
  return { type: 'checked', reports };
}

self.onmessage = async (event: MessageEvent<ToWorker>) => {
  const message = event.data;
  if (message.type === 'stop') {
    controller?.abort();
    return;
  }
  if (message.type === 'check') {
    post(gradientChecks());
    return;
  }
  try {
    controller = new AbortController();
    const pending = { training: [] as ChartPoint[], validation: [] as ChartPoint[], gradientNorm: [] as ChartPoint[] };
    let lastPost = 0;
    let total = 0;
    const flush = (step: number) => {
      post({ type: 'progress', ...pending, step, totalSteps: total });
      pending.training = [];
      pending.validation = [];
      pending.gradientNorm = [];
      lastPost = performance.now();
    };
    const config = { ...message.config, workers: message.config.workers ?? availableThreads() };
    if (config.workers > availableThreads())
      throw new Error(`${config.workers} training threads asked, ${availableThreads()} available (threads need a cross-origin isolated page)`);
    const { model, trainer, threads, metadata, heldOut } = await prepare(
      config,
      (e) => {
        if (e.kind === 'step') {
          pending.training.push({ step: e.step, value: e.loss });
          if (Number.isFinite(e.gradientNorm)) pending.gradientNorm.push({ step: e.step, value: e.gradientNorm });
          if (message.config.maxSteps !== undefined && e.step >= message.config.maxSteps) controller?.abort();
        }
        if (e.kind === 'validation') pending.validation.push({ step: e.step, value: e.validationLoss! });
        total = Math.min(e.totalSteps, message.config.maxSteps ?? Infinity);
        if (performance.now() - lastPost > 100) flush(e.step);
      },
      controller.signal,
      startThreads,
    );
    post({ type: 'started', workers: threads?.count ?? 1 });
    let summary: TrainingSummary;
    try {
      summary = await trainer.run();
    } finally {
      await threads?.close();
    }
    flush(summary.steps);
    const weightFile = await writeWeightFile(model.description, modelTensors(model), { metadata });
    post({
      type: 'done',
      steps: summary.steps,
      lastLoss: summary.lastLoss,
      lastLossBits: f32Bits(summary.lastLoss),
      weightFile,
      backend: trainer.backend.name,
      workers: threads?.count ?? 1,
      heldOut: heldOut(),
    });
  } catch (error) {
    post({ type: 'failed', message: (error as Error).message });
  }
};
