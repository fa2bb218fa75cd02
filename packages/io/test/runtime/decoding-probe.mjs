// Run by decoding.test.ts as `node --expose-gc --max-semi-space-size=1 decoding-probe.mjs [bidirectional]`: an
// encoder-decoder with attention and an encoder reading its source reversed, forward-only (streamed) or with a
// bidirectional first layer (run whole); decoding.start(source) and two steps, 20,000
// times after a warm-up, the garbage collections counted, then again while each start also makes one small array of
// four numbers (the control: it shows the count sees an allocation of that size).
import { collectionsDuring } from '../../../../tests/helpers/collections.mjs';
import { EncoderDecoderModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

const bidirectional = process.argv[2] === 'bidirectional';
const layers = [
  { cell: 'gru', hidden: 8 },
  { cell: 'lstm', hidden: 8 },
];
// A bidirectional first layer is 16 wide; the decoder's matching layer is 8 wide per direction's state.
const encoderLayers = bidirectional ? [{ cell: 'gru', hidden: 8, bidirectional: true }, layers[1]] : layers;
const model = new EncoderDecoderModel(
  {
    kind: 'encoder-decoder',
    attention: 'general',
    reverseSource: true,
    encoder: { input: { kind: 'embedding', vocabulary: 9, width: 4 }, layers: encoderLayers },
    decoder: { input: { kind: 'embedding', vocabulary: 6, width: 4 }, layers, readout: { width: 6 } },
  },
  { seed: 4 },
);
const runtime = await createEncoderDecoderRuntime(await writeWeightFile(model.description, modelTensors(model)));
const decoding = runtime.decoding({ rows: 2, maxSourceLength: 12 });
const source = Int32Array.of(2, 3, 4, 5, 6, 7, 8, 2);
const tokens = Int32Array.of(0, 3);
let kept = null;
const run = (count, extra) => {
  for (let i = 0; i < count; i++) {
    source[0] = 2 + (i % 7);
    decoding.start(source);
    decoding.step(tokens);
    decoding.step(tokens);
    if (extra) kept = Float64Array.of(i, i, i, i);
  }
};
const { collections, control } = await collectionsDuring(run, 20_000);
console.log(JSON.stringify({ collections, starts: 20_000, control, kept: kept?.[0] ?? null }));
