/**
 * Gradient clipping and the finiteness check, over the gradient buffers of the parameters.
 *
 * By global norm (Pascanu, Mikolov & Bengio 2013, "On the difficulty of training recurrent neural networks",
 * Algorithm 1): with ĝ the concatenation of all gradients, if ‖ĝ‖ ≥ threshold then ĝ ← (threshold / ‖ĝ‖)·ĝ.
 * By value (common practice): every entry limited to [−limit, limit].
 *
 * Each buffer goes through the kernels of the backend whose memory holds it (sums of squares, scaling, limits,
 * the search for a non-finite entry), so clipping runs where the gradients live.
 */
import { backendOf, fail } from '@weft/core';
import type { Tensor } from '@weft/core';

/** ‖ĝ‖₂ over every parameter's gradient (NaN or Infinity if any entry is not finite). */
export function gradientNorm(parameters: readonly Tensor[]): number {
  let total = 0;
  for (const p of parameters) {
    const g = p.gradient;
    if (g === null) continue;
    total += backendOf(g).kernels.sumOfSquares(g, g.length);
  }
  return Math.sqrt(total);
}

/**
 * Scales all gradients together so their global norm is at most `threshold`; returns the norm before. `norm` is
 * that norm when the caller has just computed it (`gradientNorm`), saving a pass over every gradient.
 */
export function limitGradientNorm(parameters: readonly Tensor[], threshold: number, norm: number = gradientNorm(parameters)): number {
  if (!(threshold > 0)) fail('invalid_option', 'limitGradientNorm.threshold', 'a number > 0', String(threshold));
  if (norm >= threshold && Number.isFinite(norm)) {
    const factor = threshold / norm;
    for (const p of parameters) {
      const g = p.gradient;
      if (g === null) continue;
      backendOf(g).kernels.scale(g, g, factor, g.length);
    }
  }
  return norm;
}

/** Limits every gradient entry to [−limit, limit]; returns how many entries were changed. */
export function limitGradientValues(parameters: readonly Tensor[], limit: number): number {
  if (!(limit > 0)) fail('invalid_option', 'limitGradientValues.limit', 'a number > 0', String(limit));
  let changed = 0;
  for (const p of parameters) {
    const g = p.gradient;
    if (g === null) continue;
    changed += backendOf(g).kernels.limitEntries(g, limit, g.length);
  }
  return changed;
}

/** The first NaN or ±Infinity found in a set of gradients. */
export interface NonFiniteEntry {
  /** The parameter's name (or `parameters[i]`). */
  readonly name: string;
  /** Its offset in the parameter's row-major values. */
  readonly offset: number;
  /** The value found there (NaN, Infinity or -Infinity). */
  readonly value: number;
}

/** The first non-finite entry among the given buffers (`gradient` or `values` of each parameter), or null. */
export function firstNonFiniteEntry(parameters: readonly Tensor[], which: 'gradient' | 'values'): NonFiniteEntry | null {
  for (let p = 0; p < parameters.length; p++) {
    const t = parameters[p];
    const buffer = which === 'gradient' ? t.gradient : t.data;
    if (buffer === null) continue;
    const i = backendOf(buffer).kernels.firstNonFinite(buffer, buffer.length);
    if (i >= 0) return { name: t.name !== '' ? t.name : `parameters[${p}]`, offset: i, value: buffer[i] };
  }
  return null;
}
