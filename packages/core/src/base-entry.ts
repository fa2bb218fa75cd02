/**
 * `@weft/core/base`: what every entry of weft needs and nothing more: the one error type and its helpers, the
 * plain-record check, the log-sum-exp the runtime's decoding shares with training, and the seeded generator a
 * program samples from a runtime with. No tensors, no tape, no
 * kernels table: the runtime entries import this instead of the package's root, so a page that loads them
 * unbundled loads no training module.
 */
export type { Problem, ProblemCode } from './errors.js';
export { WeftError, describeProblem, fail } from './errors.js';
export { isRecord } from './records.js';
export { logSumExp } from './kernels/softmax.js';
// The overflow-safe logistic function, for the runtime's steps of cells that are not built in.
export { logistic } from './kernels/logistic.js';
// The seeded generator, for sampling from a runtime (generateTokens, sample) with no training module loaded.
export { Random } from './random.js';
export type { DType, FloatArray } from './dtype.js';
// The kernels' argument records (types) and the product record's makers, for the runtime's calls of its kernels.
export type { ProductShape, ProductSizes, Transposed } from './kernels/shapes.js';
export { productShape, refill } from './kernels/shapes.js';
export type { GruWeights, GruWork, LayerStepAt, LstmState, LstmWeights, LstmWork, PlainWeights, StepActivation, StepAt } from './kernels/step-records.js';
export type { AdditiveGradients, AdditiveInputs, AttentionShape } from './kernels/attention.js';
export { attentionShape } from './kernels/attention.js';
