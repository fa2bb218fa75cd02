/**
 * The agreement check of the WebAssembly kernels with their JavaScript twins (webassembly.test.ts and
 * webassembly-attention.test.ts): the same seeded arrays, once in the backend's memory for the SIMD twin and once in
 * ordinary arrays for the JavaScript kernel; every array compared afterwards, bit for bit when `exact`, else within
 * |a − b| ≤ 1e-5·max(1, |a|, |b|) (tests/helpers/close.ts form).
 */
import { expect } from 'vitest';
import { Random, javascriptKernels } from '@weft/core';
import type { Backend, KernelTable } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';

/** An array's length, or null for an argument given as null. */
export type Spec = number | null;

/** Matching arrays: one set in the backend's memory, one in ordinary arrays, the same seeded values. */
export function twinArrays(
  backend: Backend,
  specs: readonly Spec[],
  seed: number | string,
  low = -2,
  high = 2,
): { wasm: (Float32Array | null)[]; js: (Float32Array | null)[] } {
  const random = new Random(seed);
  const wasm: (Float32Array | null)[] = [];
  const js: (Float32Array | null)[] = [];
  for (const length of specs) {
    if (length === null) {
      wasm.push(null);
      js.push(null);
      continue;
    }
    const a = backend.pool.take('f32', length) as Float32Array;
    for (let i = 0; i < length; i++) a[i] = random.between(low, high);
    expect(backend.holds(a)).toBe(true);
    wasm.push(a);
    js.push(Float32Array.from(a));
  }
  return { wasm, js };
}

/** Runs `run` on both tables over matching arrays and compares them; returns the worst relative gap. */
export function agreeWithTwin(
  backend: Backend,
  specs: readonly Spec[],
  run: (k: KernelTable, x: (Float32Array | null)[]) => void,
  exact: boolean,
  seed: number | string = 1,
  low = -2,
  high = 2,
): number {
  const { wasm, js } = twinArrays(backend, specs, seed, low, high);
  run(backend.kernels, wasm);
  run(javascriptKernels, js);
  let worst = 0;
  wasm.forEach((a, i) => {
    const b = js[i];
    if (a === null || b === null) return;
    if (exact) expect(Array.from(a), `array ${i}`).toEqual(Array.from(b));
    else worst = Math.max(worst, worstGap(a, b));
  });
  expect(worst).toBeLessThanOrEqual(1e-5);
  return worst;
}
