import { describe, expect, it } from 'vitest';
import { Random, Tape, defaultBackend, randomUniform, resetGradients } from '@weft/core';
import { GruCell, LstmCell, PlainCell, runSequence } from '@weft/cells';

describe('a repeated training window', () => {
  for (const make of [
    () => new LstmCell({ inputWidth: 4, hidden: 8, peepholes: true }),
    () => new GruCell({ inputWidth: 4, hidden: 8, resetAfterProduct: true }),
    () => new GruCell({ inputWidth: 4, hidden: 8 }),
    () => new PlainCell({ inputWidth: 4, hidden: 8 }),
  ]) {
    const cell = make();
    it(`creates no typed arrays after its first run (${cell.kind}, fused)`, () => {
      const pool = defaultBackend().createPool();
      const tape = new Tape({ pool });
      const inputs = randomUniform([6, 3, 4], new Random(1));
      const seed = new Float32Array(6 * 3 * 8).fill(0.01);
      const lengths = Int32Array.of(6, 2, 4);
      const parameters = cell.parameters().map((p) => p.tensor);
      const once = () => {
        const { outputs } = runSequence(tape, cell, inputs, { lengths });
        tape.reverseSweep(outputs, seed);
        tape.clear();
        resetGradients(parameters);
      };
      once();
      const tapeArrays = pool.counts().created;
      const kernelArrays = defaultBackend().pool.counts().created;
      for (let i = 0; i < 50; i++) once();
      expect(pool.counts().created).toBe(tapeArrays);
      expect(defaultBackend().pool.counts().created).toBe(kernelArrays);
      expect(pool.counts().bytesInUse).toBe(0);
    });
  }
});
