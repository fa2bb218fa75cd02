/**
 * The tensors of a weight file, read: each entry's name, shape, stored type and base64 lengths checked first (so
 * nothing is allocated for a file that asks for too much), then each decoded (f32, f16, or int8 with a scale per
 * row) and refused where a weight is not finite. Every problem is collected with its path; the bytes go to the
 * digest in file order.
 */
import type { FloatArray, Problem } from '@weft/core/base';
import { isRecord } from '@weft/core/base';
import { decodeBase64Into, decodedLength } from './base64.js';
import { fromHalfBits } from './half.js';
import { dequantizeRows } from './quantize.js';

/** How a tensor's values are stored in a file: f32, f16 (binary16), or int8 with one scale per row. */
export type StoredDType = 'f32' | 'f16' | 'i8';

/** One tensor's values by name, as weight files hold them. */
export interface NamedValues {
  /** The parameter's name (`layers[0].forward.input`). */
  readonly name: string;
  /** Its shape. */
  readonly shape: readonly number[];
  /** Its values, row-major. */
  readonly values: FloatArray;
}

/** A version-1 tensor name in today's spelling: `layers.0.forward.input` → `layers[0].forward.input` (also after `encoder.`/`decoder.`). */
export function respellVersionOneName(name: string): string {
  return name.replace(/(^|\.)layers\.(\d+)\./, '$1layers[$2].');
}

/** The rows and columns of a tensor read as a matrix: the last axis, and everything before it. */
export function rowsAndCols(shape: readonly number[]): [number, number] {
  if (shape.length === 0) return [1, 1];
  const cols = shape[shape.length - 1];
  const size = shape.reduce((a, b) => a * b, 1);
  return [cols === 0 ? 0 : size / cols, cols];
}

/** Adds a problem at `path`: what was expected, and what was found. */
type AddProblem = (path: string, expected: string, received: unknown) => void;

/** What reading the tensors gives: their values, how each was stored, and the bytes of the digest in file order. */
export interface ReadTensors {
  /** The decoded tensors, in file order. */
  readonly decoded: NamedValues[];
  /** How each tensor was stored, by name (a null-prototype record: names are data). */
  readonly storedAs: Record<string, StoredDType>;
  /** The stored bytes, data then scales per tensor, in file order. */
  readonly digestParts: Uint8Array[];
}

/** Where a checked entry's values are and how big they are, before anything of that size is made. */
interface TensorPlan {
  readonly index: number;
  readonly name: string;
  readonly shape: number[];
  readonly dtype: StoredDType;
  readonly size: number;
  readonly rows: number;
}

/**
 * Checks entry `i` (its name, not used before, kept in `seen`; shape; stored type; base64 lengths): its plan, or
 * null with every problem given to `add`.
 */
function planEntry(entry: unknown, i: number, version: number, maxElements: number, seen: Set<string>, add: AddProblem): TensorPlan | null {
  const where = `tensors[${i}]`;
  if (!isRecord(entry)) {
    add(where, 'an object', entry);
    return null;
  }
  const { shape, dtype, data, scales } = entry;
  const name = version === 1 && typeof entry.name === 'string' ? respellVersionOneName(entry.name) : entry.name;
  let ok = true;
  if (typeof name !== 'string' || name === '' || name.length > 200) {
    add(`${where}.name`, 'a name of 1 to 200 characters', name);
    ok = false;
  } else if (seen.has(name)) {
    add(`${where}.name`, 'a name not used before', name);
    ok = false;
  } else {
    seen.add(name);
  }
  let size = 1;
  if (!Array.isArray(shape) || shape.length > 8 || shape.some((n) => typeof n !== 'number' || !Number.isInteger(n) || n < 0 || n > maxElements)) {
    add(`${where}.shape`, `up to 8 whole numbers in [0, ${maxElements}]`, shape);
    ok = false;
  } else {
    for (const n of shape as number[]) size *= n;
    if (size > maxElements) {
      add(`${where}.shape`, `at most ${maxElements} elements`, `${size}`);
      ok = false;
    }
  }
  if (dtype !== 'f32' && dtype !== 'f16' && dtype !== 'i8') {
    add(`${where}.dtype`, "'f32', 'f16' or 'i8'", dtype);
    ok = false;
  }
  if (typeof data !== 'string') {
    add(`${where}.data`, 'base64 text', data);
    ok = false;
  }
  if (dtype === 'i8' ? typeof scales !== 'string' : scales !== undefined) {
    add(`${where}.scales`, dtype === 'i8' ? 'base64 text (one f32 scale per row)' : 'no scales (only i8 has them)', scales);
    ok = false;
  }
  for (const key of Object.keys(entry)) {
    if (!['name', 'shape', 'dtype', 'data', 'scales'].includes(key)) add(`${where}.${key}`, 'no such field', entry[key]);
  }
  if (!ok) return null;
  const [rows] = rowsAndCols(shape as number[]);
  const bytes = size * (dtype === 'f32' ? 4 : dtype === 'f16' ? 2 : 1);
  if (decodedLength(data as string) !== bytes)
    add(
      `${where}.data`,
      `base64 of ${bytes} bytes for shape [${(shape as number[]).join(', ')}] in ${String(dtype)}`,
      `${Math.max(0, decodedLength(data as string))} bytes`,
    );
  else if (dtype === 'i8' && decodedLength(scales as string) !== rows * 4)
    add(`${where}.scales`, `base64 of ${rows * 4} bytes (${rows} rows)`, `${Math.max(0, decodedLength(scales as string))} bytes`);
  else return { index: i, name: name as string, shape: (shape as number[]).slice(), dtype: dtype as StoredDType, size, rows };
  return null;
}

/**
 * Decodes a planned entry into f32 values (f16 widened, int8 scaled per row), its bytes added to `digestParts`; null
 * with the problem recorded where its base64 is bad or (unless allowed) a weight is not finite.
 */
function decodeEntry(
  entry: Record<string, string>,
  plan: TensorPlan,
  allowNonFinite: boolean,
  add: AddProblem,
  problems: Problem[],
  digestParts: Uint8Array[],
): Float32Array | null {
  const where = `tensors[${plan.index}]`;
  const bytes = new Uint8Array(decodedLength(entry.data));
  const bad = decodeBase64Into(entry.data, bytes);
  if (bad >= 0) {
    add(`${where}.data`, 'base64 characters (A–Z, a–z, 0–9, +, /, = padding)', `a bad character at position ${bad}`);
    return null;
  }
  digestParts.push(bytes);
  const values = new Float32Array(plan.size);
  const view = new DataView(bytes.buffer);
  if (plan.dtype === 'f32') {
    for (let i = 0; i < plan.size; i++) values[i] = view.getFloat32(i * 4, true);
  } else if (plan.dtype === 'f16') {
    for (let i = 0; i < plan.size; i++) values[i] = fromHalfBits(view.getUint16(i * 2, true));
  } else {
    const scaleBytes = new Uint8Array(plan.rows * 4);
    const badScale = decodeBase64Into(entry.scales, scaleBytes);
    if (badScale >= 0) {
      add(`${where}.scales`, 'base64 characters', `a bad character at position ${badScale}`);
      return null;
    }
    digestParts.push(scaleBytes);
    const scaleView = new DataView(scaleBytes.buffer);
    const scaleValues = new Float32Array(plan.rows);
    for (let r = 0; r < plan.rows; r++) scaleValues[r] = scaleView.getFloat32(r * 4, true);
    dequantizeRows(new Int8Array(bytes.buffer), scaleValues, plan.rows, plan.size / Math.max(1, plan.rows), values);
  }
  if (!allowNonFinite) {
    const at = values.findIndex((v) => !Number.isFinite(v));
    if (at >= 0) {
      problems.push({
        code: 'not_finite',
        path: `tensors (${plan.name})[${at}]`,
        expected: 'finite weights',
        received: String(values[at]),
        detail: 'a model with a non-finite weight computes NaN; retrain, or read with allowNonFinite to inspect it',
      });
      return null;
    }
  }
  return values;
}

/** Reads the `tensors` field of a file of `version`; problems go to `add` (and `problems`, for non-finite weights). */
export function readTensors(
  tensors: unknown,
  version: number,
  options: { readonly maxElements?: number; readonly allowNonFinite?: boolean },
  add: AddProblem,
  problems: Problem[],
): ReadTensors {
  const maxElements = options.maxElements ?? 50_000_000;
  const decoded: NamedValues[] = [];
  // Tensor names are data: a null-prototype object, so a tensor named __proto__ is a name like any other.
  const storedAs: Record<string, StoredDType> = Object.create(null) as Record<string, StoredDType>;
  const digestParts: Uint8Array[] = [];
  if (!Array.isArray(tensors)) {
    add('tensors', 'an array', tensors);
  } else {
    // Shapes and counts first, so nothing is allocated for a file that asks for too much.
    let total = 0;
    const plans: TensorPlan[] = [];
    const seen = new Set<string>();
    tensors.forEach((entry: unknown, i: number) => {
      const plan = planEntry(entry, i, version, maxElements, seen, add);
      if (plan === null) return;
      total += plan.size;
      plans.push(plan);
    });
    if (total > maxElements) add('tensors', `at most ${maxElements} elements in all`, `${total}`);
    if (problems.length === 0) {
      for (const plan of plans) {
        const values = decodeEntry(tensors[plan.index] as Record<string, string>, plan, options.allowNonFinite === true, add, problems, digestParts);
        if (values === null) continue;
        decoded.push({ name: plan.name, shape: plan.shape, values });
        storedAs[plan.name] = plan.dtype;
      }
    }
  }
  return { decoded, storedAs, digestParts };
}
