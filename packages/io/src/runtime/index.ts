/**
 * `@weft/io/runtime`: run a trained model from its weight file with the step kernels alone. This entry imports
 * the core and cell kernels and the weight-file reader, but not the tape, the optimisers or the trainer.
 */
export { Runtime, Streams, createRuntime, runtimeCounts } from './runtime.js';
export type { SamplingOptions, UniformSource } from './sampling.js';
export { greedy, sample } from './sampling.js';
export type { GenerateOptions } from './generate.js';
export { generateTokens } from './generate.js';
export type { BeamOptions, BeamResult } from './beam.js';
export { EncoderDecoderRuntime, createEncoderDecoderRuntime } from './beam.js';
export { readWeightFile } from '../weight-file.js';
export type { WeightFile, WeightMetadata } from '../weight-file.js';
