/** @weft/core: tensors over typed arrays, the tape, operations, kernels and gradient checks. */
export type { DType, FloatArray } from './dtype.js';
export { bytesPerElement, dtypeOf, isDType } from './dtype.js';
export type { Problem, ProblemCode } from './errors.js';
export { WeftError, describeProblem, fail, formatShape } from './errors.js';
export { isRecord } from './records.js';
export { BufferPool } from './pool.js';
export type { RandomState } from './random.js';
export type { TrainingState, UpdateRuleState } from './training-state.js';
export { Random } from './random.js';
export { Tensor, convert, detach, filled, randomNormal, randomUniform, resetGradients, sameShape, sizeOfShape, tensor, trainable, zeros } from './tensor.js';
export type { OperationKind, TapeOptions } from './tape.js';
export { Tape, TapeNode, noTensor } from './tape.js';
export type { MatmulOptions } from './ops/matmul.js';
export { matmul } from './ops/matmul.js';
export { add, multiply, scale, subtract } from './ops/arithmetic.js';
export { exp, log, relu, sigmoid, tanh } from './ops/activations.js';
export { concat, slice } from './ops/concat.js';
export { mean, sum } from './ops/reduce.js';
export { gatherRows } from './ops/gather.js';
export { reshape } from './ops/reshape.js';
export { dropout } from './ops/dropout.js';
export type { CrossEntropyOptions, SquaredErrorOptions } from './ops/losses.js';
export { meanSquaredError, crossEntropyAtTargets } from './ops/losses.js';
export type { DirectionalGradientCheck, FailedEntry, GradientCheckOptions, GradientReport, PassRule, TensorGradientCheck } from './gradient-check.js';
export { checkGradients } from './gradient-check.js';
export * as kernels from './kernels/index.js';
export { indexOfLargest, logSumExp } from './kernels/softmax.js';
export type { Backend, BackendName, KernelName, KernelSet, KernelTable, WebAssemblyBackendOptions } from './backend/index.js';
export {
  KERNEL_NAMES,
  backendNamed,
  backendOf,
  compiledKernels,
  createWebAssemblyBackend,
  defaultBackend,
  environmentBackendChoice,
  environmentKernelChoice,
  javascriptBackend,
  javascriptKernels,
  defaultKernelSet,
  relaxedKernelsUnavailable,
  setDefaultBackend,
  useCompiledKernels,
  webAssemblyBackend,
  webAssemblyUnavailable,
} from './backend/index.js';
