/** Reductions over the first `length` elements; each returns a number and writes nothing. */
import type { FloatArray } from '../dtype.js';

/** Σ a[i], summed in index order. */
export function sum(a: FloatArray, length: number): number {
  let s = 0;
  for (let i = 0; i < length; i++) s += a[i];
  return s;
}

/** Σ a[i]·b[i], summed in index order. */
export function dot(a: FloatArray, b: FloatArray, length: number): number {
  let s = 0;
  for (let i = 0; i < length; i++) s += a[i] * b[i];
  return s;
}

/** Σ a[i]², summed in index order. */
export function sumOfSquares(a: FloatArray, length: number): number {
  let s = 0;
  for (let i = 0; i < length; i++) s += a[i] * a[i];
  return s;
}

/** The largest |a[i]|; NaN if any element is NaN. */
export function maxAbs(a: FloatArray, length: number): number {
  let m = 0;
  for (let i = 0; i < length; i++) {
    const v = Math.abs(a[i]);
    if (!(v <= m)) m = v;
  }
  return m;
}

/** Index of the first non-finite element, or −1 when all are finite. */
export function firstNonFinite(a: FloatArray, length: number): number {
  for (let i = 0; i < length; i++) if (!Number.isFinite(a[i])) return i;
  return -1;
}

/** Limits every a[i] to [−limit, limit] in place; returns how many entries it changed (NaN stays NaN). */
export function limitEntries(a: FloatArray, limit: number, length: number): number {
  let changed = 0;
  for (let i = 0; i < length; i++) {
    if (a[i] > limit) {
      a[i] = limit;
      changed++;
    } else if (a[i] < -limit) {
      a[i] = -limit;
      changed++;
    }
  }
  return changed;
}
