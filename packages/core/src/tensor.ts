/**
 * A tensor is a shape, a dtype and one contiguous row-major buffer; nothing more. The element at index
 * (i0, i1, …, i(r−1)) of a tensor with shape (n0, n1, …, n(r−1)) lives at
 *
 *     offset = ((i0·n1 + i1)·n2 + i2)·… + i(r−1)
 *
 * so for a matrix [rows, cols] element (r, c) is at r·cols + c. Every kernel and operation in weft addresses
 * buffers by this one formula.
 *
 * A trainable tensor (a parameter) owns a gradient buffer of the same size, into which every reverse sweep
 * adds. Tensors made by operations on a tape get their buffers from the tape's pool and lose them when the tape
 * is cleared.
 */
import type { DType, FloatArray } from './dtype.js';
import { dtypeOf, isDType } from './dtype.js';
import { fail, formatShape } from './errors.js';
import { backendOf, defaultBackend } from './backend/choose.js';
import type { BufferPool } from './pool.js';
import type { Random } from './random.js';

/**
 * An n-dimensional array: a contiguous row-major typed array, its shape and dtype, and the gradient slot the tape
 * fills.
 */
export class Tensor {
  /** The values, row-major (the last axis varies fastest). */
  readonly data: FloatArray;
  /** The size of each axis. */
  readonly shape: readonly number[];
  /** The element type (`f32` or `f64`), from `data`. */
  readonly dtype: DType;
  /** Number of elements: the product of the shape. */
  readonly size: number;
  /** Where the reverse sweep adds this tensor's gradient; null until it has one. */
  gradient: FloatArray | null = null;
  /** True for parameters: the reverse sweep accumulates into their gradient, which nobody else clears. */
  trainable = false;
  /** True when a gradient can flow to this tensor (it is trainable, or made from a tracked tensor on a tape). */
  tracked = false;
  /** A name for messages and reports (`layers[0].recurrent`). */
  name = '';

  /** Wraps an existing buffer; prefer the creation functions below. */
  constructor(data: FloatArray, shape: readonly number[]) {
    const size = sizeOfShape(shape, 'Tensor.shape');
    if (data.length !== size) {
      fail('shape_mismatch', 'Tensor.data', `${size} elements for shape ${formatShape(shape)}`, `${data.length}`);
    }
    this.data = data;
    this.shape = shape;
    this.dtype = dtypeOf(data);
    this.size = size;
  }

  /** Number of axes. */
  get rank(): number {
    return this.shape.length;
  }

  /** The element at a full index (checked). For speed, read `data` with the address formula instead. */
  at(...index: number[]): number {
    if (index.length !== this.shape.length) {
      fail('invalid_argument', `${this.label()}.at`, `${this.shape.length} indices`, `${index.length}`);
    }
    let offset = 0;
    for (let axis = 0; axis < index.length; axis++) {
      const i = index[axis];
      if (!Number.isInteger(i) || i < 0 || i >= this.shape[axis]) {
        fail('invalid_argument', `${this.label()}.at[${axis}]`, `0 ≤ index < ${this.shape[axis]}`, String(i));
      }
      offset = offset * this.shape[axis] + i;
    }
    return this.data[offset];
  }

  /** A plain copy of the values in row-major order. */
  toArray(): number[] {
    return Array.from(this.data);
  }

  /** The name if set, else a description by shape, for messages. */
  label(): string {
    return this.name !== '' ? this.name : `tensor${formatShape(this.shape)}`;
  }
}

/** Checks a shape and returns its element count. */
export function sizeOfShape(shape: readonly number[], path: string): number {
  if (!Array.isArray(shape)) fail('invalid_argument', path, 'an array of whole numbers', typeof shape);
  let size = 1;
  for (let axis = 0; axis < shape.length; axis++) {
    const extent = shape[axis];
    if (!Number.isInteger(extent) || extent < 0) {
      fail('invalid_argument', `${path}[${axis}]`, 'a whole number ≥ 0', String(extent));
    }
    size *= extent;
  }
  if (size > 2 ** 31 - 1) fail('invalid_argument', path, 'fewer than 2^31 elements', String(size));
  return size;
}

function checkDType(dtype: DType, path: string): void {
  if (!isDType(dtype)) fail('invalid_option', path, "'f32' or 'f64'", JSON.stringify(dtype));
}

/** A tensor of zeros. Its buffer comes from `pool` (the default backend's pool when none is given). */
export function zeros(shape: readonly number[], dtype: DType = 'f32', pool: BufferPool = defaultBackend().pool): Tensor {
  checkDType(dtype, 'zeros.dtype');
  const size = sizeOfShape(shape, 'zeros.shape');
  return new Tensor(pool.takeZeroed(dtype, size), shape.slice());
}

/** A tensor with every element equal to `value`. */
export function filled(shape: readonly number[], value: number, dtype: DType = 'f32'): Tensor {
  const result = zeros(shape, dtype);
  result.data.fill(value);
  return result;
}

type Nested = number | readonly Nested[];

/**
 * A tensor from values: a flat list or typed array with an explicit shape, or nested arrays whose shape is read
 * off (ragged nesting is refused, naming the first place where it is ragged).
 */
export function tensor(values: Nested | FloatArray, shape?: readonly number[], dtype: DType = 'f32'): Tensor {
  checkDType(dtype, 'tensor.dtype');
  let flat: ArrayLike<number>;
  let resolved: readonly number[];
  if (values instanceof Float32Array || values instanceof Float64Array) {
    flat = values;
    resolved = shape ?? [values.length];
  } else {
    const inferred: number[] = [];
    let probe: Nested = values;
    while (Array.isArray(probe)) {
      inferred.push(probe.length);
      probe = probe.length > 0 ? (probe[0] as Nested) : 0;
    }
    const out: number[] = [];
    flattenInto(values, inferred, 0, 'values', out);
    flat = out;
    resolved = shape ?? inferred;
  }
  const size = sizeOfShape(resolved, 'tensor.shape');
  if (flat.length !== size) {
    fail('shape_mismatch', 'tensor.values', `${size} values for shape ${formatShape(resolved)}`, `${flat.length}`);
  }
  const result = zeros(resolved, dtype);
  for (let i = 0; i < size; i++) result.data[i] = flat[i];
  return result;
}

function flattenInto(value: Nested, shape: number[], axis: number, path: string, out: number[]): void {
  if (axis === shape.length) {
    if (typeof value !== 'number') fail('bad_data', path, 'a number', describeValue(value));
    out.push(value);
    return;
  }
  if (!Array.isArray(value) || value.length !== shape[axis]) {
    fail('bad_data', path, `an array of ${shape[axis]} entries`, describeValue(value));
  }
  for (let i = 0; i < value.length; i++) flattenInto(value[i] as Nested, shape, axis + 1, `${path}[${i}]`, out);
}

function describeValue(value: unknown): string {
  if (Array.isArray(value)) return `an array of ${value.length} entries`;
  return typeof value === 'number' ? String(value) : typeof value;
}

/** Uniform values in [low, high) drawn from `random` in row-major order. */
export function randomUniform(shape: readonly number[], random: Random, low = 0, high = 1, dtype: DType = 'f32'): Tensor {
  const result = zeros(shape, dtype);
  for (let i = 0; i < result.size; i++) result.data[i] = random.between(low, high);
  return result;
}

/** Normal values with the given mean and standard deviation drawn from `random` in row-major order. */
export function randomNormal(shape: readonly number[], random: Random, mean = 0, deviation = 1, dtype: DType = 'f32'): Tensor {
  const result = zeros(shape, dtype);
  for (let i = 0; i < result.size; i++) result.data[i] = mean + deviation * random.normal();
  return result;
}

/**
 * Makes `t` a parameter: it gets its own zeroed gradient buffer, into which every reverse sweep adds.
 * Returns `t` itself.
 */
export function trainable(t: Tensor, name?: string): Tensor {
  if (!t.trainable) {
    t.trainable = true;
    t.tracked = true;
    t.gradient = backendOf(t.data).pool.takeZeroed(t.dtype, t.size);
  }
  if (name !== undefined) t.name = name;
  return t;
}

/** Sets the gradients of the given parameters to zero (before the next accumulation). */
export function resetGradients(parameters: readonly Tensor[]): void {
  for (const p of parameters) if (p.gradient !== null) p.gradient.fill(0);
}

/** A copy in another dtype (or the same), not tracked, with its own buffer (from `pool`, the default backend's by default). */
export function convert(t: Tensor, dtype: DType, pool?: BufferPool): Tensor {
  const result = zeros(t.shape, dtype, pool);
  result.data.set(t.data);
  result.name = t.name;
  return result;
}

/** True when two shapes are equal. */
export function sameShape(a: readonly number[], b: readonly number[]): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/**
 * The same values with no gradient path: a new tensor over the same buffer, not tracked (a gradient stop).
 * The buffer is shared, so it lives only as long as `t`'s does; use `Tape.keep` to copy out of a tape.
 */
export function detach(t: Tensor): Tensor {
  const view = new Tensor(t.data, t.shape);
  view.name = t.name;
  return view;
}
