// Run by translate.test.ts as `node --expose-gc --max-semi-space-size=1 translate-probe.mjs`: 100,000 readings
// through a translator and a runtime stream, for a values model (raw values in, forecasts in real units out:
// inputsFromNumbers(row, into), step(into, out), outputsInto) and for a text model (a character in, its id, a step); the
// garbage collections during the readings after a warm-up are counted, then again while each reading also makes
// one small object (the control: it shows the count sees an allocation of that size).
import { buildModel } from '@weft/cells';
import { createTranslator, modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { collectionsDuring } from '../../../tests/helpers/collections.mjs';

const values = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 8 }], readout: { width: 1 } }, { seed: 1 });
const valueMeta = { task: 'forecast', columns: ['heat', 'flow'], targetColumns: ['heat'], horizon: 1, normalisation: { mean: [20, 3], deviation: [4, 1.5] } };
const vocabulary = ['<unknown>', ' ', 'a', 'd', 'e', 'h', 'l', 'm', 'n', 'o', 's', 't', 'u', 'w'];
const text = buildModel(
  { input: { kind: 'embedding', vocabulary: vocabulary.length, width: 4 }, layers: [{ cell: 'lstm', hidden: 8 }], readout: { width: vocabulary.length } },
  { seed: 2 },
);
const textMeta = { task: 'next-token', tokens: 'characters', vocabulary };
const valueRuntime = await createRuntime(await writeWeightFile(values.description, modelTensors(values), { metadata: valueMeta }));
const textRuntime = await createRuntime(await writeWeightFile(text.description, modelTensors(text), { metadata: textMeta }));
const valueTranslator = createTranslator(valueMeta);
const textTranslator = createTranslator(textMeta);
const valueStream = valueRuntime.streams(1);
const textStream = textRuntime.streams(1);
const row = new Float64Array(2);
const input = new Float32Array(2);
const output = new Float32Array(1);
const named = new Float64Array(1);
const token = new Int32Array(1);
const logits = new Float32Array(vocabulary.length);
const story = 'the loom hums at dawn while the weavers sleep ';
let kept = null;
const run = (count, start, extra) => {
  for (let i = start; i < start + count; i++) {
    row[0] = 20 + Math.sin(i);
    row[1] = 3 + Math.cos(i);
    valueTranslator.inputsFromNumbers(row, input);
    valueStream.step(input, output);
    valueTranslator.outputsInto(output, named);
    token[0] = textTranslator.tokenId(story[i % story.length]);
    textStream.step(token, logits);
    if (extra) kept = { i, heat: named[0] };
  }
};
// Each counted pass continues the readings where the last one stopped (young-generation collections, in the steady
// state: tests/helpers/collections.mjs).
let next = 0;
const work = (count, extra) => {
  run(count, next, extra);
  next += count;
};
const { collections, major, rounds, control } = await collectionsDuring(work, 100_000);
console.log(JSON.stringify({ collections, major, rounds, readings: 100_000, control, last: kept?.heat ?? null }));
