import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, reshape, crossEntropyAtTargets, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';

describe('models built from a description', () => {
  const description = {
    input: { kind: 'embedding', vocabulary: 7, width: 3 },
    layers: [
      { cell: 'lstm', hidden: 3, bidirectional: true, peepholes: true },
      { cell: 'gru', hidden: 2, bidirectional: true, resetAfterProduct: true },
    ],
    dropout: 0.2,
    readout: { width: 5 },
  };

  it('name every parameter stably, in a fixed order', () => {
    const model = buildModel(description, { seed: 1 });
    expect(model.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`)).toEqual([
      'embedding.table [7, 3]',
      'layers[0].forward.input [3, 12]',
      'layers[0].forward.recurrent [3, 12]',
      'layers[0].forward.bias [12]',
      'layers[0].forward.peephole [9]',
      'layers[0].backward.input [3, 12]',
      'layers[0].backward.recurrent [3, 12]',
      'layers[0].backward.bias [12]',
      'layers[0].backward.peephole [9]',
      'layers[1].forward.input [6, 6]',
      'layers[1].forward.bias [6]',
      'layers[1].forward.recurrent [2, 4]',
      'layers[1].forward.recurrentCandidate [2, 2]',
      'layers[1].forward.recurrentCandidateBias [2]',
      'layers[1].backward.input [6, 6]',
      'layers[1].backward.bias [6]',
      'layers[1].backward.recurrent [2, 4]',
      'layers[1].backward.recurrentCandidate [2, 2]',
      'layers[1].backward.recurrentCandidateBias [2]',
      'readout.weights [4, 5]',
      'readout.bias [5]',
    ]);
    expect(model.stateSlots().map((s) => s.path)).toEqual([
      'layers[0].forward.h',
      'layers[0].forward.c',
      'layers[0].backward.h',
      'layers[0].backward.c',
      'layers[1].forward.h',
      'layers[1].backward.h',
    ]);
  });

  it('builds the same parameters from the same seed, and a description survives JSON', () => {
    const a = buildModel(JSON.parse(JSON.stringify(description)), { seed: 'x' });
    const b = buildModel(description, { seed: 'x' });
    const c = buildModel(description, { seed: 'y' });
    a.parameters().forEach((p, i) => expect(Array.from(p.tensor.data)).toEqual(Array.from(b.parameters()[i].tensor.data)));
    expect(Array.from(a.parameters()[1].tensor.data)).not.toEqual(Array.from(c.parameters()[1].tensor.data));
    expect(JSON.parse(JSON.stringify(a.description))).toEqual(description);
  });

  it('gradient-checks a 2-layer bidirectional stack with ragged lengths, embedding, readout and masked cross-entropy over T = 6 (f64, < 1e-6)', () => {
    const model = buildModel(description, { seed: 4, dtype: 'f64' });
    const random = new Random('stack');
    for (const p of model.parameters()) {
      if (p.name.endsWith('bias') || p.name.endsWith('peephole') || p.name.endsWith('Bias')) {
        for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] = random.between(-0.4, 0.4);
      }
    }
    const steps = 6;
    const batch = 3;
    const lengths = Int32Array.of(6, 2, 4);
    const tokens = Int32Array.from({ length: steps * batch }, () => random.integer(7));
    const targets = Int32Array.from({ length: steps * batch }, () => random.integer(5));
    // The mask is 1 at real positions and 0 at padding: position (t, b) is real when t < lengths[b].
    const mask = Float64Array.from({ length: steps * batch }, (_, i) => (Math.floor(i / batch) < lengths[i % batch] ? 1 : 0));
    const loss = (tape: Tape) => {
      // Dropout with a fresh generator of one seed per evaluation: the same masks every time.
      const { outputs } = model.run(tape, { tokens, steps, batch }, { lengths, training: true, random: new Random('dropout') });
      return crossEntropyAtTargets(tape, reshape(tape, outputs, [steps * batch, 5]), targets, { weights: mask });
    };
    const tensors = model.parameters().map((p) => {
      p.tensor.name = p.name;
      return p.tensor;
    });
    // The mean loss is about 1.6 while many entries of its gradient are near 1e-5; at h = 1e-5 the
    // finite-difference noise (≈ ε·|f|/h ≈ 3e-11) alone is a relative 4e-6 of those. h = 1e-4 cuts the noise
    // tenfold while the O(h²) truncation stays near 1e-8 relative.
    const report = checkGradients(loss, tensors, { directions: 3, step: 1e-4 });
    if (!report.passed) throw new Error(report.text());
    for (const check of report.tensors) expect(check.worstRelativeError).toBeLessThan(1e-6);
    // Padding carries no weight: changing a token at a padded position changes nothing.
    const value = () => loss(new Tape({ recording: false })).data[0];
    const before = value();
    tokens[5 * batch + 1] = (tokens[5 * batch + 1] + 1) % 7; // row 1 has length 2, step 5 is padding
    expect(value()).toBe(before);
  });

  it('runs a values input without readout and refuses the wrong kind of input', () => {
    const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'plain', hidden: 3 }] });
    const tape = new Tape();
    const inputs = model.run(tape, reshapeValues([0.5, -1, 0.25, 2], 2, 1, 2)).outputs;
    expect(inputs.shape).toEqual([2, 1, 3]);
    expect(() => model.run(tape, { tokens: Int32Array.of(1), steps: 1, batch: 1 })).toThrowError(
      'Invalid argument at model.input: expected numbers [steps, batch, 2] for a values input, received token ids',
    );
  });
});

function reshapeValues(values: number[], steps: number, batch: number, width: number) {
  return tensor(values, [steps, batch, width]);
}
