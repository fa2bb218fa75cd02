/**
 * The training step's remaining loops in WebAssembly, twins of the JavaScript kernels with the same arguments (byte
 * offsets for arrays): the offset copies and sums (kernels/elementwise.ts `copyAt`, `addAt`), the update's checks
 * (kernels/reductions.ts `firstNonFinite`, `sumOfSquares`) and the softmax cross-entropy (kernels/softmax.ts).
 *   - `copyAt` copies four lanes at a time and `addAt` rounds each sum once to f32, as the twins do: bit for bit alike.
 *   - `firstNonFinite` tests four lanes at once (x − x is 0 exactly when x is finite) and finds the lane in the first
 *     group that fails: the same index as the twin's.
 *   - `sumOfSquares` squares and sums in f64 in two lanes of two accumulators (the twin sums in f64 in index order:
 *     the same value up to f64 rounding, far below what clipping can see).
 *   - `crossEntropyRows` takes the exponentials with math.ts's exp4 (relative error ≈ 2.4e-7) and the logarithm in
 *     f64 (`logarithm` below): within the backends' 1e-5 of the twin.
 */
import { exp4 } from './math';

/**
 * ln x for a finite x > 0, in f64, with no tables (a module's static data would sit in the memory the backend gives
 * its tensors): x = 2^k·f with f in [√½, √2), then ln f = 2·atanh(s), s = (f − 1)/(f + 1), |s| ≤ 0.1716, by its
 * series s + s³/3 + … + s¹⁹/19 (the next term is below 2^−53 relative), and ln x = k·ln 2 + ln f (common practice).
 * Infinity gives Infinity and anything else outside (0, ∞) NaN, as Math.log does.
 */
function logarithm(x: f64): f64 {
  if (!(x > 0)) return x == 0 ? -Infinity : NaN;
  if (x == Infinity) return x;
  let bits = reinterpret<u64>(x);
  let k = <i32>(bits >> 52) - 1023;
  if (k == -1023) {
    // Subnormal: scale into the normal range first.
    bits = reinterpret<u64>(x * 18014398509481984.0); // 2^54
    k = <i32>(bits >> 52) - 1023 - 54;
  }
  let f = reinterpret<f64>((bits & 0x000fffffffffffff) | 0x3ff0000000000000);
  if (f > 1.4142135623730951) {
    f *= 0.5;
    k++;
  }
  const s = (f - 1) / (f + 1);
  const s2 = s * s;
  let series = 1.0 / 19.0;
  for (let n = 17; n >= 1; n -= 2) series = series * s2 + 1.0 / <f64>n;
  return <f64>k * 0.6931471805599453 + 2 * s * series;
}

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

export function copyAt(target: usize, targetOffset: i32, source: usize, sourceOffset: i32, length: i32): void {
  // Four lanes at a time from the front, as the twin copies one at a time from the front (not a bulk copy, which
  // would make an overlap safe here and not there): the same rule, target must not overlap source, on both.
  const t = at(target, targetOffset);
  const s = at(source, sourceOffset);
  let i = 0;
  for (; i + 4 <= length; i += 4) v128.store(at(t, i), v128.load(at(s, i)));
  for (; i < length; i++) store<f32>(at(t, i), load<f32>(at(s, i)));
}

export function addAt(target: usize, targetOffset: i32, source: usize, sourceOffset: i32, length: i32): void {
  const t = at(target, targetOffset);
  const s = at(source, sourceOffset);
  let i = 0;
  for (; i + 4 <= length; i += 4) v128.store(at(t, i), f32x4.add(v128.load(at(t, i)), v128.load(at(s, i))));
  for (; i < length; i++) store<f32>(at(t, i), load<f32>(at(t, i)) + load<f32>(at(s, i)));
}

export function firstNonFinite(a: usize, length: i32): i32 {
  let i = 0;
  for (; i + 4 <= length; i += 4) {
    const v = v128.load(at(a, i));
    if (!v128.all_true<i32>(f32x4.eq(f32x4.sub(v, v), f32x4.splat(0)))) break;
  }
  for (; i < length; i++) {
    const x = load<f32>(at(a, i));
    if (x - x != 0) return i;
  }
  return -1;
}

export function sumOfSquares(a: usize, length: i32): f64 {
  let s0 = f64x2.splat(0);
  let s1 = f64x2.splat(0);
  let i = 0;
  for (; i + 4 <= length; i += 4) {
    const v = v128.load(at(a, i));
    const low = f64x2.promote_low_f32x4(v);
    const high = f64x2.promote_low_f32x4(v128.shuffle<f32>(v, v, 2, 3, 0, 1));
    s0 = f64x2.add(s0, f64x2.mul(low, low));
    s1 = f64x2.add(s1, f64x2.mul(high, high));
  }
  const s = f64x2.add(s0, s1);
  let total = f64x2.extract_lane(s, 0) + f64x2.extract_lane(s, 1);
  for (; i < length; i++) {
    const x = <f64>load<f32>(at(a, i));
    total += x * x;
  }
  return total;
}

export function crossEntropyRows(losses: usize, probabilities: usize, logits: usize, targets: usize, rows: i32, classes: i32): void {
  const whole = classes & ~3;
  for (let r = 0; r < rows; r++) {
    const z = at(logits, r * classes);
    const p = at(probabilities, r * classes);
    let m: f32 = -Infinity;
    for (let j = 0; j < classes; j++) m = max(m, load<f32>(at(z, j)));
    const target = load<i32>(targets + (<usize>r << 2));
    const targetLogit = load<f32>(at(z, target));
    const shift = f32x4.splat(m);
    let sum = f32x4.splat(0);
    let j = 0;
    for (; j < whole; j += 4) {
      const e = exp4(f32x4.sub(v128.load(at(z, j)), shift));
      v128.store(at(p, j), e);
      sum = f32x4.add(sum, e);
    }
    let total = <f64>f32x4.extract_lane(sum, 0) + <f64>f32x4.extract_lane(sum, 1) + <f64>f32x4.extract_lane(sum, 2) + <f64>f32x4.extract_lane(sum, 3);
    for (; j < classes; j++) {
      const e = f32x4.extract_lane(exp4(f32x4.splat(load<f32>(at(z, j)) - m)), 0);
      store<f32>(at(p, j), e);
      total += <f64>e;
    }
    store<f32>(at(losses, r), <f32>-(<f64>targetLogit - <f64>m - logarithm(total)));
    const inverse = f32x4.splat(<f32>(1 / total));
    j = 0;
    for (; j < whole; j += 4) v128.store(at(p, j), f32x4.mul(v128.load(at(p, j)), inverse));
    for (; j < classes; j++) store<f32>(at(p, j), load<f32>(at(p, j)) * <f32>(1 / total));
  }
}

/**
 * The column blocks of kernels/columns.ts: `toWide` 1 copies or adds the narrow [rows, cols] matrix into columns
 * [first, first + cols) of the wide [rows, width] one, 0 the other way; `add` 1 adds instead of copying. Each entry
 * is one f32 copy or one rounded sum, as in the twins: bit for bit alike.
 */
export function columns(wide: usize, narrow: usize, rows: i32, cols: i32, width: i32, first: i32, toWide: i32, add: i32): void {
  for (let r = 0; r < rows; r++) {
    const w = at(wide, r * width + first);
    const n = at(narrow, r * cols);
    const to = toWide != 0 ? w : n;
    const from = toWide != 0 ? n : w;
    let c = 0;
    if (add != 0) {
      for (; c + 4 <= cols; c += 4) v128.store(at(to, c), f32x4.add(v128.load(at(to, c)), v128.load(at(from, c))));
      for (; c < cols; c++) store<f32>(at(to, c), load<f32>(at(to, c)) + load<f32>(at(from, c)));
    } else {
      for (; c + 4 <= cols; c += 4) v128.store(at(to, c), v128.load(at(from, c)));
      for (; c < cols; c++) store<f32>(at(to, c), load<f32>(at(from, c)));
    }
  }
}
