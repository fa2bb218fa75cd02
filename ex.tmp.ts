import { setDefaultBackend } from '@weft/core';
const backend: any = setDefaultBackend('webassembly');
const memory = backend.memory;
const original = memory.whenExhausted;
memory.whenExhausted = () => { original(); let total = 0, n = 0, largest = 0; for (const [b, offs] of memory.free) { total += b * offs.length; n += offs.length; largest = Math.max(largest, b); } console.log('exhausted: top', memory.top, 'free', total, 'blocks', n, 'largest', largest, 'backend pool live', backend.pool.counts().bytesInUse); };
const { sealCodes } = await import('./examples/seal-codes/main.js');
process.env.SEAL_EPOCHS = '1';
await sealCodes();
