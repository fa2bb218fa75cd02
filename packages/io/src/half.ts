/**
 * IEEE 754-2008 binary16 ("half precision"): 1 sign bit, 5 exponent bits (bias 15), 10 fraction bits.
 * Conversion from a number rounds to nearest, ties to even, the same way the hardware does for binary32; values
 * beyond the largest finite half (65504) round to infinity; subnormals down to 2⁻²⁴ are kept; NaN stays NaN
 * (quiet, with its sign).
 */

const scratch = new Float32Array(1);
const bits = new Uint32Array(scratch.buffer);

/** The binary16 bit pattern nearest to `value` (first rounded to binary32, which cannot change the result). */
export function toHalfBits(value: number): number {
  scratch[0] = value;
  const x = bits[0];
  const sign = (x >>> 16) & 0x8000;
  const exponent = (x >>> 23) & 0xff;
  let mantissa = x & 0x7fffff;
  if (exponent === 0xff) return sign | 0x7c00 | (mantissa !== 0 ? 0x200 | (mantissa >>> 13) : 0);
  // Unbiased exponent e = exponent − 127; half exponent = e + 15.
  const halfExponent = exponent - 127 + 15;
  if (halfExponent >= 0x1f) return sign | 0x7c00;
  if (halfExponent <= 0) {
    // Subnormal half (or zero): shift the full significand (with its hidden 1) right.
    if (halfExponent < -10) return sign;
    mantissa |= 0x800000;
    const shift = 14 - halfExponent;
    const half = mantissa >>> shift;
    const remainder = mantissa & ((1 << shift) - 1);
    const midpoint = 1 << (shift - 1);
    const rounded = remainder > midpoint || (remainder === midpoint && (half & 1) === 1) ? half + 1 : half;
    return sign | rounded;
  }
  const half = (halfExponent << 10) | (mantissa >>> 13);
  const remainder = mantissa & 0x1fff;
  // Rounding may carry into the exponent, and from the largest finite value into infinity: both are right.
  const rounded = remainder > 0x1000 || (remainder === 0x1000 && (half & 1) === 1) ? half + 1 : half;
  return sign | rounded;
}

/** The number a binary16 bit pattern stands for. */
export function fromHalfBits(h: number): number {
  const sign = h & 0x8000 ? -1 : 1;
  const exponent = (h >>> 10) & 0x1f;
  const fraction = h & 0x3ff;
  if (exponent === 0) return sign * fraction * 2 ** -24;
  if (exponent === 0x1f) return fraction === 0 ? sign * Infinity : Number.NaN;
  return sign * (1 + fraction / 1024) * 2 ** (exponent - 15);
}
