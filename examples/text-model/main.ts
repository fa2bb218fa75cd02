/**
 * A character-level text model on a short story of our own (loom-village.txt), with sampling. The last tenth of
 * the text is held out; the model's perplexity there is compared with the unigram baseline (each character's
 * frequency in the training text, ignoring what came before).
 *
 * Run: npx tsx examples/text-model/main.ts
 */
import { readFileSync } from 'node:fs';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime, generateTokens } from '@weft/io/runtime';
import { runIfMain, smallBudget } from '../shared.js';

export async function textModel(): Promise<{ perplexity: number; unigram: number; sample: string }> {
  const text = readFileSync(new URL('./loom-village.txt', import.meta.url), 'utf8').replace(/\s+/g, ' ');
  const symbols = [...new Set(text)].sort();
  const ids = Int32Array.from([...text].map((c) => symbols.indexOf(c)));
  const split = Math.floor(ids.length * 0.9);
  const model = buildModel(
    {
      input: { kind: 'embedding', vocabulary: symbols.length, width: 16 },
      layers: [{ cell: 'lstm', hidden: smallBudget() ? 48 : 64 }],
      readout: { width: symbols.length },
    },
    { seed: 1 },
  );
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'tokens', tokens: ids.slice(0, split), vocabulary: symbols.length }, { streams: 8, window: 48 }),
    validation: streamBatches({ kind: 'tokens', tokens: ids.slice(split), vocabulary: symbols.length }, { window: 48 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: smallBudget() ? 15 : 40,
    gradientNormLimit: 1,
    // The story is short: stop when the held-out text stops improving and keep the best weights.
    validateEvery: 10,
    patience: 4,
  });
  await trainer.run();
  const { perplexity } = trainer.validate();
  // Unigram baseline: −mean log of each held-out character's training frequency (add-one smoothed).
  const counts = new Float64Array(symbols.length).fill(1);
  for (const id of ids.slice(0, split)) counts[id]++;
  const total = counts.reduce((s, c) => s + c, 0);
  const held = ids.slice(split + 1);
  const unigram = Math.exp(-held.reduce((s, id) => s + Math.log(counts[id] / total), 0) / held.length);
  // Sample from the saved weight file through the runtime.
  const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'next-token', vocabulary: symbols } }));
  const prefix = [...'The weavers '].map((c) => symbols.indexOf(c));
  const generated = generateTokens(runtime, { prefix, length: 160, random: new Random(7), temperature: 0.6 });
  const sample = [...prefix, ...generated].map((id) => symbols[id]).join('');
  console.log(`validation perplexity ${perplexity.toFixed(2)} against a unigram baseline of ${unigram.toFixed(2)}`);
  console.log(`sample: ${sample}`);
  return { perplexity, unigram, sample };
}

runIfMain(import.meta.url, textModel);
