/**
 * `@weft/io/onnx`: models in and out through the ONNX open standard — read an ONNX file into a weft weight file,
 * write a weft model as an ONNX file, and the ONNX messages as plain data. Not part of the runtime bundle.
 */
export type { OnnxAttribute, OnnxGraph, OnnxModel, OnnxNode, OnnxOperatorSet, OnnxTensor, OnnxValueInfo } from './model.js';
export { decodeOnnxModel, decodeTensor as decodeOnnxTensor, encodeOnnxModel } from './model.js';
export type { OnnxBinding, OnnxBoundInput, OnnxBoundOutput, OnnxImport, OnnxImportOptions, OnnxStateNames } from './import.js';
export { importOnnx } from './import.js';
export type { OnnxExportOptions } from './export.js';
export { ONNX_IR_VERSION, ONNX_OPSET, exportOnnx } from './export.js';
export type { OnnxReadOptions } from './convert.js';
export { importedWeightFile, onnxFromWeightFile, weightFileFromOnnx } from './convert.js';
