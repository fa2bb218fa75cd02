/** The two element types weft computes in: `f32` by default, `f64` wherever exactness matters (gradient checks). */
export type DType = 'f32' | 'f64';

/** A buffer of either dtype. Kernels are written once against this union and serve both. */
export type FloatArray = Float32Array | Float64Array;

/** The dtype of a buffer: `f64` for a Float64Array, else `f32`. */
export function dtypeOf(array: FloatArray): DType {
  return array instanceof Float64Array ? 'f64' : 'f32';
}

/** Bytes per element of a dtype: 4 for `f32`, 8 for `f64`. */
export function bytesPerElement(dtype: DType): number {
  return dtype === 'f64' ? 8 : 4;
}

/** True when `value` is one of the dtype words, `f32` or `f64`. */
export function isDType(value: unknown): value is DType {
  return value === 'f32' || value === 'f64';
}
