/**
 * Matrix product throughput in GFLOP/s (2·M·K·N floating-point operations per call), shapes [M,K]×[K,N].
 *
 * Decision these numbers led to: the packed 4×4 register-blocked kernel (f64 panels, 16 accumulators) runs at
 * about 3 GFLOP/s here against about 0.8 for the plain i-k-j loop, so it is the only product the library uses;
 * for fewer than 4 rows (streaming inference) packing the right operand costs as much as the product, so that
 * case reads it in place. The naive loop is measured first, while its call site has seen only f32 arrays, so
 * the yardstick is not slowed by having seen two array types.
 *
 * Each f32 product runs on the default backend and again as `<id>.js` on the JavaScript backend. Decision: the
 * WebAssembly SIMD kernel (4 × 8 register block over packed panels, f32 accumulation) ran at 29.8–33 GFLOP/s against
 * 2.6–3.6 for the JavaScript one (8.3–11× across five runs; ≥ 6 asked), so it is the default wherever SIMD validates; the
 * JavaScript kernel stays as the reference, the fallback and the f64 path.
 */
import { Random, kernels } from '@weft/core';
import type { Backend, DType } from '@weft/core';
import type { BenchCase, BenchResult, Derived } from './harness.js';

function operands(backend: Backend, dtype: DType, rows: number, inner: number, cols: number) {
  const random = new Random(`bench-${rows}-${inner}-${cols}`);
  const make = (n: number) => {
    const array = backend.pool.take(dtype, n);
    for (let i = 0; i < n; i++) array[i] = random.between(-1, 1);
    return array;
  };
  return { a: make(rows * inner), b: make(inner * cols), out: make(rows * cols) };
}

function product(id: string, dtype: DType, rows: number, inner: number, cols: number, naive = false): BenchCase {
  const flops = 2 * rows * inner * cols;
  return {
    id,
    unit: 'GFLOP/s',
    setup: (backend) => {
      const { a, b, out } = operands(backend, dtype, rows, inner, cols);
      const table = backend.kernels;
      // The shape record is made once, as the library's callers make theirs.
      const shape = { rows, inner, cols };
      return naive ? () => kernels.matmulNaive(out, a, b, rows, inner, cols) : () => table.matmul(out, a, b, shape);
    },
    value: (hz) => (hz * flops) / 1e9,
    defaultOnly: naive || dtype === 'f64',
  };
}

export const cases: BenchCase[] = [
  product('matmul-naive.f32.32x192x512', 'f32', 32, 192, 512, true),
  product('matmul.f32.32x192x512', 'f32', 32, 192, 512),
  product('matmul.f32.32x320x1024', 'f32', 32, 320, 1024),
  product('matmul.f32.1x160x512', 'f32', 1, 160, 512),
  product('matmul.f64.32x192x512', 'f64', 32, 192, 512),
];

export const derived: Derived = (results): Record<string, BenchResult> => {
  const fast = results['matmul.f32.32x192x512'];
  const naive = results['matmul-naive.f32.32x192x512'];
  if (fast === undefined || naive === undefined) return {};
  return { 'matmul.f32.32x192x512.speedup-over-naive': { value: Number((fast.value / naive.value).toPrecision(4)), unit: 'ratio' } };
};
