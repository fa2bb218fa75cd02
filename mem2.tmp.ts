import { EncoderDecoderModel } from '@weft/cells';
import { Tape, setDefaultBackend, crossEntropyAtTargets, reshape } from '@weft/core';
const backend: any = setDefaultBackend('webassembly');
for (const attention of ['general', null]) {
  const model = new EncoderDecoderModel({ kind: 'encoder-decoder', attention, encoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'gru', hidden: 64, bidirectional: true }] }, decoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'gru', hidden: 64 }], readout: { width: 20 } } } as any, { seed: 1 });
  const pool = backend.createPool();
  const tape = new Tape({ backend, pool });
  const S = 60, T = 60, B = 32;
  const src = { tokens: new Int32Array(S * B).fill(3), steps: S, batch: B };
  const tgt = { tokens: new Int32Array(T * B).fill(4), steps: T, batch: B };
  const enc = model.encoder.run(tape, src, {});
  console.log(attention, 'after encoder', pool.counts().bytesInUse);
  const run = model.run(tape, src, null, tgt, null);
  console.log(attention, 'after full forward (incl. second encoder)', pool.counts().bytesInUse);
  const loss = crossEntropyAtTargets(tape, reshape(tape, run.outputs, [T * B, 20]), new Int32Array(T * B).fill(2));
  tape.reverseSweep(loss);
  console.log(attention, 'after backward', pool.counts().bytesInUse, 'peak', pool.counts().peakBytesInUse);
  tape.clear();
}
