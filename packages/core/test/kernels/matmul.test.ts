import { describe, expect, it } from 'vitest';
import { multiply, transpose, matrix } from 'mathjs';
import type { Matrix } from 'mathjs';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import * as layer from './layer-batch.js';

function randomMatrix(random: Random, rows: number, cols: number): number[][] {
  return Array.from({ length: rows }, () => Array.from({ length: cols }, () => random.between(-1, 1)));
}

function flat(m: number[][]): Float64Array {
  return Float64Array.from(m.flat());
}

// Reference: mathjs `multiply` on the same matrices (a general-purpose npm library, used at test time only).
function reference(a: number[][], b: number[][]): Float64Array {
  return Float64Array.from(((multiply(matrix(a), matrix(b)) as Matrix).toArray() as number[][]).flat());
}

describe('matmul kernel', () => {
  const shapes: [number, number, number][] = [
    [1, 1, 1],
    [1, 7, 5],
    [3, 9, 2],
    [4, 4, 4],
    [5, 3, 7],
    [9, 17, 13],
    [32, 19, 41],
    [2, 160, 33],
  ];

  for (const [rows, inner, cols] of shapes) {
    for (const transposeA of [false, true]) {
      for (const transposeB of [false, true]) {
        it(`matches mathjs multiply for [${rows}×${inner}]·[${inner}×${cols}] with transposeA=${transposeA}, transposeB=${transposeB} (f64, 1e-12)`, () => {
          const random = new Random(`${rows}-${inner}-${cols}`);
          const a = randomMatrix(random, rows, inner);
          const b = randomMatrix(random, inner, cols);
          const storedA = transposeA ? flat(transpose(a)) : flat(a);
          const storedB = transposeB ? flat(transpose(b)) : flat(b);
          const out = new Float64Array(rows * cols);
          kernels.matmul(out, storedA, storedB, kernels.productShape(rows, inner, cols, kernels.transposedOf(transposeA, transposeB)));
          expect(worstGap(out, reference(a, b))).toBeLessThanOrEqual(1e-12);
        });
      }
    }
  }

  it('adds into out in matmulInto', () => {
    const random = new Random(7);
    const a = randomMatrix(random, 6, 5);
    const b = randomMatrix(random, 5, 3);
    const start = Float64Array.from({ length: 18 }, (_, i) => i * 0.5);
    const out = Float64Array.from(start);
    kernels.matmulInto(out, flat(a), flat(b), { rows: 6, inner: 5, cols: 3 });
    const product = reference(a, b);
    const expected = start.map((v, i) => v + product[i]);
    expect(worstGap(out, expected)).toBeLessThanOrEqual(1e-12);
  });

  it('computes f32 products with one rounding of an f64 accumulation', () => {
    const random = new Random(11);
    const a = randomMatrix(random, 8, 12);
    const b = randomMatrix(random, 12, 6);
    const a32 = Float32Array.from(a.flat());
    const b32 = Float32Array.from(b.flat());
    const out = new Float32Array(48);
    kernels.matmul(out, a32, b32, { rows: 8, inner: 12, cols: 6 });
    // Reference: mathjs on the f32 values widened to f64, then rounded once to f32.
    const widenedA = Array.from({ length: 8 }, (_, r) => Array.from(a32.subarray(r * 12, r * 12 + 12)));
    const widenedB = Array.from({ length: 12 }, (_, r) => Array.from(b32.subarray(r * 6, r * 6 + 6)));
    const expected = Float32Array.from(reference(widenedA, widenedB));
    // Summation order differs from mathjs, so allow a couple of f32 ulps rather than bit equality.
    expect(worstGap(out, expected)).toBeLessThanOrEqual(2e-7);
  });

  it('gives wrong results when out aliases an operand, as its comment warns', () => {
    // A 1×8 row times an 8×8 matrix, written over the row itself: after the first four outputs are stored,
    // the later columns read overwritten inputs.
    const a = Float64Array.from({ length: 8 }, (_, i) => i + 1);
    const b = Float64Array.from({ length: 64 }, (_, i) => (i % 5) - 2);
    const expected = kernels.matmul(new Float64Array(8), a, b, { rows: 1, inner: 8, cols: 8 });
    const aliased = Float64Array.from(a);
    kernels.matmul(aliased, aliased, b, { rows: 1, inner: 8, cols: 8 });
    expect(Array.from(aliased)).not.toEqual(Array.from(expected));
  });

  it('agrees with the naive yardstick loop', () => {
    const random = new Random(3);
    const a = flat(randomMatrix(random, 10, 20));
    const b = flat(randomMatrix(random, 20, 30));
    const fast = kernels.matmul(new Float64Array(300), a, b, { rows: 10, inner: 20, cols: 30 });
    const slow = kernels.matmulNaive(new Float64Array(300), a, b, 10, 20, 30);
    expect(worstGap(fast, slow)).toBeLessThanOrEqual(1e-13);
  });
});

describe("the readout's affine map", () => {
  const { table } = layer;
  it('compute the readout x·W + b as mathjs multiply does, plus the bias row', () => {
    const random = new Random('affine');
    const x = table(random, 3, 6);
    const weights = table(random, 6, 2);
    const bias = Float64Array.of(0.5, -2);
    const out = kernels.affineRows(new Float64Array(6), Float64Array.from(x.flat()), Float64Array.from(weights.flat()), bias, { rows: 3, inner: 6, cols: 2 });
    const product = ((multiply(matrix(x), matrix(weights)) as Matrix).toArray() as number[][]).flat();
    expect(
      worstGap(
        out,
        product.map((v, i) => v + bias[i % 2]),
      ),
    ).toBeLessThan(1e-14);
  });
});
