/**
 * `@weft/io/runtime/encoder-decoder`: run a trained encoder-decoder from its weight file — greedy, sampled and
 * beam-search decoding, with attention when the model has it, on the forward kernels alone. An entry of its own,
 * so pages that only stream a sequence model do not carry it (`@weft/io/runtime` stays within its budget). Like
 * `@weft/io/runtime`, it runs on WebAssembly SIMD where the platform validates it.
 */
import './choose.js';
export type { DecodedOutput, DecodeOptions, DecodingOptions, EncodedSource } from './decoding.js';
export { Decoding, EncoderDecoderRuntime } from './decoding.js';
export type { BeamOptions, BeamResult } from './beam.js';
export { searchBeams } from './beam.js';
export { createEncoderDecoderRuntime } from './create-encoder-decoder.js';
export type { WeightSource } from './source.js';
export { runtimeCounts } from './runtime.js';
export { readWeightFile } from '../weight-file.js';
export type { WeightFile, WeightMetadata } from '../weight-file.js';
