import { describe, expect, it } from 'vitest';
import { matrix, multiply as referenceMultiply, transpose } from 'mathjs';
import type { Matrix } from 'mathjs';
import { Random, Tape, WeftError, checkGradients, matmul, tensor } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { checkOptions, expectPass, input, weightedSum } from './helpers.js';

function rows(t: { data: ArrayLike<number>; shape: readonly number[] }): number[][] {
  return Array.from({ length: t.shape[0] }, (_, r) => Array.from({ length: t.shape[1] }, (_, c) => t.data[r * t.shape[1] + c]));
}

describe('matmul on the tape', () => {
  for (const transposeA of [false, true]) {
    for (const transposeB of [false, true]) {
      it(`computes op(A)·op(B) as mathjs multiply does and its gradients as finite differences do, transposeA=${transposeA}, transposeB=${transposeB}`, () => {
        const random = new Random(`mm${transposeA}${transposeB}`);
        const a = input(random, transposeA ? [4, 5] : [5, 4], 'a');
        const b = input(random, transposeB ? [6, 4] : [4, 6], 'b');
        const product = matmul(new Tape(), a, b, { transposeA, transposeB });
        expect(product.shape).toEqual([5, 6]);
        // Reference: mathjs multiply (and transpose) on the same matrices.
        const left = transposeA ? transpose(matrix(rows(a))) : matrix(rows(a));
        const right = transposeB ? transpose(matrix(rows(b))) : matrix(rows(b));
        const expected = ((referenceMultiply(left, right) as Matrix).toArray() as number[][]).flat();
        expect(worstGap(product.data, expected)).toBeLessThan(1e-14);
        const w = input(random, [5, 6], 'w');
        expectPass(checkGradients((tape) => weightedSum(tape, matmul(tape, a, b, { transposeA, transposeB }), w), [a, b], checkOptions));
      });
    }
  }

  it('names both inner sizes when they differ', () => {
    const a = tensor([[1, 2, 3]], [1, 3], 'f64');
    const b = tensor([[1], [2]], [2, 1], 'f64');
    expect(() => matmul(new Tape(), a, b)).toThrowError(WeftError);
    expect(() => matmul(new Tape(), a, b)).toThrowError(
      'Shape mismatch at matmul.b: expected [3, cols], received [2, 1] (inner sizes differ: A is [1, 3], B is [2, 1])',
    );
  });
});
