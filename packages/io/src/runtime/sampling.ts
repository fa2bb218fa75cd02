/**
 * Choosing the next token from a row of logits (common practice): greedy (the arg-max), or sampling from
 * softmax(z / temperature), optionally among the k largest logits only. Sampling takes its uniform numbers from
 * the caller's generator (anything with `uniform()`, such as core's seeded Random), so results repeat with the
 * seed. Allocation-free when given a scratch array of the row's width.
 */
import { fail } from '@weft/core/base';

/** Anything that draws uniform numbers in [0, 1), such as core's seeded `Random`. */
export interface UniformSource {
  /** The next uniform number in [0, 1). */
  uniform(): number;
}

/** How `sample` chooses a token. */
export interface SamplingOptions {
  /** Divides the logits; below 1 sharpens, above 1 flattens. Default 1. */
  readonly temperature?: number;
  /** Sample only among the k most likely tokens (0 or absent: all). */
  readonly topK?: number;
}

/** Index of the largest logit in row [offset, offset + width) (the first, on ties). */
export function greedy(logits: ArrayLike<number>, offset: number, width: number): number {
  let best = 0;
  for (let j = 1; j < width; j++) if (logits[offset + j] > logits[offset + best]) best = j;
  return best;
}

/**
 * Draws a token index from softmax(row / temperature), among the `topK` largest logits when given; allocation-free with
 * a `scratch` of the row's width.
 */
export function sample(
  logits: ArrayLike<number>,
  offset: number,
  width: number,
  random: UniformSource,
  options: SamplingOptions = {},
  scratch?: Float64Array,
): number {
  const temperature = options.temperature ?? 1;
  const topK = options.topK ?? 0;
  if (!(temperature > 0) || !Number.isFinite(temperature)) fail('invalid_option', 'sample.temperature', 'a finite number > 0', String(temperature));
  if (!Number.isInteger(topK) || topK < 0) fail('invalid_option', 'sample.topK', 'a whole number ≥ 0', String(topK));
  const weights = scratch ?? new Float64Array(width);
  const max = logits[offset + greedy(logits, offset, width)];
  // The k-th largest logit is the cut-off (ties at the cut-off all stay in).
  let cutoff = -Infinity;
  if (topK > 0 && topK < width) {
    for (let j = 0; j < width; j++) weights[j] = logits[offset + j];
    cutoff = kthLargest(weights, width, topK);
  }
  let total = 0;
  for (let j = 0; j < width; j++) {
    const z = logits[offset + j];
    const w = z >= cutoff ? Math.exp((z - max) / temperature) : 0;
    weights[j] = w;
    total += w;
  }
  let u = random.uniform() * total;
  for (let j = 0; j < width; j++) {
    u -= weights[j];
    if (u < 0) return j;
  }
  // Rounding can leave u a hair above 0: take the last token with weight.
  for (let j = width - 1; j >= 0; j--) if (weights[j] > 0) return j;
  return 0;
}

/** The k-th largest of values[0..width), by partial selection in place (the order of `values` is lost). */
function kthLargest(values: Float64Array, width: number, k: number): number {
  for (let i = 0; i < k; i++) {
    let best = i;
    for (let j = i + 1; j < width; j++) if (values[j] > values[best]) best = j;
    const held = values[i];
    values[i] = values[best];
    values[best] = held;
  }
  return values[k - 1];
}
