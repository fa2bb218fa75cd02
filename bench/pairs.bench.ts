/**
 * One training step of an encoder-decoder on a batch of token pairs, through the trainer (forward, reverse sweep,
 * clipping, the finiteness checks and Adam), with each attention form and without attention; reported in µs per
 * target token. `train.pairs.attention.ratio` is the step with general attention (the command's default form) over
 * the step without, both from this run: what attention itself costs.
 *
 * The shape is a small translation-like task: 32 pairs per batch, sources of 24 tokens, targets of 20 (plus the end
 * token), vocabularies of 48, embeddings of 32, one LSTM layer of 128 in the encoder and the decoder.
 */
import { Random } from '@weft/core';
import type { AttentionForm } from '@weft/cells';
import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, Trainer, pairBatches } from '@weft/optim';
import type { TokenPair } from '@weft/optim';
import type { BenchCase, BenchResult, Derived } from './harness.js';

const ROWS = 32;
const SOURCE = 24;
const TARGET = 20;
const VOCABULARY = 48;
const HIDDEN = 128;
const EMBEDDING = 32;

function idOf(form: AttentionForm | null): string {
  return `train.pairs.${form ?? 'plain'}.b${ROWS}s${SOURCE}t${TARGET}h${HIDDEN}`;
}

function pairCase(form: AttentionForm | null): BenchCase {
  return {
    id: idOf(form),
    unit: 'µs/token',
    setup: () => {
      const random = new Random('bench-pairs');
      const pairs: TokenPair[] = Array.from({ length: ROWS }, () => ({
        source: Array.from({ length: SOURCE }, () => 2 + random.integer(VOCABULARY - 2)),
        target: Array.from({ length: TARGET }, () => 2 + random.integer(VOCABULARY - 2)),
      }));
      const side = (readout: boolean) => ({
        input: { kind: 'embedding' as const, vocabulary: VOCABULARY, width: EMBEDDING },
        layers: [{ cell: 'lstm', hidden: HIDDEN }],
        ...(readout ? { readout: { width: VOCABULARY } } : {}),
      });
      const model = new EncoderDecoderModel(
        { kind: 'encoder-decoder', ...(form === null ? {} : { attention: form }), encoder: side(false), decoder: side(true) },
        { seed: 1 },
      );
      const data = pairBatches(pairs, { batchSize: ROWS, startToken: 0, endToken: 1 });
      const trainer = new Trainer({ model, data, optimizer: new AdamRule({ rate: 1e-4 }), epochs: 1, gradientNormLimit: 1 });
      return () => void trainer.step();
    },
    value: (hz) => 1e6 / (hz * ROWS * (TARGET + 1)),
  };
}

export const cases: BenchCase[] = [pairCase(null), pairCase('general'), pairCase('dot'), pairCase('additive')];

export const derived: Derived = (results): Record<string, BenchResult> => {
  const out: Record<string, BenchResult> = {};
  for (const suffix of ['', '.js']) {
    const plain = results[`${idOf(null)}${suffix}`];
    const general = results[`${idOf('general')}${suffix}`];
    if (plain !== undefined && general !== undefined)
      out[`train.pairs.attention.ratio${suffix}`] = { value: Number((general.value / plain.value).toPrecision(4)), unit: 'ratio' };
  }
  return out;
};
