import { describe, expect, it } from 'vitest';
import { WeftError, describeProblem, fail, formatShape } from '@weft/core';

describe('the one error type', () => {
  it('words a problem from its fields: what, where, expected and received, then any detail', () => {
    expect(describeProblem({ code: 'shape_mismatch', path: 'matmul.b', expected: '[3, 4]', received: '[5, 4]' })).toBe(
      'Shape mismatch at matmul.b: expected [3, 4], received [5, 4]',
    );
    expect(describeProblem({ code: 'bad_data', path: 'data.csv:17:3', expected: 'a number', received: '"x"', detail: 'a decimal number' })).toBe(
      'Bad data at data.csv:17:3: expected a number, received "x" (a decimal number)',
    );
    expect(describeProblem({ code: 'tape_state', path: 'Tape', expected: '', received: '' })).toBe('Tape misuse at Tape');
  });

  it("carries one problem in one line and several as a counted list, the first one's fields on the error", () => {
    const one = new WeftError({ code: 'invalid_option', path: 'trainer.rate', expected: 'a number > 0', received: '-1' });
    expect([one.message, one.code, one.path, one.expected, one.received, one.name]).toEqual([
      'Invalid option at trainer.rate: expected a number > 0, received -1',
      'invalid_option',
      'trainer.rate',
      'a number > 0',
      '-1',
      'WeftError',
    ]);
    const two = new WeftError([
      { code: 'bad_weight_file', path: 'version', expected: '2', received: '7' },
      { code: 'not_finite', path: 'tensors (readout.bias)[0]', expected: 'finite weights', received: 'NaN' },
    ]);
    expect(two.message).toBe(
      '2 problems:\n  - Bad weight file at version: expected 2, received 7\n  - Non-finite value at tensors (readout.bias)[0]: expected finite weights, received NaN',
    );
    expect(two.problems).toHaveLength(2);
  });

  it('throws through fail, and writes shapes the one way every message shows them', () => {
    expect(() => fail('invalid_argument', 'x', 'y', 'z')).toThrowError(WeftError);
    expect([formatShape([]), formatShape([2, 3])]).toEqual(['[]', '[2, 3]']);
  });
});
