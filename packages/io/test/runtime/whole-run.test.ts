import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '../../src/runtime/create.js';
import { WholeRun } from '../../src/runtime/whole-run.js';

const description = {
  input: { kind: 'embedding' as const, vocabulary: 7, width: 3 },
  layers: [
    { cell: 'gru', hidden: 4, bidirectional: true },
    { cell: 'lstm', hidden: 3, reverse: true },
    { cell: 'plain', hidden: 2 },
  ],
  readout: { width: 5 },
};

describe('a whole run into buffers made once', () => {
  it('gives the outputs and final states of Runtime.run, bit for bit, for bidirectional, reverse and forward layers, the source fed as given or reversed', async () => {
    const model = buildModel(description, { seed: 2 });
    const random = new Random('whole-run');
    for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
    for (const backend of ['javascript', 'webassembly'] as const) {
      const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)), { backend });
      let made = 0;
      const whole = new WholeRun(runtime, 9, (n) => {
        made++;
        return runtime.backend.floats(n);
      });
      const afterMaking = made;
      for (const steps of [9, 4, 1]) {
        const tokens = Array.from({ length: steps }, () => random.integer(7));
        for (const reverse of [false, true]) {
          const fed = reverse ? [...tokens].reverse() : tokens;
          const finals: Float32Array[] = [];
          const expected = runtime.run(fed, steps, 1, null, finals);
          whole.run(tokens, steps, reverse);
          expect(Array.from(whole.outputs.subarray(0, expected.length)), `${backend}, ${steps} steps`).toEqual(Array.from(expected));
          expect(whole.finals.map((f) => Array.from(f))).toEqual(finals.map((f) => Array.from(f)));
        }
      }
      expect(made).toBe(afterMaking);
    }
  });

  it('runs batches with ragged lengths into the same buffers run after run, as a fresh run gives them, and zero past each length', async () => {
    const model = buildModel(description, { seed: 3 });
    const random = new Random('whole-run-batches');
    for (const backend of ['javascript', 'webassembly'] as const) {
      const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)), { backend });
      const whole = new WholeRun(runtime, 6, (n) => runtime.backend.floats(n), 3);
      for (const [steps, lengths] of [
        [6, [6, 2, 0]],
        [5, [1, 5, 3]],
        [6, null],
        [2, [2, 1, 2]],
      ] as const) {
        const tokens = Array.from({ length: steps * 3 }, () => random.integer(7));
        const rowsLengths = lengths === null ? null : Int32Array.from(lengths);
        whole.run(tokens, steps, false, rowsLengths);
        // A fresh walk (Runtime.run makes its own buffers) of the same batch: a stale buffer or state would differ.
        const finals: Float32Array[] = [];
        const fresh = runtime.run(tokens, steps, 3, lengths === null ? null : [...lengths], finals);
        expect(Array.from(whole.outputs.subarray(0, fresh.length)), `${backend}, lengths ${lengths}`).toEqual(Array.from(fresh));
        expect(whole.finals.map((f) => Array.from(f))).toEqual(finals.map((f) => Array.from(f)));
        const width = runtime.outputWidth;
        for (let p = 0; p < steps * 3; p++) {
          const past = rowsLengths !== null && Math.floor(p / 3) >= rowsLengths[p % 3];
          const row = Array.from(whole.outputs.subarray(p * width, (p + 1) * width));
          if (past) expect(row.every((v) => v === 0)).toBe(true);
          else expect(row.some((v) => v !== 0)).toBe(true);
        }
      }
    }
  });
});
