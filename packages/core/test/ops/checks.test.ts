import { describe, expect, it } from 'vitest';
import { Tape, WeftError, add, gatherRows, matmul, meanSquaredError, tensor } from '@weft/core';

describe('the checks every operation makes at its boundary', () => {
  const tape = new Tape();

  it('name the operation and argument of a dtype mismatch, with both dtypes', () => {
    expect(() => add(tape, tensor([1, 2], [2], 'f64'), tensor([1, 2], [2], 'f32'))).toThrowError('Dtype mismatch at add.b: expected f64, received f32');
  });

  it('name the operation and argument of a wrong rank, with the rank expected and the shape received', () => {
    expect(() => matmul(tape, tensor([1, 2], [2], 'f64'), tensor([[1]], [1, 1], 'f64'))).toThrowError(
      'Shape mismatch at matmul.a: expected a rank-2 tensor, received [2]',
    );
    expect(() => gatherRows(tape, tensor([1, 2], [2], 'f64'), [0])).toThrowError(WeftError);
  });

  it('name the operation and argument of a wrong shape, with both shapes', () => {
    expect(() => meanSquaredError(tape, tensor([[1, 2]], [1, 2], 'f64'), tensor([1, 2], [2], 'f64'))).toThrowError(
      'Shape mismatch at meanSquaredError.target: expected [1, 2], received [2]',
    );
  });
});
