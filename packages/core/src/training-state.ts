/** Training state as plain data: the shapes a trainer snapshots into and a checkpoint stores. */
import type { RandomState } from './random.js';

/** An update rule's state as plain data, for checkpoints: exact as JSON numbers. */
export interface UpdateRuleState {
  /** The rule's kind (`sgd`, `adam`, `rmsprop`, `adagrad`); `restore` refuses another kind's state. */
  readonly kind: string;
  /** Updates taken so far (Adam's t). */
  readonly steps: number;
  /** Per slot name, one array of values per parameter, in parameter order. */
  readonly slots: Readonly<Record<string, readonly (readonly number[])[]>>;
}

/**
 * The whole state of a training run as plain data (exact as JSON numbers): what a trainer's `snapshot()` gives and
 * its `restore()` takes, and what a checkpoint stores. It lives in core, the one package below both the trainer
 * (`@weft/optim`) and the checkpoint reader (`@weft/io`), so that neither depends on the other and the shape is
 * written once.
 */
export interface TrainingState {
  /** Steps taken. */
  readonly step: number;
  /** Where the data stands: the next batch to train on. */
  readonly cursor: {
    /** The epoch of the next batch. */
    readonly epoch: number;
    /** The index of the next batch within its epoch. */
    readonly index: number;
  };
  /** The parameters' values, by name. */
  readonly parameters: Readonly<Record<string, readonly number[]>>;
  /** The update rule's state (moments, velocities, update count). */
  readonly optimizer: UpdateRuleState;
  /** The trainer's generator's state. */
  readonly random: RandomState;
  /** The state carried into the next window of a stream, slot by slot; null when none. */
  readonly carried: readonly (readonly number[])[] | null;
  /** The best validation so far, for early stopping and keeping the best weights. */
  readonly best: {
    /** The best validation loss so far (Infinity before the first validation). */
    readonly loss: number;
    /** The step of that validation (−1 before the first). */
    readonly step: number;
    /** The parameters at that validation, by name; null when none were kept. */
    readonly parameters: Readonly<Record<string, readonly number[]>> | null;
    /** Validations since the best one (the early-stopping count). */
    readonly stale: number;
  };
  /** Updates skipped so far for non-finite gradients. */
  readonly skipped: number;
}
