/**
 * Whole layer steps for the inference runtime, one call per layer and step: the input and recurrent products,
 * the bias, and the cell's gate arithmetic, fused, so a streaming step crosses from JavaScript into WebAssembly
 * once per layer. Twins of packages/core/src/kernels/layer-steps.ts (which compose the single kernels in the
 * same order of operations where it matters for the state: every product is complete before the gates read it).
 *
 * For fewer than 4 rows each row's products run as one pass over the columns: 8 (then 4, then 1) vectors of
 * accumulators start at the bias and take x·W and h·R in turn, so the pre-activation is stored once. From 4 rows
 * up, the packed product of matmul.ts runs (in `scratch`, sized as there).
 */
import { matmul } from './matmul';
import { addRow } from './elementwise';
import { gruResetHidden, gruStepFinish, gruUpdateReset, lstmStepForward, plainStepForward } from './steps';

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

/** out[c] = start[c] + Σ_k x[k]·A[k, c] + Σ_k y[k]·B[k, c] for one row; `start` may be 0 (zero), `y` may be 0. */
function rowAffine(out: usize, start: usize, x: usize, a: usize, inner: i32, y: usize, b: usize, innerB: i32, cols: i32): void {
  const stride = <usize>cols << 2;
  let col = 0;
  for (; col + 32 <= cols; col += 32) {
    let s0 = f32x4.splat(0), s1 = f32x4.splat(0), s2 = f32x4.splat(0), s3 = f32x4.splat(0);
    let s4 = f32x4.splat(0), s5 = f32x4.splat(0), s6 = f32x4.splat(0), s7 = f32x4.splat(0);
    if (start != 0) {
      const p = at(start, col);
      s0 = v128.load(p); s1 = v128.load(p, 16); s2 = v128.load(p, 32); s3 = v128.load(p, 48);
      s4 = v128.load(p, 64); s5 = v128.load(p, 80); s6 = v128.load(p, 96); s7 = v128.load(p, 112);
    }
    for (let pass = 0; pass < 2; pass++) {
      const v = pass == 0 ? x : y;
      const m = pass == 0 ? a : b;
      const n = pass == 0 ? inner : innerB;
      if (v == 0) continue;
      let pb = at(m, col);
      let pv = v;
      const end = v + (<usize>n << 2);
      // Two rows of the matrix per turn: fewer loop instructions per multiply-add.
      for (; pv + 8 <= end; pv += 8) {
        const s = f32x4.splat(load<f32>(pv));
        const t = f32x4.splat(load<f32>(pv, 4));
        const q = pb + stride;
        s0 = f32x4.add(f32x4.add(s0, f32x4.mul(s, v128.load(pb))), f32x4.mul(t, v128.load(q)));
        s1 = f32x4.add(f32x4.add(s1, f32x4.mul(s, v128.load(pb, 16))), f32x4.mul(t, v128.load(q, 16)));
        s2 = f32x4.add(f32x4.add(s2, f32x4.mul(s, v128.load(pb, 32))), f32x4.mul(t, v128.load(q, 32)));
        s3 = f32x4.add(f32x4.add(s3, f32x4.mul(s, v128.load(pb, 48))), f32x4.mul(t, v128.load(q, 48)));
        s4 = f32x4.add(f32x4.add(s4, f32x4.mul(s, v128.load(pb, 64))), f32x4.mul(t, v128.load(q, 64)));
        s5 = f32x4.add(f32x4.add(s5, f32x4.mul(s, v128.load(pb, 80))), f32x4.mul(t, v128.load(q, 80)));
        s6 = f32x4.add(f32x4.add(s6, f32x4.mul(s, v128.load(pb, 96))), f32x4.mul(t, v128.load(q, 96)));
        s7 = f32x4.add(f32x4.add(s7, f32x4.mul(s, v128.load(pb, 112))), f32x4.mul(t, v128.load(q, 112)));
        pb = q + stride;
      }
      for (; pv < end; pv += 4) {
        const s = f32x4.splat(load<f32>(pv));
        s0 = f32x4.add(s0, f32x4.mul(s, v128.load(pb)));
        s1 = f32x4.add(s1, f32x4.mul(s, v128.load(pb, 16)));
        s2 = f32x4.add(s2, f32x4.mul(s, v128.load(pb, 32)));
        s3 = f32x4.add(s3, f32x4.mul(s, v128.load(pb, 48)));
        s4 = f32x4.add(s4, f32x4.mul(s, v128.load(pb, 64)));
        s5 = f32x4.add(s5, f32x4.mul(s, v128.load(pb, 80)));
        s6 = f32x4.add(s6, f32x4.mul(s, v128.load(pb, 96)));
        s7 = f32x4.add(s7, f32x4.mul(s, v128.load(pb, 112)));
        pb += stride;
      }
    }
    const o = at(out, col);
    v128.store(o, s0); v128.store(o, s1, 16); v128.store(o, s2, 32); v128.store(o, s3, 48);
    v128.store(o, s4, 64); v128.store(o, s5, 80); v128.store(o, s6, 96); v128.store(o, s7, 112);
  }
  for (; col + 4 <= cols; col += 4) {
    let s0 = start != 0 ? v128.load(at(start, col)) : f32x4.splat(0);
    for (let pass = 0; pass < 2; pass++) {
      const v = pass == 0 ? x : y;
      const m = pass == 0 ? a : b;
      const n = pass == 0 ? inner : innerB;
      if (v == 0) continue;
      let pb = at(m, col);
      for (let k = 0; k < n; k++) {
        s0 = f32x4.add(s0, f32x4.mul(f32x4.splat(load<f32>(at(v, k))), v128.load(pb)));
        pb += stride;
      }
    }
    v128.store(at(out, col), s0);
  }
  for (; col < cols; col++) {
    let s: f32 = start != 0 ? load<f32>(at(start, col)) : 0;
    for (let pass = 0; pass < 2; pass++) {
      const v = pass == 0 ? x : y;
      const m = pass == 0 ? a : b;
      const n = pass == 0 ? inner : innerB;
      if (v == 0) continue;
      for (let k = 0; k < n; k++) s += load<f32>(at(v, k)) * load<f32>(at(m, k * cols + col));
    }
    store<f32>(at(out, col), s);
  }
}

/** out [rows, cols] = bias + x·A (+ y·B when y ≠ 0), x [rows, inner], y [rows, innerB]. */
function affine(out: usize, bias: usize, x: usize, a: usize, inner: i32, y: usize, b: usize, innerB: i32, rows: i32, cols: i32, scratch: usize): void {
  if (rows < 4) {
    for (let r = 0; r < rows; r++) {
      rowAffine(at(out, r * cols), bias, at(x, r * inner), a, inner, y == 0 ? 0 : at(y, r * innerB), b, innerB, cols);
    }
    return;
  }
  matmul(out, x, a, rows, inner, cols, 0, 0, 0, scratch);
  if (y != 0) matmul(out, y, b, rows, innerB, cols, 0, 0, 1, scratch);
  if (bias != 0) addRow(out, out, bias, rows, cols);
}

/** out [rows, cols] = bias + x·weights: the readout. `bias` 0 means none. */
export function affineRows(out: usize, bias: usize, x: usize, weights: usize, rows: i32, inner: i32, cols: i32, scratch: usize): void {
  affine(out, bias, x, weights, inner, 0, 0, 0, rows, cols, scratch);
}

/** One LSTM layer step: gates = b + x·W + h·R, then the LSTM gate arithmetic in place on h and c. */
export function lstmLayerStep(
  x: usize, input: usize, recurrent: usize, bias: usize, peephole: usize, hidden: usize, cell: usize, gates: usize,
  tanhCell: usize, rows: i32, inputSize: i32, size: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affine(gates, bias, x, input, inputSize, hidden, recurrent, size, rows, 4 * size, scratch);
  lstmStepForward(hidden, cell, gates, tanhCell, hidden, cell, peephole, rows, size, lengths, step);
}

/** One GRU layer step (both reset forms), with the runtime's work buffers. */
export function gruLayerStep(
  x: usize, input: usize, bias: usize, recurrent: usize, candidateWeights: usize, candidateBias: usize, hidden: usize,
  projected: usize, gates: usize, updateReset: usize, candidate: usize, resetHidden: usize,
  rows: i32, inputSize: i32, size: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affine(projected, bias, x, input, inputSize, 0, 0, 0, rows, 3 * size, scratch);
  affine(updateReset, 0, hidden, recurrent, size, 0, 0, 0, rows, 2 * size, scratch);
  gruUpdateReset(gates, projected, 0, updateReset, rows, size);
  if (candidateBias == 0) {
    gruResetHidden(resetHidden, gates, hidden, rows, size);
    affine(candidate, 0, resetHidden, candidateWeights, size, 0, 0, 0, rows, size, scratch);
  } else {
    affine(candidate, candidateBias, hidden, candidateWeights, size, 0, 0, 0, rows, size, scratch);
  }
  gruStepFinish(hidden, gates, projected, 0, candidate, hidden, candidateBias != 0 ? 1 : 0, rows, size, lengths, step);
}

/** One plain layer step: pre = b + x·W + h·R, φ in place, then h = pre. */
export function plainLayerStep(
  x: usize, input: usize, recurrent: usize, bias: usize, hidden: usize, pre: usize, rectified: i32,
  rows: i32, inputSize: i32, size: i32, lengths: usize, step: i32, scratch: usize,
): void {
  affine(pre, bias, x, input, inputSize, hidden, recurrent, size, rows, size, scratch);
  plainStepForward(pre, hidden, rectified, rows, size, lengths, step);
  memory.copy(hidden, pre, <usize>(rows * size) << 2);
}
