/**
 * SIMD transcendentals for f32x4 lanes (AssemblyScript; compiled by scripts/build-wasm.mjs).
 *
 * exp: Cody & Waite range reduction (W. J. Cody and W. Waite, "Software Manual for the Elementary Functions",
 * 1980, ch. 6): x = n·ln 2 + r with n = round(x·log₂e) and ln 2 split in two parts (C1 exact in a few bits, C2 the
 * rest) so r is exact; then e^r ≈ 1 + r + r²·P(r) with the degree-5 polynomial P of the Cephes library's expf
 * (S. L. Moshier, "Methods and Programs for Mathematical Functions", 1989; coefficients from memory), and 2ⁿ
 * built in the exponent bits; the polynomial is evaluated by Estrin's scheme. Inputs are clamped to [−87.33654, 88.72283] (the f32 normal range of e^x).
 *
 * tanh: for |x| < 0.625 the odd polynomial x + x³·Q(x²) of Cephes' tanhf (coefficients from memory); above,
 * 1 − 2 / (e^{2|x|} + 1) with the sign of x restored. sigmoid: 1 / (1 + e^{−|x|}) for x ≥ 0 and
 * e^{−|x|} / (1 + e^{−|x|}) below, so no exponent is positive (the same overflow-safe split as the JavaScript
 * kernels). NaN in gives NaN out in every lane.
 *
 * The clamps are f32x4.pmin/pmax (b < a ? b : a and a < b ? b : a, one x86 instruction each) rather than
 * f32x4.min/max (IEEE 754 minimum/maximum, which an engine must build from several instructions to propagate NaN
 * and order −0 before +0). With the value first and a non-zero constant second they give the same bits for every
 * input: a NaN value fails the comparison and is returned as it is, and no constant is ±0.
 *
 * The worst errors against Math in f64 are pinned by packages/core/test/backend/wasm-math.test.ts.
 */

// @ts-ignore: decorator
@inline const LOG2E: f32 = 1.44269504088896341;
// @ts-ignore: decorator
@inline const LN2_HIGH: f32 = 0.693359375;
// @ts-ignore: decorator
@inline const LN2_LOW: f32 = -2.12194440e-4;
// @ts-ignore: decorator
@inline const SHIFT: f32 = 12582912.0;

/**
 * e^x for inputs already inside [−87.33654, 88.72283] or NaN. `capped` false leaves out the cap of n at 127, which
 * only inputs above 87.3 reach: for callers whose inputs are ≤ 0 (the same bits, one instruction fewer).
 */
// @ts-ignore: decorator
@inline function expReduced4(x: v128, capped: bool): v128 {
  // n = round(x·log₂e) by the 1.5·2²³ shift (the sum's low mantissa bits are n), capped at 127 so 2ⁿ is finite;
  // cheaper here than f32x4.nearest and a float-to-integer conversion.
  const shifted = f32x4.add(f32x4.mul(x, f32x4.splat(LOG2E)), f32x4.splat(SHIFT));
  const rounded = f32x4.sub(shifted, f32x4.splat(SHIFT));
  const n = capped ? f32x4.pmin(rounded, f32x4.splat(127.0)) : rounded;
  let r = f32x4.sub(x, f32x4.mul(n, f32x4.splat(LN2_HIGH)));
  r = f32x4.sub(r, f32x4.mul(n, f32x4.splat(LN2_LOW)));
  const r2 = f32x4.mul(r, r);
  // P(r) = c0 + c1·r + … + c5·r⁵ by Estrin's scheme (three short chains instead of one long Horner chain).
  // Its multiply-adds are `madd` (below): the same bits as a product and a sum in the standard set, fused in the
  // relaxed set (after the range reduction, which stays exact as written).
  const a = madd(f32x4.splat(1.6666665459e-1), r, f32x4.splat(5.0000001201e-1));
  const b = madd(f32x4.splat(8.3334519073e-3), r, f32x4.splat(4.1665795894e-2));
  const c = madd(f32x4.splat(1.9875691500e-4), r, f32x4.splat(1.3981999507e-3));
  const p = madd(r2, madd(r2, c, b), a);
  const y = f32x4.add(madd(p, r2, r), f32x4.splat(1.0));
  // 2ⁿ from the bits of n + 1.5·2²³ (exact): its low bits are n in two's complement.
  const scale = i32x4.shl(i32x4.add(f32x4.add(n, f32x4.splat(SHIFT)), i32x4.splat(127 - 0x4b400000)), 23);
  return f32x4.mul(y, scale);
}

/** e^x clamped to the f32 normal range. */
// @ts-ignore: decorator
@inline export function expSafe4(x: v128): v128 {
  return expReduced4(f32x4.pmin(f32x4.pmax(x, f32x4.splat(-87.33654)), f32x4.splat(88.72283)), true);
}

/** expSafe4 for x ≤ 0 (or NaN): the same bits without the clamps and cap that only inputs above 0 reach. */
// @ts-ignore: decorator
@inline function expSafeBelowZero4(x: v128): v128 {
  return expReduced4(f32x4.pmax(x, f32x4.splat(-87.33654)), false);
}

/** expSafe4 for x ≥ 0 (or NaN): the same bits without the clamp that only inputs below 0 reach. */
// @ts-ignore: decorator
@inline function expSafeAboveZero4(x: v128): v128 {
  return expReduced4(f32x4.pmin(x, f32x4.splat(88.72283)), true);
}

/** e^x over the whole f32 range: 0 below the normal range, +Infinity above it. */
// @ts-ignore: decorator
@inline export function exp4(x: v128): v128 {
  let y = expSafe4(x);
  y = v128.bitselect(f32x4.splat(0), y, f32x4.lt(x, f32x4.splat(-87.33654)));
  return v128.bitselect(f32x4.splat(Infinity), y, f32x4.gt(x, f32x4.splat(88.72283)));
}

/** The logistic function σ(x) = 1 / (1 + e^−x), overflow-safe. */
// @ts-ignore: decorator
@inline export function sigmoid4(x: v128): v128 {
  const one = f32x4.splat(1.0);
  // −|x| by setting the sign bit: the bits f32x4.neg(f32x4.abs(x)) gives, in one instruction.
  const e = expSafeBelowZero4(v128.or(x, i32x4.splat(0x80000000)));
  const d = f32x4.div(one, f32x4.add(one, e));
  return v128.bitselect(d, f32x4.mul(e, d), f32x4.ge(x, f32x4.splat(0)));
}

/** tanh(x). */
// @ts-ignore: decorator
@inline export function tanh4(x: v128): v128 {
  const one = f32x4.splat(1.0);
  const ax = f32x4.abs(x);
  const s = f32x4.mul(x, x);
  let p = f32x4.splat(-5.70498872745e-3);
  p = madd(p, s, f32x4.splat(2.06390887954e-2));
  p = madd(p, s, f32x4.splat(-5.37397155531e-2));
  p = madd(p, s, f32x4.splat(1.33314422036e-1));
  p = madd(p, s, f32x4.splat(-3.33332819422e-1));
  const small = madd(f32x4.mul(p, s), x, x);
  const e = expSafeAboveZero4(f32x4.add(ax, ax));
  const magnitude = f32x4.sub(one, f32x4.div(f32x4.splat(2.0), f32x4.add(e, one)));
  const chosen = v128.bitselect(small, magnitude, f32x4.lt(ax, f32x4.splat(0.625)));
  // The sign of x on every result, so tanh(−0) = −0 as IEEE 754 and Math give it (the mask drops chosen's own sign).
  return v128.bitselect(chosen, x, i32x4.splat(0x7fffffff));
}

/**
 * c + a·b per lane: a multiply and an add, each rounded (IEEE 754), in the standard kernel set. The relaxed set
 * (scripts/build-wasm.mjs compiles the kernels a second time with this body made f32x4.relaxed_madd) lets the engine
 * fuse them into one multiply-add with one rounding where the processor has it (WebAssembly relaxed SIMD), so its
 * sums differ from the standard set's in the last bits.
 */
// @ts-ignore: decorator
@inline export function madd(a: v128, b: v128, c: v128): v128 {
  return f32x4.add(c, f32x4.mul(a, b));
}

/** Loads 4 lanes, or one value into every lane when `full` is false (the scalar tail of a row). */
// @ts-ignore: decorator
@inline export function load4(p: usize, full: bool): v128 {
  return full ? v128.load(p) : v128.load32_splat(p);
}

/** Stores 4 lanes, or lane 0 alone when `full` is false. */
// @ts-ignore: decorator
@inline export function store4(p: usize, v: v128, full: bool): void {
  if (full) v128.store(p, v);
  else store<f32>(p, f32x4.extract_lane(v, 0));
}

/** True when row `b` is past its length at `step` (its state is held); `lengths` 0 means no lengths. */
// @ts-ignore: decorator
@inline export function held(lengths: usize, b: i32, step: i32): bool {
  return lengths != 0 && step >= load<i32>(lengths + (<usize>b << 2));
}

/** sigmoid4 as a call (not inlined): for the scalar tails of rows, where code size matters more than a call. */
export function sigmoidCall4(x: v128): v128 {
  return sigmoid4(x);
}

/** tanh4 as a call (not inlined), for the scalar tails. */
export function tanhCall4(x: v128): v128 {
  return tanh4(x);
}
