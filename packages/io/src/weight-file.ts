/**
 * The weight file: writing and strict reading. The format is specified in docs/weight-format.md; in short
 *
 *   { "format": "weft-weights", "version": 2, "model": <description>, "metadata": {…},
 *     "tensors": [ { "name", "shape", "dtype": "f32" | "f16" | "i8", "data": <base64>, "scales"?: <base64> } ],
 *     "digest": { "algorithm": "SHA-256", "hex": "…" } }
 *
 * Reading checks everything before it trusts anything: the text's size and nesting depth before parsing, every
 * field's type and range, shapes against the model description, element counts against a cap before any
 * buffer is made, base64 lengths against shapes, and the SHA-256 digest over the tensor bytes. Keys named
 * `__proto__`, `constructor` or `prototype` are refused wherever they appear. Every problem found is collected,
 * each with its JSON path, and thrown together.
 *
 * Why one file of this length: the writer and the reader are the two halves of one format, and every check the
 * reader makes (limits, layout, base64, digest) sits beside the field it guards, so the format is read in one place.
 */
import { WeftError, fail, isRecord } from '@weft/core/base';
import type { FloatArray, Problem } from '@weft/core/base';
import { checkPlans, describeAnyProblems, namespacedKinds } from '@weft/cells/description';
import type { CellPlans } from '@weft/cells/description';
import type { AnyModelDescription } from '@weft/cells/description';
import { encodeBase64 } from './base64.js';
import { sha256Hex } from './digest.js';
import { readTensors, rowsAndCols } from './weight-tensors.js';
import type { NamedValues, StoredDType } from './weight-tensors.js';

export type { NamedValues, StoredDType } from './weight-tensors.js';
export { respellVersionOneName } from './weight-tensors.js';
import { toHalfBits } from './half.js';
import { quantizeRows } from './quantize.js';

/** The `format` field every weight file carries. */
export const FORMAT_TAG = 'weft-weights';
/**
 * The version this reader writes; it reads this version and older ones. Version 2 spells layer parameters as
 * messages do (`layers[0].forward.input`); version 1 files (`layers.0.forward.input`) are read with their names
 * respelled, so a model, a checkpoint and its error messages all use one spelling.
 */
export const FORMAT_VERSION = 2;

/** What a user needs to run the model with nothing else. Every field is optional; unknown fields are kept. */
export interface WeightMetadata {
  /** `next-token`, `forecast`, `classification`, `sequence-to-sequence`, or your own word. */
  readonly task?: string;
  /** Token strings by id, for models over tokens. */
  readonly vocabulary?: readonly string[];
  /** Per-feature value normalisation: x' = (x − mean) / deviation. */
  readonly normalisation?: {
    /** The training data's mean of each input feature. */
    readonly mean: readonly number[];
    /** The training data's standard deviation of each input feature. */
    readonly deviation: readonly number[];
  };
  /** Class names by index, for classifiers. */
  readonly classes?: readonly string[];
  /** How the model was trained, as flat fields (data file, its digest, flags, figures), for the record. */
  readonly training?: Readonly<Record<string, string | number | boolean | null>>;
  readonly [key: string]: unknown;
}

/** A weight file after reading: checked, decoded and (by default) verified by its digest. */
export interface WeightFile {
  /** The format version the file was written in. */
  readonly version: number;
  /** The model description, checked. */
  readonly model: AnyModelDescription;
  /** The file's metadata (empty when it has none). */
  readonly metadata: WeightMetadata;
  /** Tensors in file order, decoded to f32 (f16 widened, i8 dequantised). */
  readonly tensors: readonly NamedValues[];
  /** The stored dtype of each tensor, by name. */
  readonly storedAs: Readonly<Record<string, StoredDType>>;
  /** The SHA-256 digest the file states for its tensor bytes, as hex. */
  readonly digest: string;
  /** True when the stored digest was computed and matched the tensor bytes. */
  readonly digestVerified: boolean;
  /** False when the read skipped the digest (`verifyDigest: false`); `digestVerified` is then false too. */
  readonly digestChecked: boolean;
  /** Training state, present only in checkpoints (checked by readCheckpoint). */
  readonly training?: unknown;
}

/** How `writeWeightFile` writes. */
export interface WriteOptions {
  /** Training state to carry (checkpoints only). */
  readonly training?: unknown;
  /**
   * Stored dtype for every tensor (default f32), or per tensor name. A single `i8` for the whole file quantises
   * the matrices only; vectors stay f32. Per-name choices are taken as given.
   */
  readonly dtype?: StoredDType | Readonly<Record<string, StoredDType>>;
  /** What the model needs beside its weights (vocabulary, normalisation, classes, training record). */
  readonly metadata?: WeightMetadata;
}

/** Limits and checks of `readWeightFile`: every limit is checked before anything of that size is made. */
export interface ReadOptions {
  /** Largest total number of tensor elements accepted (default 50,000,000). */
  readonly maxElements?: number;
  /** Largest text accepted, in characters (default 512 MiB worth). */
  readonly maxCharacters?: number;
  /** Deepest JSON nesting accepted (default 64). */
  readonly maxDepth?: number;
  /**
   * The SHA-256 digest over the tensor bytes: `true` (default) computes it and refuses a mismatch; `'report'`
   * computes it and reports a mismatch in `digestVerified` instead (for inspection); `false` skips hashing
   * (`digestChecked` false) for a caller that trusts the file's source.
   */
  readonly verifyDigest?: boolean | 'report';
  /**
   * When true, NaN and ±Infinity weights are accepted (for inspecting a damaged file); by default the first
   * non-finite value of each tensor is a problem, because a model with one computes NaN for every input.
   */
  readonly allowNonFinite?: boolean;
  /**
   * Plans of the file's cells that are not built in, by the kind the file names them with; a file naming a kind
   * with no plan here is refused at that layer's `cell`.
   */
  readonly plans?: CellPlans;
}

const forbiddenKeys = new Set(['__proto__', 'constructor', 'prototype']);

function littleEndianBytes(values: FloatArray, dtype: StoredDType, shape: readonly number[]): { data: Uint8Array; scales: Uint8Array | null } {
  const count = values.length;
  if (dtype === 'f32') {
    const out = new Uint8Array(count * 4);
    const view = new DataView(out.buffer);
    for (let i = 0; i < count; i++) view.setFloat32(i * 4, values[i], true);
    return { data: out, scales: null };
  }
  if (dtype === 'f16') {
    const out = new Uint8Array(count * 2);
    const view = new DataView(out.buffer);
    for (let i = 0; i < count; i++) view.setUint16(i * 2, toHalfBits(values[i]), true);
    return { data: out, scales: null };
  }
  const [rows, cols] = rowsAndCols(shape);
  const codes = new Int8Array(count);
  const scales = new Float32Array(rows);
  quantizeRows(values, rows, cols, codes, scales);
  const scaleBytes = new Uint8Array(rows * 4);
  const view = new DataView(scaleBytes.buffer);
  for (let r = 0; r < rows; r++) view.setFloat32(r * 4, scales[r], true);
  return { data: new Uint8Array(codes.buffer), scales: scaleBytes };
}

function concatenate(parts: readonly Uint8Array[]): Uint8Array {
  const total = parts.reduce((n, p) => n + p.length, 0);
  const out = new Uint8Array(total);
  let offset = 0;
  for (const part of parts) {
    out.set(part, offset);
    offset += part.length;
  }
  return out;
}

/**
 * Writes a weight file as text: the header (format, version, model, metadata, digest) pretty-printed, then one
 * line per tensor.
 */
export async function writeWeightFile(model: AnyModelDescription, tensors: readonly NamedValues[], options: WriteOptions = {}): Promise<string> {
  // A cell of your own is written under its namespaced kind, its tensors with their shapes; reading it back asks
  // for its plan.
  const problems = describeAnyProblems(model, 'model', namespacedKinds(model));
  if (problems.length > 0) throw new WeftError(problems);
  const entries: string[] = [];
  const digestParts: Uint8Array[] = [];
  for (const t of tensors) {
    // A single i8 choice applies to matrices; vectors (biases, peepholes) stay f32, being small and sensitive.
    const chosen = typeof options.dtype === 'string' ? options.dtype : (options.dtype?.[t.name] ?? 'f32');
    const dtype = typeof options.dtype === 'string' && chosen === 'i8' && t.shape.length < 2 ? 'f32' : chosen;
    if (dtype !== 'f32' && dtype !== 'f16' && dtype !== 'i8') fail('invalid_option', `writeWeightFile.dtype.${t.name}`, "'f32', 'f16' or 'i8'", String(dtype));
    const { data, scales } = littleEndianBytes(t.values, dtype, t.shape);
    digestParts.push(data);
    if (scales !== null) digestParts.push(scales);
    const entry: Record<string, unknown> = { name: t.name, shape: t.shape, dtype, data: encodeBase64(data) };
    if (scales !== null) entry.scales = encodeBase64(scales);
    entries.push(JSON.stringify(entry));
  }
  const digest = await sha256Hex(concatenate(digestParts));
  const header = {
    format: FORMAT_TAG,
    version: FORMAT_VERSION,
    model,
    metadata: options.metadata ?? {},
    digest: { algorithm: 'SHA-256', hex: digest },
    ...(options.training === undefined ? {} : { training: options.training }),
  };
  const head = JSON.stringify(header, null, 2);
  // Put the tensors last, one per line, inside the same JSON object.
  return `${head.slice(0, -2)},\n  "tensors": [\n    ${entries.join(',\n    ')}\n  ]\n}\n`;
}

/** Scans the text for nesting deeper than `maxDepth` outside strings (JSON.parse would recurse into it). */
function nestingProblem(text: string, maxDepth: number): Problem | null {
  let depth = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92 /* \ */) i++;
      else if (c === 34 /* " */) inString = false;
    } else if (c === 34) {
      inString = true;
    } else if (c === 123 || c === 91) {
      if (++depth > maxDepth)
        return { code: 'bad_weight_file', path: `(character ${i})`, expected: `nesting at most ${maxDepth} deep`, received: 'deeper nesting' };
    } else if (c === 125 || c === 93) {
      depth--;
    }
  }
  return null;
}

function typeName(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return `an array of ${value.length}`;
  if (typeof value === 'string') return value.length > 40 ? `a string of ${value.length} characters` : JSON.stringify(value);
  if (typeof value === 'object') return 'an object';
  return String(value);
}

/** The text parsed as JSON, within the reader's limits, with no key that could reach a prototype; else one error. */
function parseWeightText(text: string, options: ReadOptions): unknown {
  const maxCharacters = options.maxCharacters ?? 512 * 1024 * 1024;
  const maxDepth = options.maxDepth ?? 64;
  const refuse = (path: string, expected: string, received: string): never => {
    fail('bad_weight_file', path, expected, received);
  };
  if (typeof text !== 'string') refuse('(file)', 'text', typeof text);
  if (text.length > maxCharacters) refuse('(file)', `at most ${maxCharacters} characters`, `${text.length}`);
  const deep = nestingProblem(text, maxDepth);
  if (deep !== null) throw new WeftError(deep);
  const forbidden: string[] = [];
  let parsed: unknown;
  try {
    parsed = JSON.parse(text, function (this: unknown, key: string, value: unknown) {
      if (forbiddenKeys.has(key)) forbidden.push(key);
      return value;
    });
  } catch (error) {
    const reason = (error as Error).message.replace(/\s+/g, ' ');
    const cutShort = text.trimStart().startsWith('{') && !text.trimEnd().endsWith('}');
    refuse('(file)', 'valid JSON', `${reason}${cutShort ? ' (the file looks cut short)' : ''}`);
  }
  if (forbidden.length > 0) refuse('(file)', 'no key named __proto__, constructor or prototype', `a key ${JSON.stringify(forbidden[0])}`);
  return parsed;
}

/** Reads and checks a weight file; throws one WeftError listing every problem found. */
export async function readWeightFile(text: string, options: ReadOptions = {}): Promise<WeightFile> {
  const parsed = parseWeightText(text, options);
  const refuse = (path: string, expected: string, received: string): never => {
    fail('bad_weight_file', path, expected, received);
  };
  const problems: Problem[] = [];
  const add = (path: string, expected: string, received: unknown): void => {
    problems.push({ code: 'bad_weight_file', path, expected, received: typeName(received) });
  };
  if (!isRecord(parsed)) refuse('(file)', 'a JSON object', typeName(parsed));
  const file = parsed as Record<string, unknown>;
  if (file.format !== FORMAT_TAG) refuse('format', JSON.stringify(FORMAT_TAG), typeName(file.format));
  if (typeof file.version !== 'number' || !Number.isInteger(file.version) || file.version < 1) refuse('version', 'a whole number ≥ 1', typeName(file.version));
  if ((file.version as number) > FORMAT_VERSION) {
    refuse('version', `version ${FORMAT_VERSION} or older (this reader's)`, `${String(file.version)}: written by a newer weft; update weft to read it`);
  }
  for (const key of Object.keys(file)) {
    if (!['format', 'version', 'model', 'metadata', 'tensors', 'digest', 'training'].includes(key)) add(key, 'no such field', file[key]);
  }
  const plans = checkPlans(options.plans, 'readWeightFile.plans');
  problems.push(...describeAnyProblems(file.model, 'model', Object.keys(plans)).map((p) => ({ ...p, code: 'bad_weight_file' as const })));
  if (file.metadata !== undefined && !isRecord(file.metadata)) add('metadata', 'an object', file.metadata);
  const digest = file.digest;
  if (!isRecord(digest) || digest.algorithm !== 'SHA-256' || typeof digest.hex !== 'string' || !/^[0-9a-f]{64}$/.test(digest.hex)) {
    add('digest', '{ "algorithm": "SHA-256", "hex": 64 lower-case hex digits }', digest);
  }
  const { decoded, storedAs, digestParts } = readTensors(file.tensors, file.version as number, options, add, problems);
  if (problems.length > 0) throw new WeftError(problems);
  const checked = options.verifyDigest !== false;
  const hex = checked ? await sha256Hex(concatenate(digestParts)) : '';
  const verified = checked && hex === (digest as Record<string, string>).hex;
  if (checked && !verified && options.verifyDigest !== 'report') {
    fail('bad_weight_file', 'digest.hex', (digest as Record<string, string>).hex, `${hex} (SHA-256 of the tensor bytes: the file was changed or damaged)`);
  }
  return {
    version: file.version as number,
    model: file.model as AnyModelDescription,
    metadata: (file.metadata ?? {}) as WeightMetadata,
    tensors: decoded,
    storedAs,
    digest: (digest as Record<string, string>).hex,
    digestVerified: verified,
    digestChecked: checked,
    ...(file.training === undefined ? {} : { training: file.training }),
  };
}
