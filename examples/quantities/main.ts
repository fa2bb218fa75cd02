/**
 * An encoder-decoder with beam search on an invented task: normalising free-form quantity phrases to a canonical
 * form ("two and a half kilos" → "2.5 kg", "three hundred millilitres" → "300 ml"). The encoder reads the phrase
 * word by word; the decoder writes the answer character by character. Shown: exact-match accuracy on held-out
 * phrases with beam width 1 (greedy) and 4, for a model fed its source in order and one fed it reversed.
 *
 * Run: npx tsx examples/quantities/main.ts
 */
import { Random, Tape, reshape, resetGradients, crossEntropyAtTargets } from '@weft/core';
import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, limitGradientNorm } from '@weft/optim';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import { runIfMain, smallBudget } from '../shared.js';

const numbers = ['one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine', 'ten', 'eleven', 'twelve'];
const units: [string[], string][] = [
  [['grams', 'gram', 'g'], 'g'],
  [['kilos', 'kilograms', 'kg'], 'kg'],
  [['litres', 'liters', 'l'], 'l'],
  [['millilitres', 'ml'], 'ml'],
];

/** Every phrase the invented grammar makes, with its canonical form. */
export function phrases(): [string[], string][] {
  const out: [string[], string][] = [];
  for (const [names, symbol] of units) {
    for (const name of names) {
      numbers.forEach((word, i) => {
        out.push([[word, name], `${i + 1} ${symbol}`]);
        out.push([[word, 'and', 'a', 'half', name], `${i + 1}.5 ${symbol}`]);
        if (i < 9) out.push([[word, 'hundred', name], `${(i + 1) * 100} ${symbol}`]);
      });
      out.push([['half', 'a', name], `0.5 ${symbol}`]);
    }
  }
  return out;
}

const START = 0;
const END = 1;

export async function quantities(): Promise<Record<string, number>> {
  const all = phrases();
  new Random('split').shuffle(all);
  const testCount = Math.floor(all.length * 0.2);
  const test = all.slice(0, testCount);
  const training = all.slice(testCount);
  // Sources are read character by character (the phrase as typed), which makes them long: 6 to 34 steps.
  const spelled = (w: string[]) => [...w.join(' ')];
  const words = ['<start>', '<end>', ...new Set(all.flatMap(([w]) => spelled(w)))];
  const characters = ['<start>', '<end>', ...new Set(all.flatMap(([, c]) => [...c]))].sort((a, b) =>
    a.length > 1 || b.length > 1 ? b.length - a.length : a < b ? -1 : 1,
  );
  const wordId = (w: string) => words.indexOf(w);
  const charId = (c: string) => characters.indexOf(c);
  const results: Record<string, number> = {};
  for (const reverseSource of [false, true]) {
    const layer = { cell: 'gru', hidden: 64 };
    const model = new EncoderDecoderModel(
      {
        kind: 'encoder-decoder',
        reverseSource,
        encoder: { input: { kind: 'embedding', vocabulary: words.length, width: 16 }, layers: [layer] },
        decoder: { input: { kind: 'embedding', vocabulary: characters.length, width: 16 }, layers: [layer], readout: { width: characters.length } },
      },
      { seed: 2 },
    );
    const parameters = model.parameters().map((p) => p.tensor);
    const optimizer = new AdamRule({ rate: 0.01 });
    const tape = new Tape();
    const random = new Random('batches');
    const checkpoints = smallBudget() ? [150] : [150, 600];
    for (let step = 1; step <= checkpoints[checkpoints.length - 1]; step++) {
      const batch = Array.from({ length: 16 }, () => training[random.integer(training.length)]);
      const sourceSteps = Math.max(...batch.map(([w]) => spelled(w).length));
      const targetSteps = Math.max(...batch.map(([, c]) => c.length + 1));
      const source = new Int32Array(sourceSteps * 16);
      const targetIn = new Int32Array(targetSteps * 16);
      const targetOut = new Int32Array(targetSteps * 16);
      const mask = new Float64Array(targetSteps * 16);
      batch.forEach(([w, c], b) => {
        spelled(w).forEach((character, t) => (source[t * 16 + b] = wordId(character)));
        const chars = [...c].map(charId);
        [START, ...chars].forEach((id, t) => (targetIn[t * 16 + b] = id));
        [...chars, END].forEach((id, t) => {
          targetOut[t * 16 + b] = id;
          mask[t * 16 + b] = 1;
        });
      });
      tape.clear();
      resetGradients(parameters);
      const { outputs } = model.run(
        tape,
        { tokens: source, steps: sourceSteps, batch: 16 },
        batch.map(([w]) => spelled(w).length),
        { tokens: targetIn, steps: targetSteps, batch: 16 },
        batch.map(([, c]) => c.length + 1),
      );
      const loss = crossEntropyAtTargets(tape, reshape(tape, outputs, [targetSteps * 16, characters.length]), targetOut, { weights: mask });
      tape.reverseSweep(loss);
      limitGradientNorm(parameters, 1);
      optimizer.update(parameters);
      if (!checkpoints.includes(step)) continue;
      tape.clear();
      const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
      for (const width of [1, 4]) {
        let correct = 0;
        for (const [w, c] of test) {
          const [best] = runtime.beamSearch(spelled(w).map(wordId), { width, startToken: START, endToken: END, maxLength: 12 });
          const text = best.tokens
            .filter((id) => id !== END)
            .map((id) => characters[id])
            .join('');
          if (text === c) correct++;
        }
        const key = `${reverseSource ? 'reversed' : 'in order'}, ${step} steps, beam ${width}`;
        results[key] = correct / test.length;
        console.log(`source ${key}: ${(100 * results[key]).toFixed(1)}% of ${test.length} held-out phrases exactly right`);
      }
    }
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
    if (reverseSource) {
      const example = ['seven', 'and', 'a', 'half', 'litres'];
      const [best] = runtime.beamSearch(spelled(example).map(wordId), { width: 4, startToken: START, endToken: END, maxLength: 12 });
      console.log(
        `"${example.join(' ')}" → "${best.tokens
          .filter((id) => id !== END)
          .map((id) => characters[id])
          .join('')}"`,
      );
    }
  }
  return results;
}

runIfMain(import.meta.url, quantities);
