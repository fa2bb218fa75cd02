import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { greedy, sample } from '@weft/io/runtime';

describe('choosing the next token', () => {
  it('samples in proportion to softmax(z/T) and only among the top k (common practice)', () => {
    const logits = Float32Array.of(Math.log(1), Math.log(2), Math.log(3), Math.log(4));
    expect(greedy(logits, 0, 4)).toBe(3);
    const random = new Random('sampling');
    const counts = [0, 0, 0, 0];
    for (let i = 0; i < 20_000; i++) counts[sample(logits, 0, 4, random)]++;
    // Expected shares 0.1, 0.2, 0.3, 0.4; allow 5 binomial standard deviations (≈ 0.017).
    counts.forEach((n, j) => expect(Math.abs(n / 20_000 - (j + 1) / 10)).toBeLessThan(0.017));
    const top2 = [0, 0, 0, 0];
    for (let i = 0; i < 5_000; i++) top2[sample(logits, 0, 4, random, { topK: 2 })]++;
    expect(top2[0] + top2[1]).toBe(0);
    // Among the top two, shares 3 : 4 as in softmax; temperature 0.5 squares the odds to 9 : 16.
    expect(Math.abs(top2[3] / (top2[2] + top2[3]) - 4 / 7)).toBeLessThan(0.04);
    const sharp = [0, 0, 0, 0];
    for (let i = 0; i < 5_000; i++) sharp[sample(logits, 0, 4, random, { topK: 2, temperature: 0.5 })]++;
    expect(Math.abs(sharp[3] / (sharp[2] + sharp[3]) - 16 / 25)).toBeLessThan(0.04);
  });
});
