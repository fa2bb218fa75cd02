/**
 * Elementwise kernels over the first `length` elements, out-first. For every kernel here `out` may alias any
 * input (unless its comment says otherwise): each element is read before it is written and no element is read after its own write (the elementwise
 * test proves it). Kernels whose names end in `Into` add to `out` rather than overwrite it; the reverse sweep uses
 * them to accumulate gradients without temporaries.
 */
import type { FloatArray } from '../dtype.js';

/** out = a + b */
export function add(out: FloatArray, a: FloatArray, b: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = a[i] + b[i];
  return out;
}

/** out = a − b */
export function subtract(out: FloatArray, a: FloatArray, b: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = a[i] - b[i];
  return out;
}

/** out = a ⊙ b (elementwise product) */
export function multiply(out: FloatArray, a: FloatArray, b: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = a[i] * b[i];
  return out;
}

/** out = s · a */
export function scale(out: FloatArray, a: FloatArray, s: number, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] = s * a[i];
  return out;
}

/** out += a */
export function addInto(out: FloatArray, a: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] += a[i];
  return out;
}

/** out += s · a */
export function addScaledInto(out: FloatArray, a: FloatArray, s: number, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] += s * a[i];
  return out;
}

/** out += a ⊙ b */
export function multiplyInto(out: FloatArray, a: FloatArray, b: FloatArray, length: number): FloatArray {
  for (let i = 0; i < length; i++) out[i] += a[i] * b[i];
  return out;
}

/** out[r, c] = a[r, c] + row[c] for a [rows, cols] matrix a and a [cols] row (the bias add). `out` may alias `a`, not `row`. */
export function addRow(out: FloatArray, a: FloatArray, row: FloatArray, rows: number, cols: number): FloatArray {
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; c++) out[base + c] = a[base + c] + row[c];
  }
  return out;
}

/**
 * out[c] = Σ_r a[r, c]: column sums of a [rows, cols] matrix.
 * `out` must not alias `a` (it is written while rows of a are still being read).
 */
export function sumRows(out: FloatArray, a: FloatArray, rows: number, cols: number): FloatArray {
  out.fill(0, 0, cols);
  return sumRowsInto(out, a, rows, cols);
}

/**
 * out[c] += Σ_r a[r, c]: column sums of a [rows, cols] matrix added into out.
 * `out` may alias `a` (then it is a's first row): each entry is read before the same entry is written.
 */
export function sumRowsInto(out: FloatArray, a: FloatArray, rows: number, cols: number): FloatArray {
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; c++) out[c] += a[base + c];
  }
  return out;
}

/** target[targetOffset + i] = source[sourceOffset + i] for i < length. `target` must not overlap `source`. */
export function copyAt(target: FloatArray, targetOffset: number, source: FloatArray, sourceOffset: number, length: number): FloatArray {
  for (let i = 0; i < length; i++) target[targetOffset + i] = source[sourceOffset + i];
  return target;
}

/** target[targetOffset + i] += source[sourceOffset + i] for i < length. `target` must not overlap `source`. */
export function addAt(target: FloatArray, targetOffset: number, source: FloatArray, sourceOffset: number, length: number): FloatArray {
  for (let i = 0; i < length; i++) target[targetOffset + i] += source[sourceOffset + i];
  return target;
}
