/**
 * Our cells against the ONNX LSTM, GRU and RNN operators' equations (onnx-equations.ts, a plain f64 implementation
 * written from the specification that uses nothing of weft), with seeded random weights in ONNX's layout loaded
 * through the documented mapping (onnx-mapping.ts). Used by lstm.test.ts, gru.test.ts and plain.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, tensor } from '@weft/core';
import type { DType, Tensor } from '@weft/core';
import { GruCell, LstmCell, PlainCell, runBidirectional, runSequence } from '@weft/cells';
import type { RecurrentCell } from '@weft/cells';
import { loadGru, loadLstm, loadPlain } from './onnx-mapping.js';
import { specGru, specLstm, specRnn } from './onnx-equations.js';
import type { Matrix, SpecInputs, SpecOutputs } from './onnx-equations.js';

/** The ONNX operator forms our cells stand for. */
export type OnnxKind = 'lstm' | 'gru-before' | 'gru-after' | 'rnn';

function maxGap(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]));
  return worst;
}

function randomMatrix(random: Random, rows: number, cols: number, scale = 0.6): Matrix {
  return Array.from({ length: rows }, () => Array.from({ length: cols }, () => random.between(-scale, scale)));
}

function randomVector(random: Random, length: number, scale = 0.6): number[] {
  return Array.from({ length }, () => random.between(-scale, scale));
}

export interface Setup {
  spec: SpecInputs;
  cell: (dtype: DType) => RecurrentCell;
  run: (input: SpecInputs) => SpecOutputs;
}

export function setup(kind: OnnxKind, seed: string, steps: number, batch: number, width: number, hidden: number): Setup {
  const random = new Random(seed);
  const gates = kind === 'lstm' ? 4 : kind === 'rnn' ? 1 : 3;
  const spec: SpecInputs = {
    x: Array.from({ length: steps }, () => randomMatrix(random, batch, width, 1)),
    w: randomMatrix(random, gates * hidden, width),
    r: randomMatrix(random, gates * hidden, hidden),
    b: randomVector(random, 2 * gates * hidden),
    p: kind === 'lstm' ? randomVector(random, 3 * hidden) : undefined,
    h0: randomMatrix(random, batch, hidden, 0.5),
    c0: kind === 'lstm' ? randomMatrix(random, batch, hidden, 0.8) : undefined,
    linearBeforeReset: kind === 'gru-after',
  };
  const flat = (m: Matrix) => m.flat();
  const cell = (dtype: DType): RecurrentCell => {
    if (kind === 'lstm') {
      const made = new LstmCell({ inputWidth: width, hidden, dtype, peepholes: true });
      loadLstm(made, flat(spec.w), flat(spec.r), spec.b, spec.p);
      return made;
    }
    if (kind === 'rnn') {
      const made = new PlainCell({ inputWidth: width, hidden, dtype });
      loadPlain(made, flat(spec.w), flat(spec.r), spec.b);
      return made;
    }
    const made = new GruCell({ inputWidth: width, hidden, dtype, resetAfterProduct: kind === 'gru-after' });
    loadGru(made, flat(spec.w), flat(spec.r), spec.b);
    return made;
  };
  const run = kind === 'lstm' ? specLstm : kind === 'rnn' ? specRnn : specGru;
  return { spec, cell, run };
}

function stateTensors(s: SpecInputs, dtype: DType): Tensor[] {
  const list = [tensor(s.h0!, undefined, dtype)];
  if (s.c0 !== undefined) list.push(tensor(s.c0, undefined, dtype));
  return list;
}

/**
 * Registers the checks of one kind of cell against the ONNX operator's equations: seeded random weights in ONNX's
 * layout, loaded into our cell, one direction and both, ragged lengths, f64 within 1e-12 and f32 within 1e-5.
 */
export function describeAgainstOnnxEquations(kind: OnnxKind): void {
  const lengths = [6, 3, 1, 0, 5];
  describe(`${kind} with seeded random weights against the ONNX equations (f64, 1e-12; f32, 1e-5)`, () => {
    for (const dtype of ['f64', 'f32'] as DType[]) {
      const tolerance = dtype === 'f64' ? 1e-12 : 1e-5;
      it(`${kind} (${dtype}), one direction, ragged lengths ${lengths.join(', ')}`, () => {
        const { spec, cell, run } = setup(kind, `${kind}-one`, 6, 5, 3, 4);
        const expected = run({ ...spec, lengths });
        const result = runSequence(new Tape({ recording: false }), cell(dtype), tensor(spec.x, undefined, dtype), {
          lengths,
          initialState: stateTensors(spec, dtype),
        });
        expect(maxGap(result.outputs.data, expected.y.flat(2))).toBeLessThanOrEqual(tolerance);
        expect(maxGap(result.state[0].data, expected.yh.flat())).toBeLessThanOrEqual(tolerance);
        if (expected.yc !== undefined) expect(maxGap(result.state[1].data, expected.yc.flat())).toBeLessThanOrEqual(tolerance);
      });

      it(`${kind} (${dtype}), both directions, ragged lengths ${lengths.join(', ')}`, () => {
        const ahead = setup(kind, `${kind}-ahead`, 6, 5, 3, 4);
        const behind = setup(kind, `${kind}-behind`, 6, 5, 3, 4);
        // One input for both directions, as in a bidirectional layer.
        const x = ahead.spec.x;
        const forwardExpected = ahead.run({ ...ahead.spec, lengths });
        const backwardExpected = behind.run({ ...behind.spec, x, lengths, reverse: true });
        const result = runBidirectional(new Tape({ recording: false }), ahead.cell(dtype), behind.cell(dtype), tensor(x, undefined, dtype), {
          lengths,
          initialState: [...stateTensors(ahead.spec, dtype), ...stateTensors(behind.spec, dtype)],
        });
        // Y's features are [forward | backward] at each step, like ONNX's num_directions axis laid side by side.
        const expectedY = forwardExpected.y.map((rows, t) => rows.map((row, b) => [...row, ...backwardExpected.y[t][b]]));
        expect(maxGap(result.outputs.data, expectedY.flat(2))).toBeLessThanOrEqual(tolerance);
        const slots = kind === 'lstm' ? 2 : 1;
        expect(maxGap(result.state[0].data, forwardExpected.yh.flat())).toBeLessThanOrEqual(tolerance);
        expect(maxGap(result.state[slots].data, backwardExpected.yh.flat())).toBeLessThanOrEqual(tolerance);
        if (kind === 'lstm') expect(maxGap(result.state[3].data, backwardExpected.yc!.flat())).toBeLessThanOrEqual(tolerance);
      });
    }
  });
}
