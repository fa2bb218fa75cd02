import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { traceStep } from '@weft/cells/description';
import type { CellPlan, StepValue, StepWriter } from '@weft/cells/description';
import { mguPlan } from './mgu.js';

const shape = { inputWidth: 3, hidden: 4, layer: { cell: 'test.bad', hidden: 4 } };

/** The message of tracing a plan whose step is `step` (parameters input [3, 4], recurrent [4, 4], bias [4]). */
function traced(step: (w: StepWriter) => readonly StepValue[], state = [{ name: 'h', width: 4 }]): string {
  const plan: CellPlan = {
    kind: 'test.bad',
    state: () => state,
    parameters: () => [
      { name: 'input', shape: [3, 4] },
      { name: 'recurrent', shape: [4, 4] },
      { name: 'bias', shape: [4] },
    ],
    step,
  };
  try {
    traceStep(plan, shape, 'layers[1].forward');
  } catch (error) {
    expect(error).toBeInstanceOf(WeftError);
    const message = (error as Error).message;
    expect(message.split('\n')).toHaveLength(1);
    return message;
  }
  return 'traced';
}

describe('tracing a plan', () => {
  it('records the minimal gated unit as fourteen operations on numbered values, its new h last', () => {
    const program = traceStep(mguPlan, { inputWidth: 3, hidden: 4, layer: { cell: 'test.mgu', hidden: 4 } }, 'layers[0].forward');
    expect(program.instructions.map((i) => i.operation)).toEqual([
      'product',
      'add',
      'columns',
      'product',
      'add',
      'sigmoid',
      'columns',
      'multiply',
      'product',
      'add',
      'tanh',
      'subtract',
      'multiply',
      'add',
    ]);
    expect(program.values.slice(0, 4).map((v) => v.source)).toEqual(['input', 'state', 'computed', 'vector']);
    expect(program.results).toEqual([program.values.length - 1]);
  });

  it('refuses in one line naming the cell and the operation: a product of the wrong width, a missing parameter, a row subtracted', () => {
    expect(traced((w) => [w.product(w.state[0], 'input')])).toMatch(/layers\[1\]\.forward \(cell 'test\.bad'\)\.step\.product.*\[4, …\].*'input' \[3,4\]/);
    expect(traced((w) => [w.product(w.input, 'missing')])).toMatch(/'missing' \(no such parameter\)/);
    expect(traced((w) => [w.subtract(w.state[0], w.vector('bias'))])).toMatch(/step\.subtract.*neither a row.*a value 4 wide and a row 4 wide/);
    expect(traced((w) => [w.add(w.state[0], w.input)])).toMatch(/step\.add.*a value 4 wide and a value 3 wide/);
    expect(traced((w) => [w.columns(w.state[0], 2, 3)])).toMatch(/step\.columns.*columns within \[0, 4\).*start 2, width 3/);
    expect(traced((w) => [w.vector('input')])).toMatch(/step\.vector.*one-dimensional.*'input' \[3,4\]/);
  });

  it('refuses a step that returns the wrong number of slots, a slot of the wrong width, or a row', () => {
    expect(traced((w) => [w.state[0], w.state[0]])).toMatch(/\.step: expected the new state: 1 value\(s\), one per slot.*2 value\(s\)/);
    expect(
      traced(
        (w) => [w.product(w.input, 'input'), w.input],
        [
          { name: 'h', width: 4 },
          { name: 'c', width: 4 },
        ],
      ),
    ).toMatch(/result\[1\].*slot 'c': a value 4 wide.*a value 3 wide/);
    expect(traced((w) => [w.vector('bias')])).toMatch(/result\[0\].*a row 4 wide/);
    expect(traced((w) => [w.state[0]], [{ name: 'h', width: 5 }])).toMatch(/state\[0\].*the output slot 4 wide/);
  });

  it('copies a slot passed on unchanged, so the new state never reads a slot already written', () => {
    const plan: CellPlan = {
      ...mguPlan,
      kind: 'test.keep',
      state: ({ hidden }) => [
        { name: 'h', width: hidden },
        { name: 'k', width: hidden },
      ],
      step: (w) => [w.state[1], w.state[0]],
    };
    const program = traceStep(plan, { inputWidth: 3, hidden: 4, layer: { cell: 'test.keep', hidden: 4 } }, 'x');
    expect(program.instructions.map((i) => `${i.operation} ${i.a}`)).toEqual(['columns 2', 'columns 1']);
  });
});
