// Run by heap.test.ts as `node --expose-gc heap-probe.mjs`: steps a runtime 10,000 times after a warm-up long
// enough for the engine to finish optimising the JavaScript and WebAssembly it runs (20,000 steps), and
// prints the heap in use before and after, each read right after a full collection.
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';

const model = buildModel(
  {
    input: { kind: 'values', width: 4 },
    layers: [
      { cell: 'lstm', hidden: 32, peepholes: true },
      { cell: 'gru', hidden: 16 },
    ],
    readout: { width: 3 },
  },
  { seed: 1 },
);
const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)));
const streams = runtime.streams(2);
const input = new Float32Array(8);
for (let i = 0; i < 20000; i++) {
  input[0] = Math.sin(i);
  streams.step(input);
}
globalThis.gc();
globalThis.gc();
const before = process.memoryUsage().heapUsed;
for (let i = 0; i < 10000; i++) {
  input[0] = Math.sin(i);
  streams.step(input);
}
globalThis.gc();
globalThis.gc();
const after = process.memoryUsage().heapUsed;
console.log(JSON.stringify({ before, after, backend: runtime.backend.name }));
