// The README's look at encoder-decoders and threads, kept runnable: npx tsx examples/pairs-look.ts
import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, Trainer, pairBatches } from '@weft/optim';
import { startTrainingThreads } from '@weft/optim/node'; // Node; Web Workers: webWorkerThread
import { modelTensors, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

// Sources and targets as token ids (here: write 2–7 reversed); the decoder starts from 0 and ends a target with 1.
const pairs = Array.from({ length: 256 }, (_, i) => [2 + (i % 6), 2 + ((i >> 2) % 6), 2 + ((i >> 4) % 6)]).map((source) => ({
  source,
  target: [...source].reverse(),
}));
const model = new EncoderDecoderModel({
  kind: 'encoder-decoder',
  attention: 'general', // or 'dot', 'additive'; absent for none
  encoder: { input: { kind: 'embedding', vocabulary: 8, width: 16 }, layers: [{ cell: 'gru', hidden: 32, bidirectional: true }] },
  decoder: { input: { kind: 'embedding', vocabulary: 8, width: 16 }, layers: [{ cell: 'gru', hidden: 32 }], readout: { width: 8 } },
});
const threads = await startTrainingThreads({ count: 2, model }); // the same weights as without, bit for bit
const trainer = new Trainer({
  model,
  data: pairBatches(pairs, { batchSize: 32, startToken: 0, endToken: 1 }),
  optimizer: new AdamRule({ rate: 0.01 }),
  epochs: 40,
  workers: threads,
});
await trainer.run();
await threads.close();
const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
const { tokens, attention } = runtime.decode([4, 5, 6], { startToken: 0, endToken: 1, maxLength: 8 });
const best = runtime.beamSearch([4, 5, 6], { width: 4, startToken: 0, endToken: 1, maxLength: 8 })[0];
console.log(
  `greedy ${tokens.join(' ')}, beam ${best.tokens.join(' ')}; attention of the first output token: ${Array.from(attention[0], (a) => a.toFixed(2)).join(' ')}`,
);
