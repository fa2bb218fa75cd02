import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, Trainer, pairBatches } from '@weft/optim';
import { setDefaultBackend, Random } from '@weft/core';
const backend = setDefaultBackend((process.argv[3] ?? 'webassembly') as any);
const random = new Random(1);
const pairs = Array.from({ length: 200 }, () => { const n = 20 + random.integer(41); const s = Array.from({ length: n }, () => 2 + random.integer(18)); return { source: s, target: s.slice(0, n - 5) }; });
const attention = (process.argv[2] ?? 'general') === 'none' ? null : process.argv[2] ?? 'general';
const model = new EncoderDecoderModel({ kind: 'encoder-decoder', attention, encoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'lstm', hidden: 64, bidirectional: true }] }, decoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'lstm', hidden: 64 }], readout: { width: 20 } } } as any, { seed: 1 });
const trainer = new Trainer({ model, data: pairBatches(pairs, { batchSize: 32, startToken: 0, endToken: 1 }), optimizer: new AdamRule({ rate: 0.01 }), epochs: 1 });
for (let i = 0; i < 5; i++) { const t0 = performance.now(); trainer.step(); console.log(i, (performance.now() - t0).toFixed(0), 'ms', JSON.stringify(trainer.pool.counts()), JSON.stringify(backend.pool.counts())); }
