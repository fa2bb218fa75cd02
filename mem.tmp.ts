import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, Trainer, pairBatches } from '@weft/optim';
import { setDefaultBackend, Random } from '@weft/core';
const backend: any = setDefaultBackend('webassembly');
const random = new Random(1);
const mk = (n0: number) => Array.from({ length: n0 }, () => { const n = 20 + random.integer(41); const s = Array.from({ length: n }, () => 2 + random.integer(18)); return { source: s, target: s.slice(0, n - 5) }; });
const model = new EncoderDecoderModel({ kind: 'encoder-decoder', attention: 'general', encoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'gru', hidden: 64, bidirectional: true }] }, decoder: { input: { kind: 'embedding', vocabulary: 20, width: 16 }, layers: [{ cell: 'gru', hidden: 64 }], readout: { width: 20 } } } as any, { seed: 1 });
const memory = backend.memory;
const original = memory.whenExhausted;
memory.whenExhausted = () => { original(); let total = 0, largest = 0, n = 0; for (const [b, offs] of memory.free) { total += b * offs.length; n += offs.length; largest = Math.max(largest, b); } const live = [backend.pool, trainer.pool].reduce((x: number, p: any) => x + p.counts().bytesInUse, 0); console.log('exhausted: top', memory.top, 'free', total, 'blocks', n, 'largest', largest, 'live (pools)', live); };
const trainer = new Trainer({ model, data: pairBatches(mk(4000), { batchSize: 32, startToken: 0, endToken: 1 }), validation: pairBatches(mk(200), { batchSize: 100, startToken: 0, endToken: 1 }), optimizer: new AdamRule({ rate: 0.01 }), epochs: 1, validateEvery: 50 });
for (let i = 0; i < 125; i++) { trainer.step(); if (i % 10 === 0) { if (i % 50 === 0) trainer.validate(); console.log(i, 'used', backend.memory.usedBytes, 'trainer pool in use', trainer.pool.counts().bytesInUse, 'backend pool in use', backend.pool.counts().bytesInUse); } }
