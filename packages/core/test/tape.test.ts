import { describe, expect, it } from 'vitest';
import { f64Input } from '../../../tests/helpers/tensors.js';
import {
  Random,
  defaultBackend,
  Tape,
  WeftError,
  add,
  checkGradients,
  matmul,
  multiply,
  randomUniform,
  sigmoid,
  sum,
  tanh,
  tensor,
  trainable,
  resetGradients,
  detach,
  dropout,
} from '@weft/core';

describe('the tape', () => {
  it('records one node per operation and sweeps from a scalar with seed 1', () => {
    // f(x) = Σ tanh(x ⊙ w): ∂f/∂x_i = w_i (1 − tanh²(x_i w_i)) (calculus, common practice).
    const x = trainable(tensor([0.5, -1, 2], [3], 'f64'), 'x');
    const w = tensor([2, 0.25, -1], [3], 'f64');
    const tape = new Tape();
    const f = sum(tape, tanh(tape, multiply(tape, x, w)));
    expect(tape.kinds()).toEqual(['multiply', 'tanh', 'sum']);
    tape.reverseSweep(f);
    for (let i = 0; i < 3; i++) {
      const expected = w.data[i] * (1 - Math.tanh(x.data[i] * w.data[i]) ** 2);
      expect(x.gradient![i]).toBeCloseTo(expected, 15);
    }
  });

  it('gives the vector–Jacobian product from a given output gradient', () => {
    // y = A·x for x [1,2]·A; with seed v, ∂(v·y)/∂x = v·Aᵀ (linear algebra, common practice).
    const x = trainable(tensor([[1, 2]], undefined, 'f64'));
    const a = tensor(
      [
        [1, 2, 3],
        [4, 5, 6],
      ],
      undefined,
      'f64',
    );
    const tape = new Tape();
    const y = matmul(tape, x, a);
    tape.reverseSweep(y, Float64Array.of(1, -1, 2));
    expect(Array.from(x.gradient!)).toEqual([1 - 2 + 6, 4 - 5 + 12]);
  });

  it('accumulates parameter gradients across sweeps until reset', () => {
    const x = trainable(tensor([3], [1], 'f64'));
    const tape = new Tape();
    for (let round = 0; round < 3; round++) {
      tape.reverseSweep(sum(tape, multiply(tape, x, x)));
      tape.clear();
    }
    expect(x.gradient![0]).toBe(3 * 6);
    resetGradients([x]);
    expect(x.gradient![0]).toBe(0);
  });

  it('refuses to sweep twice or to sweep from a non-scalar without a gradient', () => {
    const x = trainable(tensor([1, 2], [2], 'f64'));
    const tape = new Tape();
    const y = tanh(tape, x);
    expect(() => tape.reverseSweep(y)).toThrowError(
      'Shape mismatch at Tape.reverseSweep.output: expected a scalar (one element) when no output gradient is given, received [2]',
    );
    const s = sum(tape, y);
    tape.reverseSweep(s);
    expect(() => tape.reverseSweep(s)).toThrowError(WeftError);
    expect(() => tanh(tape, x)).toThrowError(/Tape misuse at tanh/);
  });

  it('refuses to sweep from a tensor that no trainable tensor leads to', () => {
    const tape = new Tape();
    const y = sum(tape, tensor([1, 2], [2], 'f64'));
    expect(() => tape.reverseSweep(y)).toThrowError(/Tape misuse at Tape.reverseSweep.output/);
  });

  it("gives each node its kind's own record, reused when the same graph is recorded again", () => {
    const x = trainable(tensor([1, 2], [2], 'f64'), 'x');
    const tape = new Tape();
    const scaledKind = {
      name: 'scaled',
      saves: () => ({ input: x, factor: 0 }),
      backward(node: { saved: { input: typeof x; factor: number }; output: typeof x }, t: Tape) {
        const g = node.output.gradient!;
        const gx = t.gradientOf(node.saved.input);
        for (let i = 0; i < g.length; i++) gx[i] += node.saved.factor * g[i];
      },
    };
    const records: object[] = [];
    for (let round = 0; round < 2; round++) {
      const out = tape.output([2], 'f64', true);
      out.data.set([3 * x.data[0], 3 * x.data[1]]);
      const saved = tape.record(scaledKind, out);
      expect(saved).not.toBeNull();
      saved!.input = x;
      saved!.factor = 3;
      records.push(saved!);
      tape.reverseSweep(sum(tape, out));
      tape.clear();
    }
    expect(records[1]).toBe(records[0]);
    // d(Σ 3x)/dx = 3 per sweep, two sweeps.
    expect(Array.from(x.gradient!)).toEqual([6, 6]);
  });

  it('refuses an operation kind without saves(), saying what it needs', () => {
    const x = trainable(tensor([1], [1], 'f64'), 'x');
    const tape = new Tape();
    const out = tape.output([1], 'f64', true);
    const oldStyle = { name: 'oldStyle', backward() {} } as unknown as Parameters<Tape['record']>[0];
    expect(() => tape.record(oldStyle, out)).toThrowError(
      'Invalid argument at oldStyle.saves: expected a function that makes the record of what backward reads (see OperationKind), received undefined',
    );
    void x;
  });

  it('records nothing and tracks nothing while recording is off', () => {
    const x = trainable(tensor([1, 2], [2]));
    const tape = new Tape({ recording: false });
    const y = sigmoid(tape, add(tape, x, x));
    expect(tape.length).toBe(0);
    expect(y.tracked).toBe(false);
    expect(y.data[0]).toBeCloseTo(1 / (1 + Math.exp(-2)), 7);
  });

  it('detaches: no gradient flows through a detached or kept tensor', () => {
    const x = trainable(tensor([0.3], [1], 'f64'));
    const tape = new Tape();
    const h = tanh(tape, x);
    const stopped = detach(h);
    const kept = tape.keep(h);
    const f = add(tape, sum(tape, multiply(tape, h, stopped)), sum(tape, multiply(tape, kept, kept)));
    tape.reverseSweep(f);
    // d/dx [tanh(x)·c] with c held constant = c (1 − tanh²x).
    const t = Math.tanh(0.3);
    expect(x.gradient![0]).toBeCloseTo(t * (1 - t * t), 15);
    tape.clear();
    // The kept copy survives the clear; the tape's own buffers went back to the pool.
    expect(kept.data[0]).toBe(Math.tanh(0.3));
  });

  it('keeps state across windows by copying into a tensor it is given', () => {
    const tape = new Tape();
    const state = tensor([0, 0], [2]);
    const x = trainable(tensor([0.1, 0.2], [2]));
    for (let window = 0; window < 3; window++) {
      const next = tanh(tape, add(tape, x, state));
      tape.keep(next, state);
      tape.clear();
    }
    const expected = [0.1, 0.2].map((v) => {
      let s = 0;
      for (let i = 0; i < 3; i++) s = Math.fround(Math.tanh(Math.fround(Math.fround(v) + s)));
      return s;
    });
    expect(Array.from(state.data)).toEqual(expected);
    expect(() => tape.keep(x, tensor([0, 0, 0], [3]))).toThrowError('Shape mismatch at Tape.keep.into: expected [2], received [3]');
  });

  it('reuses every buffer: 1,000 forward and reverse sweeps of one graph create no typed array after the first', () => {
    const pool = defaultBackend().createPool();
    const tape = new Tape({ pool });
    const random = new Random(5);
    const w = trainable(randomUniform([8, 16], random, -1, 1, 'f32'));
    const bias = trainable(randomUniform([16], random, -1, 1, 'f32'));
    const x = randomUniform([4, 8], random, -1, 1, 'f32');
    const step = (): void => {
      const h = tanh(tape, add(tape, matmul(tape, x, w), bias));
      tape.reverseSweep(sum(tape, multiply(tape, h, h)));
      tape.clear();
    };
    step();
    const afterFirst = pool.counts().created;
    expect(afterFirst).toBeGreaterThan(0);
    for (let i = 0; i < 1000; i++) step();
    expect(pool.counts().created).toBe(afterFirst);
    expect(pool.counts().bytesInUse).toBe(0);
  });
});

describe('dropout', () => {
  it('keeps about 1 − rate of the elements, scaled by 1/(1 − rate), and the same seed gives the same mask', () => {
    const x = tensor(new Float64Array(10000).fill(1), [100, 100], 'f64');
    const tape = new Tape();
    const y = dropout(tape, x, 0.25, new Random(9));
    const kept = y.toArray().filter((v) => v !== 0);
    expect(kept.every((v) => v === 1 / 0.75)).toBe(true);
    // Binomial(10000, 0.75): mean 7500, standard deviation ≈ 43; allow 5 deviations (common practice).
    expect(Math.abs(kept.length - 7500)).toBeLessThan(220);
    const again = dropout(new Tape(), x, 0.25, new Random(9));
    expect(again.toArray()).toEqual(y.toArray());
    expect(() => dropout(tape, x, 1, new Random(1))).toThrowError('Invalid option at dropout.rate: expected a number in [0, 1), received 1');
  });

  it('a parameter used by 12 nodes (one per step of a small recurrence) accumulates every share', () => {
    const random = new Random('shared');
    const recurrent = f64Input(random, [3, 3], 'recurrent', -0.8, 0.8);
    const inputWeights = f64Input(random, [2, 3], 'inputWeights');
    const bias = f64Input(random, [3], 'bias');
    const xs = Array.from({ length: 12 }, (_, t) => f64Input(random, [2, 2], `x${t}`));
    const report = checkGradients(
      (tape) => {
        let h = f64Input(new Random(0), [2, 3], 'h0');
        for (const x of xs) {
          h = tanh(tape, add(tape, add(tape, matmul(tape, x, inputWeights), matmul(tape, h, recurrent)), bias));
        }
        return sum(tape, multiply(tape, h, h));
      },
      [recurrent, inputWeights, bias],
      { tolerance: 1e-7, directions: 2 },
    );
    if (!report.passed) throw new Error(report.text());
    expect(report.passed).toBe(true);
    // The recorded graph really has the recurrent matrix read by 12 matmul nodes.
    trainable(recurrent);
    const tape = new Tape();
    let h = f64Input(new Random(0), [2, 3], 'h0');
    for (const x of xs) h = tanh(tape, add(tape, add(tape, matmul(tape, x, inputWeights), matmul(tape, h, recurrent)), bias));
    expect(tape.kinds().filter((k) => k === 'matmul').length).toBe(12);
  });
});
