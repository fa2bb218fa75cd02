/**
 * `@weft/cells/description`: model descriptions and their layouts (parameter names and shapes, layer widths),
 * with nothing of the tape or the cells, for the weight-file reader and the inference runtime.
 */
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
export { ATTENTION_FORMS, MAX_HIDDEN, checkDescription, describeAnyProblems, describeProblems, hiddenProblem, isEncoderDecoder } from './description.js';
export type { LayerLayout, ModelLayout, ParameterLayout } from './layout.js';
export { attentionLayout, cellLayout, layerDirections, layerPath, modelLayout, parameterLayout } from './layout.js';
export type {
  CellPlan,
  CellShape,
  ParameterLayout as PlanParameter,
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
export type { LayerBuffers, RuntimeCell, Weights } from './plans/forward.js';
export { runtimeCell } from './plans/forward.js';
export type { SequenceShape } from './sequence-rows.js';
export { joinFeatures, reverseRows, zeroBeyond } from './sequence-rows.js';
