// Run by own-cells.test.ts as `node --expose-gc --max-semi-space-size=1 --import tsx own-cell-probe.mjs`: a model
// of a cell of your own (the minimal gated unit, a plan) streamed 100,000 steps after a warm-up, the garbage
// collections counted, then again while each step also makes one small array of four numbers (the control: it
// shows the count sees an allocation of that size).
import { collectionsDuring } from './collections.mjs';
import { setDefaultBackend } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { mguPlan } from '../../packages/cells/test/plans/mgu.ts';

const plans = { 'test.mgu': mguPlan };
// The model only writes the weight file: built on the JavaScript backend, so this process compiles no training
// module whose compilation could still be finishing while the runtime's steps are counted.
setDefaultBackend('javascript');
const model = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'test.mgu', hidden: 16 }], readout: { width: 1 } }, { seed: 3, plans });
const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)), { plans });
const streams = runtime.streams(2);
const input = new Float32Array(6);
let kept = null;
const run = (count, extra) => {
  for (let i = 0; i < count; i++) {
    input[0] = Math.sin(i);
    streams.step(input);
    if (extra) kept = Float64Array.of(i, i, i, i);
  }
};
const { collections, major, rounds, control } = await collectionsDuring(run, 100_000);
console.log(JSON.stringify({ collections, major, rounds, steps: 100_000, control, backend: runtime.backend.name, kept: kept?.[0] ?? null }));
