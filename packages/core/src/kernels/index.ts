/**
 * The JavaScript kernels: out-first, explicit dimensions, no allocation. They are the JavaScript backend's kernel
 * table (backend/kernel-table.ts) and the reference twins of the WebAssembly backend's kernels.
 */
export { affineRows, matmul, matmulInto, matmulNaive } from './matmul.js';
export type { ProductShape, ProductSizes, Transposed } from './shapes.js';
export { productShape, refill, refillStep, transposedOf, transposesA, transposesB } from './shapes.js';
export type { ColumnBlock } from './columns.js';
export { addFromColumns, addToColumns, copyFromColumns, copyToColumns } from './columns.js';
export { add, addAt, addInto, addRow, addScaledInto, copyAt, multiply, multiplyInto, scale, subtract, sumRows, sumRowsInto } from './elementwise.js';
export { exp, log, relu, reluGradientInto, sigmoid, sigmoidGradientInto, tanh, tanhGradientInto } from './activations.js';
export { dot, firstNonFinite, limitEntries, maxAbs, sum, sumOfSquares } from './reductions.js';
export { crossEntropyRows, logSumExp } from './softmax.js';
export type { AdditiveGradients, AdditiveInputs, AttentionShape } from './attention.js';
export {
  attentionContext,
  attentionContextBackward,
  attentionScores,
  attentionScoresAdditive,
  attentionScoresAdditiveBackward,
  attentionScoresBackward,
  attentionShape,
  softmaxWithinLengths,
  softmaxWithinLengthsBackward,
} from './attention.js';
export { logistic } from './logistic.js';
export { lstmLayerStep, lstmStepBackward, lstmStepForward } from './lstm-step.js';
export { gruBackwardCandidate, gruBackwardReset, gruLayerStep, gruResetHidden, gruStepFinish, gruUpdateReset } from './gru-step.js';
export { plainLayerStep, plainStepBackward, plainStepForward } from './plain-step.js';
export type { AdamBuffers, AdamConstants, MomentumBuffers, MomentumConstants } from './rules.js';
export { adamUpdate, nesterovUpdate, sgdUpdate } from './rules.js';
export type {
  GruFinishInputs,
  GruForm,
  GruSaved,
  GruStepGradients,
  GruStepOut,
  GruWeights,
  GruWork,
  LayerStepAt,
  LstmArriving,
  LstmSaved,
  LstmState,
  LstmStepGradients,
  LstmStepOut,
  LstmWeights,
  LstmWork,
  PlainStepGradients,
  PlainWeights,
  StepActivation,
  StepAt,
} from './step-records.js';
