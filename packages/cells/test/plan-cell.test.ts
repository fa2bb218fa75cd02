import { describe, expect, it } from 'vitest';
import { Random, Tape, WeftError, checkGradients, sum, multiply, tensor } from '@weft/core';
import type { Tensor } from '@weft/core';
import { LstmCell, PlanCell, buildModel, builtInPlans, runSequence } from '@weft/cells';
import { cutForSequence } from '@weft/cells/internal';
import { mguPlan, mguReference } from './plans/mgu.js';

describe('a plan on the tape', () => {
  it("trains a cell of your own from its plan: parameters of the plan's shapes, a step that follows its equations", () => {
    const cell = new PlanCell({ plan: mguPlan, inputWidth: 3, hidden: 4, dtype: 'f64', random: 3, name: 'layers[0].forward' });
    expect(cell.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`)).toEqual([
      'input [3, 8]',
      'bias [8]',
      'recurrentGate [4, 4]',
      'recurrentCandidate [4, 4]',
    ]);
    const random = new Random('plan-cell');
    for (const p of cell.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] = random.between(-0.7, 0.7);
    const x = Array.from({ length: 2 }, () => Array.from({ length: 3 }, () => random.between(-1, 1)));
    const h = Array.from({ length: 2 }, () => Array.from({ length: 4 }, () => random.between(-0.5, 0.5)));
    const { output } = cell.step(new Tape({ recording: false }), tensor(x, undefined, 'f64'), [tensor(h, undefined, 'f64')]);
    const byName = Object.fromEntries(cell.parameters().map((p) => [p.name, p.tensor.data]));
    // The reference (plans/mgu.ts) in f64, straight from the paper's equations.
    const expected = x.flatMap((row, b) => mguReference(row, h[b], byName));
    for (let i = 0; i < 8; i++) expect(Math.abs(output.data[i] - expected[i])).toBeLessThan(1e-14);
  });

  it('gives gradients that central finite differences confirm (f64, over a ragged sequence)', () => {
    const cell = new PlanCell({ plan: mguPlan, inputWidth: 3, hidden: 5, dtype: 'f64', random: 11 });
    const random = new Random('plan-cell-gradients');
    const inputs = tensor(
      Float64Array.from({ length: 6 * 2 * 3 }, () => random.between(-1, 1)),
      [6, 2, 3],
      'f64',
    );
    const weights = tensor(
      Float64Array.from({ length: 6 * 2 * 5 }, () => random.between(-1, 1)),
      [6, 2, 5],
      'f64',
    );
    const report = checkGradients(
      (tape) => sum(tape, multiply(tape, runSequence(tape, cell, inputs, { lengths: [6, 4] }).outputs, weights)),
      cell.parameters().map((p) => p.tensor),
    );
    expect(report.tensors.map((t) => t.name)).toEqual(['input', 'bias', 'recurrentGate', 'recurrentCandidate']);
    expect(report.passed).toBe(true);
  });

  it("gives, for the example's cell at H = 32 and T = 20, the gradient a Richardson-extrapolated central difference gives, to 1e-7 relative", () => {
    // Independent of the library's check: D(h) = (f(x + h) − f(x − h)) / 2h at h and h/2, extrapolated to h → 0 as
    // (4·D(h/2) − D(h)) / 3 (Richardson), whose error is O(h⁴) (common practice), here about 1e-12.
    const cell = new PlanCell({ plan: mguPlan, inputWidth: 3, hidden: 32, dtype: 'f64', random: 7 });
    const random = new Random('richardson');
    const inputs = tensor(
      Float64Array.from({ length: 20 * 2 * 3 }, () => random.between(-1, 1)),
      [20, 2, 3],
      'f64',
    );
    const weights = tensor(
      Float64Array.from({ length: 20 * 2 * 32 }, () => random.between(-1, 1)),
      [20, 2, 32],
      'f64',
    );
    const loss = (tape: Tape) => sum(tape, multiply(tape, runSequence(tape, cell, inputs, { lengths: [20, 13] }).outputs, weights));
    const tape = new Tape();
    const value = loss(tape);
    tape.reverseSweep(value);
    const gradients = cell.parameters().map((p) => Float64Array.from(p.tensor.gradient!));
    const at = (data: Float64Array, k: number, shift: number): number => {
      const kept = data[k];
      data[k] = kept + shift;
      const f = loss(new Tape({ recording: false })).data[0];
      data[k] = kept;
      return f;
    };
    let worst = 0;
    cell.parameters().forEach((p, i) => {
      const data = p.tensor.data as Float64Array;
      for (let n = 0; n < 6; n++) {
        const k = random.integer(data.length);
        const difference = (h: number) => (at(data, k, h) - at(data, k, -h)) / (2 * h);
        const extrapolated = (4 * difference(5e-4) - difference(1e-3)) / 3;
        worst = Math.max(worst, Math.abs(extrapolated - gradients[i][k]) / Math.max(Math.abs(gradients[i][k]), 1e-3));
      }
    });
    console.log(`example cell, H = 32, T = 20: worst relative gap to the extrapolated difference ${worst.toExponential(2)} over 24 entries`);
    expect(worst).toBeLessThan(1e-7);
  });

  it('starts gate blocks as the built-in cells do: recurrent H×H blocks orthogonal, input blocks Glorot-uniform, vectors 0', () => {
    const cell = new PlanCell({ plan: mguPlan, inputWidth: 3, hidden: 4, random: 5 });
    const [input, bias, gate] = cell.parameters().map((p) => p.tensor.data);
    // Glorot & Bengio 2010, eq. 16, per H-wide block: |w| ≤ √(6 / (I + H)).
    expect(Math.max(...Array.from(input, Math.abs))).toBeLessThanOrEqual(Math.sqrt(6 / 7));
    expect(Array.from(bias)).toEqual(new Array(8).fill(0));
    // Orthogonal: RᵀR = I (Saxe et al. 2014).
    for (let i = 0; i < 4; i++)
      for (let j = 0; j < 4; j++) {
        let dot = 0;
        for (let k = 0; k < 4; k++) dot += gate[k * 4 + i] * gate[k * 4 + j];
        expect(Math.abs(dot - (i === j ? 1 : 0))).toBeLessThan(1e-6);
      }
  });

  it("runs the LSTM plan on the tape as the LSTM cell's composed step, which is that plan", () => {
    const lstm = new LstmCell({ inputWidth: 2, hidden: 3, random: 2, mode: 'composed', peepholes: true });
    const asPlan = new PlanCell({
      plan: { ...builtInPlans.lstm, kind: 'test.lstm' },
      layer: { cell: 'test.lstm', hidden: 3, peepholes: true },
      inputWidth: 2,
      hidden: 3,
      random: 2,
    });
    for (const [i, p] of asPlan.parameters().entries()) p.tensor.data.set(lstm.parameters()[i].tensor.data);
    const x = tensor([
      [0.3, -0.2],
      [0.9, 0.1],
    ]);
    const state = [
      tensor([
        [0.1, 0.2, -0.3],
        [0, 0.5, 0.2],
      ]),
      tensor([
        [0.4, -0.1, 0.3],
        [0.2, 0.2, -0.6],
      ]),
    ];
    const a = lstm.step(new Tape({ recording: false }), x, state).state;
    const b = asPlan.step(new Tape({ recording: false }), x, state).state;
    expect(Array.from(b[0].data)).toEqual(Array.from(a[0].data));
    expect(Array.from(b[1].data)).toEqual(Array.from(a[1].data));
  });

  it('computes the input-only part of a step once per sequence, with the outputs and gradients of stepping (f64, ragged)', () => {
    // LSTM: x·W alone reads neither h nor c; GRU: x·W + b and its three gate columns; the MGU example likewise.
    const lstm = new LstmCell({ inputWidth: 3, hidden: 4, dtype: 'f64', random: 5, mode: 'composed' });
    const lstmCut = cutForSequence(lstm.program);
    expect(lstmCut.once.map((k) => lstm.program.instructions[k].operation)).toEqual(['product']);
    expect(lstmCut.blocks).toEqual([lstm.program.instructions[lstmCut.once[0]].out]);
    const gru = new PlanCell({ plan: builtInPlans.gru, inputWidth: 3, hidden: 4, dtype: 'f64', random: 6 });
    expect(cutForSequence(gru.program).once.map((k) => gru.program.instructions[k].operation)).toEqual(['product', 'add', 'columns', 'columns', 'columns']);
    const random = new Random('once per sequence');
    for (const cell of [lstm, gru, new PlanCell({ plan: mguPlan, inputWidth: 3, hidden: 4, dtype: 'f64', random: 7 })]) {
      const inputs = tensor(
        Float64Array.from({ length: 5 * 3 * 3 }, () => random.between(-1, 1)),
        [5, 3, 3],
        'f64',
      );
      const weights = Float64Array.from({ length: 5 * 3 * 4 }, () => random.between(-1, 1));
      const lengths = [5, 2, 4];
      // Through the layer (which asks the cell to prepare the sequence), then by hand, one `step` per time step.
      const run = (prepared: boolean): { outputs: number[]; gradients: number[] } => {
        const tape = new Tape();
        const parameters = cell.parameters().map((p) => p.tensor);
        for (const p of parameters) p.gradient?.fill(0);
        let outputs: Tensor;
        if (prepared) outputs = runSequence(tape, cell, inputs, { lengths }).outputs;
        else {
          const saved = cell.prepareSequence;
          cell.prepareSequence = () => null;
          try {
            outputs = runSequence(tape, cell, inputs, { lengths }).outputs;
          } finally {
            cell.prepareSequence = saved;
          }
        }
        const loss = sum(tape, multiply(tape, outputs, tensor(weights, [5, 3, 4], 'f64')));
        tape.reverseSweep(loss);
        return { outputs: Array.from(outputs.data), gradients: parameters.flatMap((p) => Array.from(p.gradient ?? [])) };
      };
      const once = run(true);
      const stepped = run(false);
      expect(once.gradients.length).toBeGreaterThan(0);
      for (const [a, b] of [
        [once.outputs, stepped.outputs],
        [once.gradients, stepped.gradients],
      ]) {
        expect(a.length).toBe(b.length);
        for (let i = 0; i < a.length; i++) expect(Math.abs(a[i] - b[i])).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(b[i])));
      }
    }
  });

  it("builds a model of a plan's cells, and refuses a plan filed under another kind or a built-in word, naming it", () => {
    const model = buildModel(
      { input: { kind: 'values', width: 2 }, layers: [{ cell: 'test.mgu', hidden: 3, bidirectional: true }], readout: { width: 1 } },
      { plans: { 'test.mgu': mguPlan } },
    );
    expect(
      model
        .parameters()
        .map((p) => p.name)
        .slice(0, 5),
    ).toEqual([
      'layers[0].forward.input',
      'layers[0].forward.bias',
      'layers[0].forward.recurrentGate',
      'layers[0].forward.recurrentCandidate',
      'layers[0].backward.input',
    ]);
    const refused = (plans: Record<string, unknown>): string => {
      try {
        buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'test.mgu', hidden: 3 }] }, { plans: plans as never });
      } catch (error) {
        expect(error).toBeInstanceOf(WeftError);
        return (error as Error).message;
      }
      return 'no error';
    };
    expect(refused({ 'test.other': mguPlan })).toMatch(/buildModel\.plans\.test\.other\.kind/);
    expect(refused({ lstm: mguPlan })).toMatch(/buildModel\.plans\.lstm.*a namespaced kind of your own such as 'lab\.mgu'/);
    expect(refused({ 'test.mgu': () => mguPlan })).toMatch(/a cell maker\? plans are objects/);
  });
});
