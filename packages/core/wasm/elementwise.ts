/**
 * Elementwise kernels in f32x4 SIMD, twins of kernels/elementwise.ts and kernels/activations.ts with the same
 * arguments (byte offsets for arrays). `out` may alias any input: each group of 4 lanes is read before it is
 * written. The sums, differences and products round once to f32, exactly as the JavaScript twins do (an f64
 * operation on two f32 values rounded to f32 is the correctly rounded f32 operation), so these agree bit for bit;
 * `scale` and `addScaledInto` work in f64 for the same reason. The activations use the approximations of math.ts.
 */
// @ts-ignore: sigmoidCall4 and tanhCall4 are used by the expanded loops
import { exp4, load4, sigmoid4, sigmoidCall4, store4, tanh4, tanhCall4 } from './math';

// Lane loops here are expanded by scripts/build-wasm.mjs into a one-vector loop and a scalar tail (see steps.ts);
// this file asks for no doubling: its loops are bound by memory, not by chains of arithmetic.

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

export function add(out: usize, a: usize, b: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), f32x4.add(load4(at(a, i), full), load4(at(b, i), full)), full);
    i += full ? 4 : 1;
  }
}

export function subtract(out: usize, a: usize, b: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), f32x4.sub(load4(at(a, i), full), load4(at(b, i), full)), full);
    i += full ? 4 : 1;
  }
}

export function multiply(out: usize, a: usize, b: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), f32x4.mul(load4(at(a, i), full), load4(at(b, i), full)), full);
    i += full ? 4 : 1;
  }
}

export function addInto(out: usize, a: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), f32x4.add(load4(at(out, i), full), load4(at(a, i), full)), full);
    i += full ? 4 : 1;
  }
}

/** out += a ⊙ b. */
export function multiplyInto(out: usize, a: usize, b: usize, length: i32): void {
  // The JavaScript twin computes out + a·b in f64 and rounds once; do the same in f64 to agree bit for bit.
  for (let i = 0; i < length; i++) {
    const v = <f64>load<f32>(at(out, i)) + <f64>load<f32>(at(a, i)) * <f64>load<f32>(at(b, i));
    store<f32>(at(out, i), <f32>v);
  }
}

export function scale(out: usize, a: usize, s: f64, length: i32): void {
  for (let i = 0; i < length; i++) store<f32>(at(out, i), <f32>(s * <f64>load<f32>(at(a, i))));
}

export function addScaledInto(out: usize, a: usize, s: f64, length: i32): void {
  for (let i = 0; i < length; i++) {
    store<f32>(at(out, i), <f32>(<f64>load<f32>(at(out, i)) + s * <f64>load<f32>(at(a, i))));
  }
}

/** out[r, c] = a[r, c] + row[c]. */
export function addRow(out: usize, a: usize, row: usize, rows: i32, cols: i32): void {
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; ) {
      const full = c + 4 <= cols;
      store4(at(out, base + c), f32x4.add(load4(at(a, base + c), full), load4(at(row, c), full)), full);
      c += full ? 4 : 1;
    }
  }
}

/** out[c] (+)= Σ_r a[r, c], rows in order (the twin's order, so the sums agree bit for bit). */
export function sumRows(out: usize, a: usize, rows: i32, cols: i32, accumulate: i32): void {
  if (!accumulate) memory.fill(out, 0, <usize>cols << 2);
  for (let r = 0; r < rows; r++) {
    const base = r * cols;
    for (let c = 0; c < cols; ) {
      const full = c + 4 <= cols;
      store4(at(out, c), f32x4.add(load4(at(out, c), full), load4(at(a, base + c), full)), full);
      c += full ? 4 : 1;
    }
  }
}

export function sigmoid(out: usize, a: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), sigmoid4(load4(at(a, i), full)), full);
    i += full ? 4 : 1;
  }
}

export function tanh(out: usize, a: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), tanh4(load4(at(a, i), full)), full);
    i += full ? 4 : 1;
  }
}

export function exp(out: usize, a: usize, length: i32): void {
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    store4(at(out, i), exp4(load4(at(a, i), full)), full);
    i += full ? 4 : 1;
  }
}

/** inputGradient += outputGradient · y(1 − y). */
export function sigmoidGradientInto(inputGradient: usize, outputGradient: usize, y: usize, length: i32): void {
  const one = f32x4.splat(1);
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    const v = load4(at(y, i), full);
    const d = f32x4.mul(f32x4.mul(load4(at(outputGradient, i), full), v), f32x4.sub(one, v));
    store4(at(inputGradient, i), f32x4.add(load4(at(inputGradient, i), full), d), full);
    i += full ? 4 : 1;
  }
}

/** inputGradient += outputGradient · (1 − y²). */
export function tanhGradientInto(inputGradient: usize, outputGradient: usize, y: usize, length: i32): void {
  const one = f32x4.splat(1);
  for (let i = 0; i < length; ) {
    const full = i + 4 <= length;
    const v = load4(at(y, i), full);
    const d = f32x4.mul(load4(at(outputGradient, i), full), f32x4.sub(one, f32x4.mul(v, v)));
    store4(at(inputGradient, i), f32x4.add(load4(at(inputGradient, i), full), d), full);
    i += full ? 4 : 1;
  }
}
