/**
 * The one evaluation loop: a model over every batch of a source without recording (the state carried across stream
 * windows, as in training), each batch's outputs at the loss positions handed to a visitor. The trainer's
 * validation is `figuresOn` below; the command's held-out figures visit the same loop.
 */
import { Tape, backendOf, defaultBackend } from '@weft/core';
import type { Backend, BufferPool, FloatArray, Tensor } from '@weft/core';
import type { Batch, DataSource } from '../data.js';
import { classificationMetrics, regressionMetrics } from '../metrics.js';
import { runOnBatch } from './lookback.js';
import type { TrainableModel } from './lookback.js';
import { taskRows } from './task.js';

/** Where an evaluation computes. */
export interface SourceRunOptions {
  /** The backend to run on: by default the one holding the model's parameters. */
  readonly backend?: Backend;
  /** The pool the evaluation's buffers come from and go back to: by default the backend's. */
  readonly pool?: BufferPool;
}

/** What an evaluation visitor sees of one batch: the model's outputs at the positions the loss is taken over. */
export interface OutputRows {
  /** How many positions: steps × rows for per-step targets, rows for one target per sequence. */
  readonly rows: number;
  /** The outputs there, [rows, width] row-major, valid only during the visit. */
  readonly outputs: FloatArray;
  /** Outputs per position (the model's output width). */
  readonly width: number;
  /** The weight of each position (0 for padding), or null when every position counts once. */
  readonly weights: Float64Array | null;
}

/** The model's figures on a source: the trainer's validation. */
export interface ValidationResult {
  /** Mean loss: cross-entropy in nats for classes, mean squared error for values. */
  readonly loss: number;
  /** Accuracy for classes, mean absolute error for values. */
  readonly metric: number;
  /** Which metric `metric` is. */
  readonly metricName: 'accuracy' | 'meanAbsoluteError';
  /** e^loss for classes (perplexity), else equal to the loss (mean squared error). */
  readonly perplexity: number;
}

/** Runs `model` over every batch of `source` (epoch 0) without recording, handing each batch to `visit`. */
export function forEachOutputBatch(
  model: TrainableModel,
  source: DataSource,
  visit: (batch: Batch, rows: OutputRows) => void,
  options: SourceRunOptions = {},
): void {
  const parameters = model.parameters();
  const backend = options.backend ?? (parameters.length > 0 ? backendOf(parameters[0].tensor.data) : defaultBackend());
  const pool = options.pool ?? backend.pool;
  const tape = new Tape({ backend, pool, recording: false });
  let carried: Tensor[] | null = null;
  try {
    for (let i = 0; i < source.batchesPerEpoch; i++) {
      const batch = source.batch(0, i);
      const result = runOnBatch(model, tape, batch, source.carriesState && carried !== null ? carried : undefined, { training: false });
      const picked = taskRows(tape, result.outputs, batch);
      visit(batch, { rows: picked.rows, outputs: picked.outputs.data, width: picked.outputs.shape[1], weights: picked.weights });
      if (source.carriesState) {
        const previous: Tensor[] | null = carried;
        carried = result.state.map((s, k) => (previous === null ? tape.keep(s) : tape.keep(s, previous[k])));
      }
      tape.clear();
    }
  } finally {
    tape.clear();
    // The carried state's buffers came from the pool: give them back for the next evaluation.
    if (carried !== null) for (const t of carried as Tensor[]) pool.give(t.data);
  }
}

/** Loss and metric of `model` over a whole source: cross-entropy and accuracy for classes, MSE and MAE for values. */
export function figuresOn(model: TrainableModel, source: DataSource, options: SourceRunOptions = {}): ValidationResult {
  let lossSum = 0;
  let metricSum = 0;
  let count = 0;
  let kind: 'classes' | 'values' = 'classes';
  forEachOutputBatch(
    model,
    source,
    (batch, { rows, outputs, width, weights }) => {
      const targets = batch.targets;
      if (targets.kind === 'classes') {
        const m = classificationMetrics(outputs, targets.classes, weights, rows, width);
        lossSum += m.crossEntropy * m.count;
        metricSum += m.accuracy * m.count;
        count += m.count;
      } else {
        kind = 'values';
        const m = regressionMetrics(outputs, targets.values.data, weights, rows, targets.width);
        lossSum += m.meanSquaredError * m.count;
        metricSum += m.meanAbsoluteError * m.count;
        count += m.count;
      }
    },
    options,
  );
  const loss = count > 0 ? lossSum / count : 0;
  return {
    loss,
    metric: count > 0 ? metricSum / count : 0,
    metricName: kind === 'classes' ? 'accuracy' : 'meanAbsoluteError',
    perplexity: kind === 'classes' ? Math.exp(loss) : loss,
  };
}
