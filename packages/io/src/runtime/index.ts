/**
 * `@weft/io/runtime`: run a trained model from its weight file with the forward kernels alone. This entry imports
 * the forward kernels (JavaScript, and WebAssembly SIMD in a module of its own), the weight-file reader, and not the
 * tape, the optimisers or the trainer. By default a runtime runs on WebAssembly SIMD where the platform validates it;
 * `@weft/io/runtime/javascript` is the same API with no WebAssembly in its bundle. Encoder-decoders run from
 * `@weft/io/runtime/encoder-decoder`.
 */
import './choose.js';
export { Runtime, Streams, runtimeCounts } from './runtime.js';
export type { RuntimeOptions } from './runtime.js';
export type { RuntimeBackendChoice } from './choose.js';
export { forwardBackend } from './choose.js';
export { createRuntime } from './create.js';
export type { WeightSource } from './source.js';
export type { RuntimeChoiceOptions } from './create.js';
export type { SamplingOptions, UniformSource } from './sampling.js';
export { greedy, sample } from './sampling.js';
export type { GenerateOptions } from './generate.js';
export { generateTokens } from './generate.js';
export { readWeightFile } from '../weight-file.js';
export type { WeightFile, WeightMetadata } from '../weight-file.js';
