/**
 * Attention where it matters: an encoder-decoder rewrites container seal codes as a harbour's hand-held scanner
 * reads them (lower-case letters and digits, with a dash wherever the printed label has a break) into the form the
 * port's system files them under (capitals, no dashes). Sources are 20–60 characters long. Two models of about
 * the same parameter count, trained on the same pairs for the same number of steps: one squeezes the whole source
 * into the encoder's final state, the other also looks back at every source position through attention (Luong,
 * Pham & Manning 2015, "general" score). Shown: exact-match rate on held-out codes by source length, in thirds.
 * The data is invented for this demonstration.
 *
 * Run: npx tsx examples/seal-codes/main.ts
 */
import { Random } from '@weft/core';
import { EncoderDecoderModel, parameterLayout } from '@weft/cells';
import type { EncoderDecoderDescription } from '@weft/cells';
import { AdamRule, Trainer, pairBatches } from '@weft/optim';
import type { TokenPair } from '@weft/optim';
import { modelTensors, tokenAccuracy, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import { attentionMapSvg } from '@weft/cli';
import { writeFileSync } from 'node:fs';
import { runIfMain, smallBudget } from '../shared.js';

const SYMBOLS = 'abcdefgh0123456789';
const START = 0;
const END = 1;

/** One scanned code and its filed form: `length` characters, about one in seven a dash (never two in a row). */
export function sealCode(random: Random, length: number): { scanned: string; filed: string } {
  let scanned = '';
  for (let i = 0; i < length; i++) {
    const dash = i > 0 && i < length - 1 && scanned[i - 1] !== '-' && random.uniform() < 0.15;
    scanned += dash ? '-' : SYMBOLS[random.integer(SYMBOLS.length)];
  }
  return { scanned, filed: scanned.replace(/-/g, '').toUpperCase() };
}

// Ids: sources 0 unused, then '-' and the symbols; targets 0 start, 1 end, then the capitals and digits.
const sourceAlphabet = ['<unused>', '-', ...SYMBOLS];
const targetAlphabet = ['<start>', '<end>', ...SYMBOLS.toUpperCase()];
const toPair = (code: { scanned: string; filed: string }): TokenPair => ({
  source: Array.from(code.scanned, (c) => sourceAlphabet.indexOf(c)),
  target: Array.from(code.filed, (c) => targetAlphabet.indexOf(c)),
});

function description(hidden: number, attention: 'general' | null): EncoderDecoderDescription {
  const layer = { cell: 'gru', hidden };
  return {
    kind: 'encoder-decoder',
    ...(attention === null ? {} : { attention }),
    encoder: { input: { kind: 'embedding', vocabulary: sourceAlphabet.length, width: 16 }, layers: [{ ...layer, bidirectional: true }] },
    decoder: { input: { kind: 'embedding', vocabulary: targetAlphabet.length, width: 16 }, layers: [layer], readout: { width: targetAlphabet.length } },
  };
}

/** Parameters a description implies, counted from its layout (no model is built). */
/** 1 where the written code is the filed code exactly, else 0. */
const exactMatches = (outputs: readonly string[][], codes: readonly { filed: string }[]) => outputs.map((o, k) => (o.join('') === codes[k].filed ? 1 : 0));

const parameterCount = (d: EncoderDecoderDescription) => parameterLayout(d).parameters.reduce((n, p) => n + p.shape.reduce((a, b) => a * b, 1), 0);

/** The hidden size without attention whose parameter count is closest to `target`. */
function matchedHidden(target: number): number {
  let best = 1;
  for (let h = 1; h <= 512; h++)
    if (Math.abs(parameterCount(description(h, null)) - target) < Math.abs(parameterCount(description(best, null)) - target)) best = h;
  return best;
}

export interface LengthBand {
  readonly from: number;
  readonly to: number;
  /** Exact-match rate of each model on held-out codes of this source length. */
  readonly withAttention: number;
  readonly without: number;
  /** Token accuracy (share of target positions written right) of each model there. */
  readonly tokensWithAttention: number;
  readonly tokensWithout: number;
  readonly count: number;
}

export async function sealCodes(): Promise<{ bands: LengthBand[]; parameters: { withAttention: number; without: number }; steps: number; map: string }> {
  const small = smallBudget();
  const random = new Random('seal codes');
  const pairs = (count: number) => Array.from({ length: count }, () => sealCode(random, 20 + random.integer(41)));
  // The small budget (the tests') is still enough for the comparison: 2,000 codes, 4 epochs, 250 steps.
  const trainCodes = pairs(small ? 2000 : 4000);
  const validationCodes = pairs(200);
  const heldOut = pairs(small ? 300 : 600);
  const hidden = small ? 48 : 64;
  const epochs = small ? 4 : Number(process.env.SEAL_EPOCHS ?? 12);
  const attentive = new EncoderDecoderModel(description(hidden, 'general'), { seed: 1 });
  const plain = new EncoderDecoderModel(description(matchedHidden(parameterCount(attentive.description)), null), { seed: 1 });
  let steps = 0;
  let map = '';
  const exact: Record<string, number[]> = {};
  const written: Record<string, string[][]> = {};
  for (const [name, model] of [
    ['with attention', attentive],
    ['without', plain],
  ] as const) {
    const started = Date.now();
    const trainer = new Trainer({
      model,
      data: pairBatches(trainCodes.map(toPair), { batchSize: 32, startToken: START, endToken: END, seed: 1 }),
      validation: pairBatches(validationCodes.map(toPair), { batchSize: 50, startToken: START, endToken: END }),
      optimizer: new AdamRule({ rate: 0.005 }),
      epochs,
      gradientNormLimit: 1,
      validateEvery: 50,
      patience: 100,
      seed: 1,
    });
    const summary = await trainer.run();
    steps = summary.steps;
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
    written[name] = heldOut.map((code) => {
      const { tokens } = runtime.decode(toPair(code).source as number[], { startToken: START, endToken: END, maxLength: 62 });
      return tokens.filter((t) => t !== END).map((t) => targetAlphabet[t]);
    });
    exact[name] = exactMatches(written[name], heldOut);
    if (model === attentive) {
      // What attention looked at while writing one long held-out code: a picture of the alignment it learned.
      const code = heldOut.find((c) => c.scanned.length >= 40) ?? heldOut[0];
      const decoded = runtime.decode(toPair(code).source as number[], { startToken: START, endToken: END, maxLength: 62 });
      const source = Array.from(code.scanned);
      const weights = new Float32Array(decoded.attention.length * source.length);
      decoded.attention.forEach((row, t) => weights.set(row, t * source.length));
      map = attentionMapSvg(
        source,
        decoded.tokens.map((t) => targetAlphabet[t]),
        weights,
        `attention while filing ${code.scanned}`,
      );
    }
    console.log(
      `${name}: ${parameterCount(model.description)} parameters, ${summary.steps} steps in ${((Date.now() - started) / 1000).toFixed(0)} s, validation token accuracy ${trainer.validate().metric.toFixed(3)}`,
    );
  }
  const bands: LengthBand[] = [
    [20, 33],
    [34, 46],
    [47, 60],
  ].map(([from, to]) => {
    const members = heldOut.map((code, k) => (code.scanned.length >= from && code.scanned.length <= to ? k : -1)).filter((k) => k >= 0);
    const rate = (name: string) => members.reduce((n, k) => n + exact[name][k], 0) / Math.max(1, members.length);
    const tokens = (name: string) =>
      tokenAccuracy(
        members.map((k) => written[name][k]),
        members.map((k) => Array.from(heldOut[k].filed)),
      );
    return {
      from,
      to,
      withAttention: rate('with attention'),
      without: rate('without'),
      tokensWithAttention: tokens('with attention'),
      tokensWithout: tokens('without'),
      count: members.length,
    };
  });
  const percent = (v: number) => `${(100 * v).toFixed(1)}%`.padStart(7);
  console.log('held-out codes by source length: exact match (token accuracy)');
  console.log('  length   codes   with attention      without');
  for (const b of bands)
    console.log(
      `  ${b.from}–${b.to}   ${String(b.count).padStart(5)}   ${percent(b.withAttention)} (${percent(b.tokensWithAttention)})   ${percent(b.without)} (${percent(b.tokensWithout)})`,
    );
  return { bands, parameters: { withAttention: parameterCount(attentive.description), without: parameterCount(plain.description) }, steps, map };
}

runIfMain(import.meta.url, async () => {
  const { map } = await sealCodes();
  writeFileSync('seal-codes-attention.svg', map);
  console.log('attention map of one held-out code: seal-codes-attention.svg');
});
