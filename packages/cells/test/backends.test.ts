/**
 * The same model on the two backends: a model built with the same seed on the JavaScript backend and on the
 * WebAssembly SIMD backend gives the same forward outputs and the same gradient of every parameter and input, in
 * f32, within |a − b| ≤ 1e-5·max(1, |a|, |b|) (the agreement bound of the backend design), for every built-in
 * cell (both GRU forms, peepholes, tanh and ReLU), fused and composed, over a ragged batch, and for a 2-layer
 * bidirectional ragged stack with an embedding, dropout and a readout under masked cross-entropy.
 */
import { afterAll, describe, expect, it } from 'vitest';
import {
  Random,
  Tape,
  crossEntropyAtTargets,
  defaultBackend,
  javascriptBackend,
  randomUniform,
  reshape,
  setDefaultBackend,
  sum,
  multiply,
  webAssemblyBackend,
  webAssemblyUnavailable,
} from '@weft/core';
import type { Backend, Tensor } from '@weft/core';
import { GruCell, LstmCell, PlainCell, buildModel, runSequence } from '@weft/cells';
import type { RecurrentCell } from '@weft/cells';

const available = webAssemblyUnavailable() === null;
const original = defaultBackend();
afterAll(() => {
  setDefaultBackend(original);
});

function worst(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let error = 0;
  for (let i = 0; i < a.length; i++) {
    const e = Math.abs(a[i] - b[i]) / Math.max(1, Math.abs(a[i]), Math.abs(b[i]));
    if (!(e <= error)) error = e;
  }
  return error;
}

interface Run {
  readonly outputs: Float32Array;
  readonly gradients: Float32Array[];
}

function cellRun(backend: Backend, make: () => RecurrentCell, mode: 'fused' | 'composed'): Run {
  setDefaultBackend(backend);
  const cell = make();
  (cell as unknown as { mode: string }).mode = mode;
  const tape = new Tape();
  const random = new Random(3);
  const inputs = randomUniform([5, 3, 4], random, -1, 1);
  inputs.tracked = true;
  const lengths = Int32Array.of(5, 3, 1);
  const { outputs } = runSequence(tape, cell, inputs, { lengths });
  const weights = randomUniform(outputs.shape, random, -1, 1);
  tape.reverseSweep(sum(tape, multiply(tape, outputs, weights)));
  const gradients = [...cell.parameters().map((p) => Float32Array.from(p.tensor.gradient!)), Float32Array.from(inputs.gradient!)];
  const result = { outputs: Float32Array.from(outputs.data), gradients };
  tape.clear();
  return result;
}

const cells: [string, () => RecurrentCell][] = [
  ['LSTM', () => new LstmCell({ inputWidth: 4, hidden: 6, random: 2 })],
  ['LSTM with peepholes', () => new LstmCell({ inputWidth: 4, hidden: 6, peepholes: true, random: 2 })],
  ['GRU, reset before the product', () => new GruCell({ inputWidth: 4, hidden: 6, random: 2 })],
  ['GRU, reset after the product', () => new GruCell({ inputWidth: 4, hidden: 6, resetAfterProduct: true, random: 2 })],
  ['plain tanh', () => new PlainCell({ inputWidth: 4, hidden: 6, random: 2 })],
  ['plain ReLU', () => new PlainCell({ inputWidth: 4, hidden: 6, activation: 'relu', random: 2 })],
];

describe.skipIf(!available)('one model on the JavaScript and the WebAssembly backend', () => {
  for (const [name, make] of cells) {
    for (const mode of ['fused', 'composed'] as const) {
      it(`agrees on outputs and every gradient: ${name}, ${mode}, ragged lengths 5, 3, 1`, () => {
        const js = cellRun(javascriptBackend, make, mode);
        const wasm = cellRun(webAssemblyBackend(), make, mode);
        expect(worst(wasm.outputs, js.outputs)).toBeLessThanOrEqual(1e-5);
        js.gradients.forEach((g, i) => expect(worst(wasm.gradients[i], g), `gradient ${i}`).toBeLessThanOrEqual(1e-5));
      });
    }
  }

  it('agrees on a 2-layer bidirectional ragged stack with embedding, dropout, readout and masked cross-entropy', () => {
    const description = {
      input: { kind: 'embedding', vocabulary: 7, width: 3 },
      layers: [
        { cell: 'lstm', hidden: 5, bidirectional: true, peepholes: true },
        { cell: 'gru', hidden: 4, bidirectional: true, resetAfterProduct: true },
      ],
      dropout: 0.2,
      readout: { width: 5 },
    };
    const steps = 6;
    const batch = 3;
    const lengths = Int32Array.of(6, 2, 4);
    const random = new Random('stack');
    const tokens = Int32Array.from({ length: steps * batch }, () => random.integer(7));
    const targets = Int32Array.from({ length: steps * batch }, () => random.integer(5));
    const mask = Float32Array.from({ length: steps * batch }, (_, i) => (Math.floor(i / batch) < lengths[i % batch] ? 1 : 0));
    const run = (backend: Backend): { loss: number; outputs: Float32Array; gradients: Float32Array[]; names: string[] } => {
      setDefaultBackend(backend);
      const model = buildModel(description, { seed: 4 });
      const tape = new Tape();
      const { outputs } = model.run(tape, { tokens, steps, batch }, { lengths, training: true, random: new Random('dropout') });
      const loss: Tensor = crossEntropyAtTargets(tape, reshape(tape, outputs, [steps * batch, 5]), targets, { weights: mask });
      tape.reverseSweep(loss);
      const result = {
        loss: loss.data[0],
        outputs: Float32Array.from(outputs.data),
        gradients: model.parameters().map((p) => Float32Array.from(p.tensor.gradient!)),
        names: model.parameters().map((p) => p.name),
      };
      tape.clear();
      return result;
    };
    const js = run(javascriptBackend);
    const wasm = run(webAssemblyBackend());
    expect(wasm.names).toEqual(js.names);
    expect(worst([wasm.loss], [js.loss])).toBeLessThanOrEqual(1e-5);
    expect(worst(wasm.outputs, js.outputs)).toBeLessThanOrEqual(1e-5);
    js.gradients.forEach((g, i) => expect(worst(wasm.gradients[i], g), js.names[i]).toBeLessThanOrEqual(1e-5));
  });
});
