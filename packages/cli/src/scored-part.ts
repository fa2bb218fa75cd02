/**
 * Which part of a file `weft score` scores: the end of a series or text, or a seeded share of sequences or pairs
 * (the rest fits the baselines), and when the file is the one the model was trained on (its SHA-256 matches the
 * weight file's record), the training run's own test part, or a warning when the part asked for overlaps the rows
 * it was trained on or stopped by.
 */
import type { Random } from '@weft/core';

/** How the scored part is chosen: the share asked for, and what the weight file says of its own training data. */
export interface ScoredPart {
  /** `--test`, when given. */
  readonly share: number | undefined;
  /** True when the file is the one the model was trained on (its SHA-256 matches the record). */
  readonly trainedOn: boolean;
  /** The parts recorded by `weft train` (metadata.split), if any. */
  readonly split: Readonly<Record<string, unknown>> | null;
}

/** The share scored when neither `--test` nor the training run's record says otherwise. */
export const DEFAULT_SHARE = 0.2;

/**
 * How many of `count` items (rows, tokens, sequences) are scored: the training run's own test part when this is its
 * data file and nothing else is asked, else the share asked (default 0.2). `recorded` names the split's count fields.
 */
export function scoredCount(
  count: number,
  part: ScoredPart,
  kind: string,
  fields: { all: string; test: string; fitted: string[] },
): { scored: number; warning: string | null; same: boolean } {
  const split = part.split;
  const recorded = split !== null && split.kind === kind && split[fields.all] === count && Number.isInteger(split[fields.test]);
  if (part.share === undefined && part.trainedOn && recorded) return { scored: split[fields.test] as number, warning: null, same: true };
  const scored = Math.max(1, Math.min(count - 1, Math.round(count * (part.share ?? DEFAULT_SHARE))));
  if (!part.trainedOn) return { scored, warning: null, same: false };
  const fitted = recorded ? fields.fitted.reduce((n, f) => n + (Number(split[f]) || 0), 0) : count;
  const overlap = kind === 'series' || kind === 'text' ? Math.max(0, fitted - (count - scored)) : Math.min(scored, fitted);
  return {
    scored,
    same: false,
    warning:
      overlap > 0
        ? `warning: this is the file the model was trained on (the same SHA-256), and ${overlap} of the ${scored} scored ${kind === 'series' ? 'rows' : kind === 'text' ? 'tokens' : 'items'} were trained on or used for stopping: the model's figures are optimistic; leave out --test to score its own test part, or score new data`
        : null,
  };
}

/** Which of `count` sequences or pairs are scored: a seeded shuffle's first ones, as `weft train` drew its test part. */
export function scoredItems(
  count: number,
  part: ScoredPart,
  kind: string,
  fields: { all: string; test: string; fitted: string[] },
  seedOf: (seed: string) => Random,
): { scored: Set<number>; warning: string | null; same: boolean } {
  const { scored, warning, same } = scoredCount(count, part, kind, fields);
  const seed = same && typeof part.split?.seed === 'string' ? part.split.seed : '1';
  const order = Array.from({ length: count }, (_, i) => i);
  seedOf(seed).shuffle(order);
  return { scored: new Set(order.slice(0, scored)), warning, same };
}
