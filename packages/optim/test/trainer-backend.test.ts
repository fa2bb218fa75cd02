/** The trainer computes on one backend and refuses a model whose parameters live in another's memory. */
import { describe, expect, it } from 'vitest';
import { backendNamed, defaultBackend, setDefaultBackend, webAssemblyUnavailable } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';

const available = webAssemblyUnavailable() === null;
describe.skipIf(!available)('a trainer on a backend', () => {
  it("refuses a model whose parameters live in another backend's memory", () => {
    const before = defaultBackend();
    try {
      setDefaultBackend('javascript');
      const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'plain', hidden: 2 }], readout: { width: 1 } }, { seed: 1 });
      const data = streamBatches({ kind: 'values', values: Array.from({ length: 40 }, (_, i) => Math.sin(i)), features: 1 }, { window: 4 });
      expect(() => new Trainer({ model, data, optimizer: new AdamRule({ rate: 0.1 }), epochs: 1, backend: backendNamed('webassembly') })).toThrowError(
        "Backend mismatch at trainer.model.parameters[0] (layers[0].forward.input): expected a tensor in webassembly memory (the trainer's backend), received a tensor in javascript memory",
      );
    } finally {
      setDefaultBackend(before);
    }
  });
});
