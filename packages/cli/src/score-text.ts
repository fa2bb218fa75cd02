/**
 * `weft score` for a next-token text model: its perplexity on the last part of a text, streamed token by token
 * after a warm-up, beside a unigram and an interpolated Kneser-Ney n-gram counted on the text before that part.
 */
import { logSumExp } from '@weft/core';
import { createTranslator, textBaselines } from '@weft/io';
import type { Runtime } from '@weft/io/runtime';
import type { HeldOutReport } from './datasets.js';
import { CommandError } from './errors.js';
import { scoredCount } from './scored-part.js';
import type { ScoredPart } from './scored-part.js';

/** The largest entry of a row of logits and the row's log-sum-exp. */
export function logits(row: ArrayLike<number>): { best: number; logSumExp: number } {
  let best = 0;
  for (let k = 1; k < row.length; k++) if (row[k] > row[best]) best = k;
  return { best, logSumExp: logSumExp(row, 0, row.length) };
}

/** Tokens of warm-up before the first scored token: state only. */
const WARM_UP = 256;

/** The perplexity of a text model on the scored part of `text`, beside the unigram and n-gram baselines. */
export function scoreText(runtime: Runtime, meta: Record<string, unknown>, text: string, name: string, part: ScoredPart): HeldOutReport {
  const translator = createTranslator(meta);
  const { ids, pieces, unknown } = translator.tokenIds(text);
  if (ids.length < 10)
    throw new CommandError(`${name}: ${ids.length} tokens are too few to score beside baselines counted on the text before them (at least 10)`);
  const { scored, warning, same } = scoredCount(ids.length, part, 'text', {
    all: 'tokens',
    test: 'testTokens',
    fitted: ['trainingTokens', 'validationTokens'],
  });
  const testStart = ids.length - scored;
  const streams = runtime.streams(1);
  const token = new Int32Array(1);
  let crossEntropy = 0;
  for (let p = Math.max(0, testStart - 1 - WARM_UP); p + 1 < ids.length; p++) {
    token[0] = ids[p];
    const out = streams.step(token);
    if (p + 1 >= testStart) crossEntropy += logits(out).logSumExp - out[ids[p + 1]];
  }
  const vocabulary = translator.outputNames.length;
  // Baselines counted on the text before the scored part; the n-gram order chosen on its last fifth.
  const most = meta.tokens === 'words' ? 3 : 6;
  const judged = textBaselines(ids, Math.max(1, Math.round(testStart * 0.8)), testStart, vocabulary, most);
  return {
    metric: 'perplexity',
    lowerIsBetter: true,
    what: `the last ${scored} tokens of ${name}${same ? " (the training run's test part)" : ''}, each predicted from those before it${unknown > 0 ? ` (${unknown} of ${pieces.length} pieces of the file not in the vocabulary, read as the unknown token)` : ''}`,
    model: { name: 'model', description: '', value: Math.exp(crossEntropy / scored) },
    baselines: [
      { name: 'unigram', description: `each token as often as in the ${testStart} tokens before (add-one)`, value: judged.unigram },
      {
        name: `${judged.order}-gram`,
        description: `interpolated Kneser-Ney, counted on the ${testStart} tokens before, order ${judged.order} of 1-${most} chosen on their last fifth`,
        value: judged.ngram,
      },
    ],
    names: [],
    context: warning === null ? [] : [warning],
  };
}
