/** The trainer's public shapes: its options, its progress events, its snapshot and its summary. */
import type { Backend, TrainingState } from '@weft/core';
import type { DataSource } from '../data.js';
import type { UpdateRule } from '../update-rule.js';
import type { ScheduleDescription } from '../schedule.js';
import type { ValidationResult } from './evaluation.js';
import type { TrainableModel } from './lookback.js';
import type { ShardWorkers } from './shards.js';
import type { Trainer } from '../trainer.js';

/** What a `Trainer` trains, on what, and how. */
export interface TrainerOptions {
  /**
   * The model whose parameters are trained in place: a sequence model, or an encoder-decoder trained on batches of
   * pairs (`pairBatches`).
   */
  readonly model: TrainableModel;
  /** The training batches. */
  readonly data: DataSource;
  /** The update rule (SGD, Adam, RMSProp, Adagrad). */
  readonly optimizer: UpdateRule;
  /** Passes over `data` (a whole number ≥ 1); the run has epochs × batches-per-epoch steps. */
  readonly epochs: number;
  /** The backend to compute on: by default the one whose memory holds the model's parameters. */
  readonly backend?: Backend;
  /** Held-out batches for validation, early stopping and keeping the best weights. */
  readonly validation?: DataSource;
  /** The learning-rate schedule; default constant. */
  readonly schedule?: ScheduleDescription;
  /** Scale the gradients down so their global norm is at most this (Pascanu et al. 2013; `limitGradientNorm`). */
  readonly gradientNormLimit?: number;
  /** Limit every gradient entry to ±this (`limitGradientValues`). */
  readonly gradientValueLimit?: number;
  /** Validate every this many steps (and at the end of each epoch). Default: once per epoch. */
  readonly validateEvery?: number;
  /** Stop after this many validations without improvement, restoring the best weights. */
  readonly patience?: number;
  /**
   * When the run ends (epochs done or patience out, not an abort), put back the weights of the best validation
   * (default true when there is validation data), so a run that got worse at the end does not keep the worse weights.
   */
  readonly keepBest?: boolean;
  /**
   * Cut each batch into shards of this many rows and add their gradients in shard order (see training/shards.ts):
   * the same bits in this thread as on any number of `workers`. Default: 8 with workers, else no cut.
   */
  readonly shardRows?: number;
  /**
   * Threads that compute the shards (`startTrainingThreads` from `@weft/optim/node`); steps are then asynchronous
   * (`stepAsync`, `run`).
   */
  readonly workers?: ShardWorkers;
  /** Seed of the trainer's generator (dropout masks); default 0. */
  readonly seed?: number | string;
  /** Ends `run()` after the current step when aborted (stoppedBy `signal`). */
  readonly signal?: AbortSignal;
  /** Called after each step, each validation, each skipped update and at the end. */
  readonly onProgress?: (event: TrainingEvent) => void;
  /** Awaited by `run()` after every step (for example to write a checkpoint every N steps). */
  readonly afterStep?: (trainer: Trainer) => void | Promise<void>;
}

/** What `onProgress` receives. */
export interface TrainingEvent {
  /** A step, a validation, an update skipped for a non-finite gradient, or the end of the run. */
  readonly kind: 'step' | 'validation' | 'skipped' | 'finished';
  /** Steps taken so far. */
  readonly step: number;
  /** The epoch in progress (from 0). */
  readonly epoch: number;
  /** Steps in the whole run. */
  readonly totalSteps: number;
  /** The latest step's training loss. */
  readonly loss: number;
  /** The global gradient norm of the latest step, before clipping. */
  readonly gradientNorm: number;
  /** The rate the latest update used (base rate × schedule). */
  readonly learningRate: number;
  /** Real (unpadded) positions trained per second in this run so far. */
  readonly positionsPerSecond: number;
  /** Estimated time to the end of the run, from the pace so far. */
  readonly secondsLeft: number;
  /** For a validation event: the validation loss. */
  readonly validationLoss?: number;
  /** Accuracy for classes, mean absolute error for values. */
  readonly validationMetric?: number;
  /** Which metric `validationMetric` is. */
  readonly validationMetricName?: 'accuracy' | 'meanAbsoluteError';
  /** For a skipped update: why (the parameter and offset of the first non-finite entry). */
  readonly reason?: string;
}

/** Everything needed to resume a run exactly, as plain data (what a checkpoint stores): core's `TrainingState`. */
export type TrainingSnapshot = TrainingState;

/** How a `run()` ended. */
export interface TrainingSummary {
  /** Steps taken in all. */
  readonly steps: number;
  /** Why it ended: every epoch done, patience out (early stopping), or the abort signal. */
  readonly stoppedBy: 'epochs' | 'patience' | 'signal';
  /** The last step's training loss. */
  readonly lastLoss: number;
  /** The best validation's figures; null without validation data. */
  readonly bestValidation: ValidationResult | null;
  /** The step whose weights the model holds after the run: the best validation's when they were put back. */
  readonly keptStep: number;
  /** Updates skipped for non-finite gradients. */
  readonly skippedUpdates: number;
}
