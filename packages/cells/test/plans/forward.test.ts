import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { javascriptForward } from '@weft/core/forward';
import { runtimeCell } from '@weft/cells/description';
import type { CellPlan } from '@weft/cells/description';
import { mguPlan, mguReference } from './mgu.js';

const random = new Random('plan-forward');
const values = (n: number, scale = 0.7): Float32Array => Float32Array.from({ length: n }, () => random.between(-scale, scale));

describe('a plan in the runtime', () => {
  it('steps a cell of your own through its traced program as its equations give, holding a row past its length', () => {
    const parameters: Record<string, Float32Array> = { input: values(3 * 8), bias: values(8), recurrentGate: values(16), recurrentCandidate: values(16) };
    const asked: string[] = [];
    const cell = runtimeCell(
      mguPlan,
      { inputWidth: 3, hidden: 4, layer: { cell: 'test.mgu', hidden: 4 } },
      'layers[0].forward',
      (name, shape, matrix) => {
        asked.push(`${name} [${shape.join(', ')}]${matrix === true ? ' matrix' : ''}`);
        return javascriptForward.matrix(parameters[name.slice('layers[0].forward.'.length)], shape[0], shape[1] ?? 1);
      },
      javascriptForward.kernels,
    );
    expect(asked).toEqual([
      'layers[0].forward.input [3, 8] matrix',
      'layers[0].forward.bias [8]',
      'layers[0].forward.recurrentGate [4, 4] matrix',
      'layers[0].forward.recurrentCandidate [4, 4] matrix',
    ]);
    expect([cell.hidden, cell.inputWidth, cell.slotWidths]).toEqual([4, 3, [4]]);
    const buffers = cell.buffers(2, (n) => new Float32Array(n));
    const lengths = Int32Array.of(3, 2);
    // The reference, row by row in f64 (mgu.ts), holding row 1 after its two steps.
    let rows = [
      [0, 0, 0, 0],
      [0, 0, 0, 0],
    ];
    for (let t = 0; t < 3; t++) {
      const x = values(6, 1);
      cell.step(x, buffers, 2, lengths, t);
      rows = rows.map((h, b) => (t < lengths[b] ? mguReference(Array.from(x.subarray(b * 3, b * 3 + 3)), h, parameters) : h));
      for (let i = 0; i < 8; i++) expect(Math.abs(buffers.state[0][i] - rows[Math.floor(i / 4)][i % 4])).toBeLessThan(1e-6);
    }
  });

  it('reads every slot as it was before the step, so a step that swaps two slots swaps them', () => {
    const swap: CellPlan = {
      kind: 'test.swap',
      state: ({ hidden }) => [
        { name: 'a', width: hidden },
        { name: 'b', width: hidden },
      ],
      parameters: ({ inputWidth, hidden }) => [{ name: 'input', shape: [inputWidth, hidden] }],
      step: (w) => [w.add(w.state[1], w.product(w.input, 'input')), w.state[0]],
    };
    const cell = runtimeCell(
      swap,
      { inputWidth: 1, hidden: 2, layer: { cell: 'test.swap', hidden: 2 } },
      'cell',
      () => Float32Array.of(0, 0),
      javascriptForward.kernels,
    );
    const buffers = cell.buffers(1, (n) => new Float32Array(n));
    buffers.state[0].set([1, 2]);
    buffers.state[1].set([3, 4]);
    cell.step(Float32Array.of(5), buffers, 1, null, 0);
    expect([Array.from(buffers.state[0]), Array.from(buffers.state[1])]).toEqual([
      [3, 4],
      [1, 2],
    ]);
  });

  it('makes every buffer when the buffers are made, none in a step', () => {
    const cell = runtimeCell(
      mguPlan,
      { inputWidth: 2, hidden: 3, layer: { cell: 'test.mgu', hidden: 3 } },
      'c',
      (_, shape) => new Float32Array(shape.reduce((a, b) => a * b, 1)),
      javascriptForward.kernels,
    );
    let made = 0;
    const buffers = cell.buffers(4, (n) => {
      made++;
      return new Float32Array(n);
    });
    const before = made;
    for (let t = 0; t < 10; t++) cell.step(new Float32Array(8), buffers, 4, null, t);
    expect(before).toBeGreaterThan(1);
    expect(made).toBe(before);
  });
});
