/**
 * The SIMD transcendentals of the WebAssembly backend (core/wasm/math.ts) against Math in f64, over a dense grid
 * of the f32 range that matters, saturation included, and at NaN and ±Infinity. The error measure is the one the
 * agreement tests use, |a − b| / max(1, |b|) with b = Math's value (for tanh and the logistic function, whose
 * values lie in [−1, 1], that is the absolute error); exp is measured relatively (|a − b| / |b|) over its normal range.
 * The bounds pinned here are the worst errors measured on the grid, rounded up.
 */
import { describe, expect, it } from 'vitest';
import { createWebAssemblyBackend, webAssemblyUnavailable } from '@weft/core';

const available = webAssemblyUnavailable() === null;
const backend = available ? createWebAssemblyBackend({ memoryBytes: 64 * 1048576 }) : null;

function grid(low: number, high: number, count: number): Float32Array {
  const values = backend!.pool.take('f32', count) as Float32Array;
  for (let i = 0; i < count; i++) values[i] = Math.fround(low + ((high - low) * i) / (count - 1));
  return values;
}

function worst(kernel: 'sigmoid' | 'tanh' | 'exp', low: number, high: number, reference: (x: number) => number, relative = false): number {
  const x = grid(low, high, 400_001);
  const y = backend!.pool.take('f32', x.length) as Float32Array;
  backend!.kernels[kernel](y, x, x.length);
  let error = 0;
  for (let i = 0; i < x.length; i++) {
    const b = reference(x[i]);
    const e = relative ? Math.abs(y[i] - b) / Math.abs(b) : Math.abs(y[i] - b) / Math.max(1, Math.abs(b));
    if (!(e <= error)) error = e;
  }
  return error;
}

const logistic = (x: number): number => 1 / (1 + Math.exp(-x));

describe.skipIf(!available)("the WebAssembly backend's SIMD transcendentals", () => {
  it('computes the logistic function within 1.5e-7 of Math on [−100, 100] (f32 rounding is 6e-8)', () => {
    const error = worst('sigmoid', -100, 100, logistic);
    console.log(`sigmoid worst error on [-100, 100]: ${error.toExponential(3)}`);
    expect(error).toBeLessThan(1.5e-7);
  });

  it('computes tanh within 2e-7 of Math on [−20, 20], the small-argument polynomial included', () => {
    const error = worst('tanh', -20, 20, Math.tanh);
    const small = worst('tanh', -0.7, 0.7, Math.tanh);
    console.log(`tanh worst error on [-20, 20]: ${error.toExponential(3)}; on [-0.7, 0.7]: ${small.toExponential(3)}`);
    expect(error).toBeLessThan(2e-7);
    expect(small).toBeLessThan(2e-7);
  });

  it('computes exp within 3e-7 relative error of Math over the f32 normal range [−87.3, 88.7]', () => {
    const error = worst('exp', -87.3, 88.7, Math.exp, true);
    console.log(`exp worst relative error on [-87.3, 88.7]: ${error.toExponential(3)}`);
    expect(error).toBeLessThan(3e-7);
  });

  it('saturates exactly and passes NaN through: ±Infinity, huge values and NaN in every lane position', () => {
    const inputs = [Infinity, -Infinity, 1e30, -1e30, NaN, 0, -0, 1e-30, 3.4e38, -3.4e38];
    const x = backend!.pool.take('f32', inputs.length) as Float32Array;
    x.set(inputs);
    const y = backend!.pool.take('f32', inputs.length) as Float32Array;
    backend!.kernels.sigmoid(y, x, x.length);
    expect(Array.from(y).map((v) => (Number.isNaN(v) ? 'NaN' : v < 1e-37 ? 0 : v))).toEqual([1, 0, 1, 0, 'NaN', 0.5, 0.5, 0.5, 1, 0]);
    backend!.kernels.tanh(y, x, x.length);
    expect(Array.from(y).map((v) => (Number.isNaN(v) ? 'NaN' : v))).toEqual([1, -1, 1, -1, 'NaN', 0, -0, Math.fround(1e-30), 1, -1]);
    backend!.kernels.exp(y, x, x.length);
    expect(Array.from(y).map((v) => (Number.isNaN(v) ? 'NaN' : v))).toEqual([Infinity, 0, Infinity, 0, 'NaN', 1, 1, 1, Infinity, 0]);
  });
});
