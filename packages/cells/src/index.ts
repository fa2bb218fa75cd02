/** @weft/cells: recurrent cells (plain, LSTM, GRU, your own), sequence layers and the model description. */
export type { CellMode, CellStep, FusedSequence, NamedParameter, RecurrentCell, SequenceResult, StateSlot } from './cell.js';
export type { CommonCellOptions } from './recurrence.js';
export type { LstmOptions } from './lstm.js';
export { LstmCell } from './lstm.js';
export type { GruOptions } from './gru.js';
export { GruCell } from './gru.js';
export type { PlainActivation, PlainOptions } from './plain.js';
export { PlainCell } from './plain.js';
export { fillIdentity, fillOrthogonal, fillUniform, glorotBound, orthogonalMatrix } from './init.js';
export { joinSteps, lastSteps, reverseWithinLengths, stackSteps, zeroBeyondLengths } from './sequence-ops.js';
export type { SequenceOptions } from './layer.js';
export { checkLengths, runBidirectional, runReversed, runSequence } from './layer.js';
export type {
  AnyModelDescription,
  AttentionForm,
  BuiltInCellKind,
  EmbeddingInput,
  EncoderDecoderDescription,
  LayerDescription,
  ModelDescription,
  ReadoutDescription,
  ValuesInput,
} from './description.js';
export { ATTENTION_FORMS, MAX_HIDDEN, checkDescription, describeAnyProblems, describeProblems, isEncoderDecoder } from './description.js';
export type { LayerLayout, ModelLayout, ParameterLayout } from './layout.js';
export type {
  CellPlan,
  CellShape,
  PlanSlot,
  ProgramValue,
  StepInstruction,
  StepOperation,
  StepProgram,
  StepValue,
  StepWriter,
  ValueSource,
} from './plans/plan.js';
export type { CellPlans } from './plans/index.js';
export { builtInPlans, checkPlans, isNamespacedKind, namespacedKinds, planOf } from './plans/index.js';
export { traceStep } from './plans/trace.js';
export type { PlanCellOptions } from './plan-cell.js';
export { PlanCell, stepOnTape } from './plan-cell.js';
export { attentionLayout, layerPath, modelLayout, parameterLayout } from './layout.js';
export type { EncoderDecoderRun, EncoderDecoderRunOptions } from './encoder-decoder.js';
export { EncoderDecoderModel } from './encoder-decoder.js';
export type { BuildOptions, CellMaker, CellRequest, ModelLayer, ModelRunOptions, ModelRunResult, ModelStateSlot, TokenBatch } from './model.js';
export { SequenceModel, buildModel } from './model.js';
export * as stepKernels from './kernels/index.js';
export type { AttentionStep } from './attention.js';
export { attend } from './attention.js';
export { medianOfMembers } from './ensemble.js';
