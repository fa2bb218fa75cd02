/** @weft/optim: optimisers, clipping, schedules, data batching and the truncated-BPTT trainer. */
export type { UpdateRuleState } from '@weft/core';
export { UpdateRule } from './update-rule.js';
export type { SgdOptions } from './sgd.js';
export { SgdRule } from './sgd.js';
export type { AdamOptions } from './adam.js';
export { AdamRule } from './adam.js';
export type { RmsPropOptions } from './rmsprop.js';
export { RmsPropRule } from './rmsprop.js';
export type { AdagradOptions } from './adagrad.js';
export { AdagradRule } from './adagrad.js';
export type { NonFiniteEntry } from './clipping.js';
export { limitGradientNorm, limitGradientValues, firstNonFiniteEntry, gradientNorm } from './clipping.js';
export type { ScheduleDescription } from './schedule.js';
export { checkSchedule, scheduleFactor } from './schedule.js';
export type { ClassificationMetrics, RegressionMetrics } from './metrics.js';
export { classificationMetrics, regressionMetrics } from './metrics.js';
export type {
  Batch,
  BatchTargets,
  DataSource,
  LabelledSequence,
  PairSetOptions,
  SequenceSetOptions,
  StreamOptions,
  TokenPair,
  TokenStreamOptions,
  ValueStreamOptions,
  WholeStreamOptions,
} from './data.js';
export { pairBatches, sequenceBatches, streamBatches, wholeStream } from './data.js';
export type { TrainableModel } from './training/lookback.js';
export type { ShardWorkers } from './training/shards.js';
export type { ThreadGroupOptions, ThreadStart } from './training/thread-group.js';
export { ThreadGroup, serveShardsInWorker, startThreadGroup, webWorkerThread } from './training/thread-group.js';
export type { TrainingEvent, TrainerOptions, TrainingSnapshot, TrainingSummary } from './trainer.js';
export type { ValidationResult } from './training/evaluation.js';
export { Trainer } from './trainer.js';
