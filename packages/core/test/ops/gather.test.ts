import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, gatherRows, tensor, trainable } from '@weft/core';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

describe('gatherRows on the tape', () => {
  it('picks the rows the indices name, repeats included', () => {
    const table = tensor(
      [
        [1, 2],
        [3, 4],
        [5, 6],
      ],
      [3, 2],
      'f64',
    );
    expect(Array.from(gatherRows(new Tape(), table, [2, 0, 2]).data)).toEqual([5, 6, 1, 2, 5, 6]);
  });

  it('scatter-adds every share of a row picked several times, as finite differences do', () => {
    const random = new Random('gather');
    const table = input(random, [5, 3], 'table');
    const indices = Int32Array.of(2, 0, 2, 4, 2, 0);
    const w = input(random, [6, 3], 'w');
    expectPass(checkGradients((tape) => weightedSum(tape, gatherRows(tape, table, indices), w), [table], checkOptions));
    // Row 2 is picked three times: its gradient is the sum of w's rows 0, 2 and 4 (definition of the sum).
    const tape = new Tape();
    trainable(table);
    tape.reverseSweep(weightedSum(tape, gatherRows(tape, table, indices), w));
    for (let c = 0; c < 3; c++) expect(table.gradient![2 * 3 + c]).toBeCloseTo(w.data[c] + w.data[6 + c] + w.data[12 + c], 14);
    expect(table.gradient![3 * 3]).toBe(0);
  });

  it('refuses an index outside the table or not whole, by its position', () => {
    const table = tensor(
      [
        [1, 2],
        [3, 4],
      ],
      [2, 2],
      'f64',
    );
    expect(() => gatherRows(new Tape(), table, [1, 2])).toThrowError(
      'Invalid argument at gatherRows.indices[1]: expected a whole number in [0, 2), received 2',
    );
    expect(() => gatherRows(new Tape(), table, [0.5])).toThrowError(
      'Invalid argument at gatherRows.indices[0]: expected a whole number in [0, 2), received 0.5',
    );
  });
});
