/**
 * Symmetric int8 quantisation with one scale per row (common practice): for each row r of a [rows, cols] tensor
 * (a 1-D tensor is one row), s_r = max|w_r| / 127 and q = round(w / s_r) ∈ [−127, 127]; w ≈ q·s_r. A row of
 * zeros has scale 0 and dequantises to zeros. The largest error per entry is s_r / 2.
 */
import type { FloatArray } from '@weft/core/base';

/** Quantises a [rows, cols] tensor row by row into int8 `codes` and one f32 scale per row in `scales` (see above). */
export function quantizeRows(values: FloatArray, rows: number, cols: number, codes: Int8Array, scales: Float32Array): void {
  for (let r = 0; r < rows; r++) {
    let max = 0;
    for (let c = 0; c < cols; c++) max = Math.max(max, Math.abs(values[r * cols + c]));
    const scale = Math.fround(max / 127);
    scales[r] = scale;
    for (let c = 0; c < cols; c++) {
      const q = scale === 0 ? 0 : Math.round(values[r * cols + c] / scale);
      codes[r * cols + c] = Math.max(-127, Math.min(127, q));
    }
  }
}

/** Turns int8 `codes` and their row scales back into values: out = q·s_r. */
export function dequantizeRows(codes: Int8Array, scales: Float32Array, rows: number, cols: number, out: FloatArray): void {
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) out[r * cols + c] = codes[r * cols + c] * scales[r];
}
