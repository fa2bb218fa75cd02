/**
 * Text generation with a next-token model: feed the prefix, then sample (or take the arg-max of) each next token
 * and feed it back, on one stream of the runtime.
 */
import { fail } from '@weft/core/base';
import type { Runtime } from './runtime.js';
import type { SamplingOptions, UniformSource } from './sampling.js';
import { greedy, sample } from './sampling.js';

/** How `generateTokens` generates. */
export interface GenerateOptions extends SamplingOptions {
  /** Token ids to start from (at least one). */
  readonly prefix: readonly number[];
  /** How many tokens to generate after the prefix. */
  readonly length: number;
  /** Sample with this generator; absent means greedy. */
  readonly random?: UniformSource;
  /** Stop early after this token. */
  readonly endToken?: number;
}

/**
 * Feeds the prefix through a token model, then generates `length` tokens (greedy, or sampled with `random`), stopping
 * early at `endToken`; returns the generated ids.
 */
export function generateTokens(runtime: Runtime, options: GenerateOptions): number[] {
  if (runtime.vocabularySize === 0) fail('invalid_argument', 'generateTokens', 'a model over token ids', 'a model over numbers');
  if (options.prefix.length === 0) fail('invalid_argument', 'generateTokens.prefix', 'at least one token id', 'none');
  if (!Number.isInteger(options.length) || options.length < 0) fail('invalid_argument', 'generateTokens.length', 'a whole number ≥ 0', String(options.length));
  const streams = runtime.streams(1);
  const token = new Int32Array(1);
  const width = runtime.outputWidth;
  const scratch = new Float64Array(width);
  let logits: Float32Array = new Float32Array(width);
  for (const id of options.prefix) {
    token[0] = id;
    logits = streams.step(token);
  }
  const out: number[] = [];
  try {
    for (let i = 0; i < options.length; i++) {
      const next = options.random === undefined ? greedy(logits, 0, width) : sample(logits, 0, width, options.random, options, scratch);
      out.push(next);
      if (next === options.endToken) break;
      token[0] = next;
      logits = streams.step(token);
    }
  } finally {
    streams.close();
  }
  return out;
}
