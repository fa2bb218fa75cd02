/** @weft/io: the weight file, checkpoints, and (under `@weft/io/runtime`) the inference runtime. */
export { decodeBase64Into, decodedLength, encodeBase64 } from './base64.js';
export { fromHalfBits, toHalfBits } from './half.js';
export { dequantizeRows, quantizeRows } from './quantize.js';
export { sha256Hex } from './digest.js';
export type { NamedValues, ReadOptions, StoredDType, WeightFile, WeightMetadata, WriteOptions } from './weight-file.js';
export { FORMAT_TAG, FORMAT_VERSION, readWeightFile, writeWeightFile } from './weight-file.js';
export type { LoadOptions } from './model-file.js';
export { loadEncoderDecoder, loadModel, modelTensors } from './model-file.js';
export { readWeightFileBlob, weightFileBlob } from './blob.js';
export type { Checkpoint } from './checkpoint.js';
export { readCheckpoint, writeCheckpoint } from './checkpoint.js';
export { checkMetadata, metadataProblems } from './metadata.js';
export { layoutProblems } from './layout-check.js';
