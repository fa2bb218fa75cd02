/**
 * `@weft/io/runtime/javascript`: the runtime API on the JavaScript forward kernels only; its bundle carries no
 * WebAssembly. A runtime made here without a backend runs on JavaScript.
 */
export { Runtime, Streams, createRuntime, runtimeCounts } from './runtime.js';
export type { RuntimeOptions } from './runtime.js';
export type { WeightSource } from './source.js';
export { javascriptForward } from '@weft/core/forward/javascript';
export type { SamplingOptions, UniformSource } from './sampling.js';
export { greedy, sample } from './sampling.js';
export type { GenerateOptions } from './generate.js';
export { generateTokens } from './generate.js';
export { readWeightFile } from '../weight-file.js';
export type { WeightFile, WeightMetadata } from '../weight-file.js';
