/** The trainer's public shapes: its progress events, its snapshot and its summary (its options are in trainer.ts). */
import type { TrainingState } from '@weft/core';
import type { ValidationResult } from './evaluation.js';

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
