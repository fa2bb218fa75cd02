import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';

function randomArray(random: Random, length: number): Float64Array {
  return Float64Array.from({ length }, () => random.between(-2, 2));
}

describe('elementwise kernels', () => {
  const random = new Random('elementwise');
  const a = randomArray(random, 37);
  const b = randomArray(random, 37);

  // Expected values by the definitions of the operations (common practice), one element at a time.
  const cases: [string, (out: Float64Array, x: Float64Array, y: Float64Array) => void, (x: number, y: number) => number][] = [
    ['add', (o, x, y) => kernels.add(o, x, y, 37), (x, y) => x + y],
    ['subtract', (o, x, y) => kernels.subtract(o, x, y, 37), (x, y) => x - y],
    ['multiply', (o, x, y) => kernels.multiply(o, x, y, 37), (x, y) => x * y],
    ['scale', (o, x) => kernels.scale(o, x, -1.5, 37), (x) => -1.5 * x],
  ];

  for (const [name, run, definition] of cases) {
    it(`${name} computes its definition element by element`, () => {
      const out = new Float64Array(37);
      run(out, a, b);
      for (let i = 0; i < 37; i++) expect(out[i]).toBe(definition(a[i], b[i]));
    });

    it(`${name} gives the same result when out aliases its first input, as documented`, () => {
      const separate = new Float64Array(37);
      run(separate, a, b);
      const aliased = Float64Array.from(a);
      run(aliased, aliased, b);
      expect(Array.from(aliased)).toEqual(Array.from(separate));
    });
  }

  it('accumulating kernels add to what out holds', () => {
    const out = Float64Array.from({ length: 37 }, (_, i) => i);
    kernels.addInto(out, a, 37);
    kernels.addScaledInto(out, b, 2, 37);
    kernels.multiplyInto(out, a, b, 37);
    for (let i = 0; i < 37; i++) expect(out[i]).toBe(i + a[i] + 2 * b[i] + a[i] * b[i]);
  });

  it('addRow adds one row to every row, sumRows sums columns and sumRowsInto adds the sums', () => {
    const matrix = Float64Array.from({ length: 12 }, (_, i) => i);
    const row = Float64Array.of(10, 20, 30, 40);
    const out = kernels.addRow(new Float64Array(12), matrix, row, 3, 4);
    expect(Array.from(out)).toEqual([10, 21, 32, 43, 14, 25, 36, 47, 18, 29, 40, 51]);
    const sums = kernels.sumRows(new Float64Array(4), matrix, 3, 4);
    expect(Array.from(sums)).toEqual([12, 15, 18, 21]);
    kernels.sumRowsInto(sums, matrix, 3, 4);
    expect(Array.from(sums)).toEqual([24, 30, 36, 42]);
  });
});
