/** ONNX bytes to weight-file text and back, through importOnnx and exportOnnx. */
import type { ReadOptions } from '../weight-file.js';
import { readWeightFile, writeWeightFile } from '../weight-file.js';
import { exportOnnx } from './export.js';
import type { OnnxExportOptions } from './export.js';
import { importOnnx } from './import.js';
import type { OnnxImport, OnnxImportOptions } from './import.js';
import { decodeOnnxModel, encodeOnnxModel } from './model.js';

/** How `weightFileFromOnnx` reads the ONNX file. */
export interface OnnxReadOptions extends OnnxImportOptions {
  /** The file's name, for messages. */
  readonly file?: string;
}

/**
 * An ONNX model file as weight-file text: the model, its tensors, the weft metadata the file carries, and how it
 * binds to the ONNX graph (metadata `onnx`, see OnnxBinding).
 */
export async function weightFileFromOnnx(bytes: Uint8Array, options: OnnxReadOptions = {}): Promise<string> {
  return importedWeightFile(importOnnx(decodeOnnxModel(bytes, options.file ?? 'model.onnx'), options));
}

/** An import's weight-file text: its model and tensors, with the file's weft metadata and the binding as `onnx`. */
export async function importedWeightFile(imported: OnnxImport): Promise<string> {
  return writeWeightFile(imported.description, imported.tensors, { metadata: { ...imported.metadata, onnx: imported.binding } });
}

/** Weight-file text as an ONNX model file's bytes (the file is read and checked first). */
export async function onnxFromWeightFile(text: string, options: OnnxExportOptions & ReadOptions = {}): Promise<Uint8Array> {
  return encodeOnnxModel(exportOnnx(await readWeightFile(text, options), options));
}
