/**
 * Interpolated Kneser–Ney (data/ngram.ts) worked by hand on a five-token corpus from Chen & Goodman's equations
 * (TR-10-98, 1998, eq. 17 and the discount of eq. 26), and the property any smoothed model must have: its
 * probabilities over the vocabulary sum to 1 after any history, seen or not.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { KneserNeyModel, chooseNgramOrder, textBaselines } from '@weft/io';

describe('interpolated Kneser–Ney', () => {
  // a b a b c as ids 0 1 0 1 2.
  const corpus = [0, 1, 0, 1, 2];
  const model = new KneserNeyModel(corpus, 2, 3);

  it('works a bigram model by hand on "a b a b c"', () => {
    // Bigrams ab ×2, ba, bc: n₁ = 2, n₂ = 1 → D₂ = 2 / (2 + 2) = ½. Continuation counts of a, b, c: 1 each (n₁ = 3,
    // n₂ = 0 → D₁ = 1), so P₁ = 0 + 1 · 3/3 · ⅓ = ⅓ each. P(b | a) = (2 − ½)/2 + ½ · 1/2 · ⅓ = ¾ + 1/12;
    // P(a | a) = 1/12; P(c | b) = (1 − ½)/2 + ½ · 2/2 · ⅓ = ¼ + ⅙.
    expect(model.probability([0], 0, 1, 1)).toBeCloseTo(0.75 + 1 / 12, 15);
    expect(model.probability([0], 0, 1, 0)).toBeCloseTo(1 / 12, 15);
    expect(model.probability([1], 0, 1, 2)).toBeCloseTo(0.25 + 1 / 6, 15);
    expect(model.probability([], 0, 0, 2)).toBeCloseTo(1 / 3, 15);
  });

  it('gives probabilities that sum to 1 after every history, on a random corpus of order 4', () => {
    const random = new Random('kneser-ney');
    const tokens = Array.from({ length: 3000 }, () => Math.floor(random.uniform() * 5) + (random.uniform() < 0.5 ? 0 : 2));
    const four = new KneserNeyModel(tokens, 4, 8);
    for (const history of [[1, 2, 3], [6, 6, 6], [0], [], [7, 7]]) {
      let sum = 0;
      for (let w = 0; w < 8; w++) sum += four.probability(history, 0, history.length, w);
      expect(Math.abs(sum - 1)).toBeLessThan(1e-12);
    }
  });

  it('chooses an order above 1 for a text made of a repeating 3-token pattern with noise', () => {
    const random = new Random('order');
    const make = (n: number) => Array.from({ length: n }, (_, i) => (random.uniform() < 0.1 ? 3 : [0, 1, 2][i % 3]));
    const { order, crossEntropy } = chooseNgramOrder(make(2000), make(500), 4, 4);
    expect(crossEntropy[0]).toBeGreaterThan(crossEntropy[1]);
    expect(order).toBeGreaterThanOrEqual(2);
  });

  it('scores the unigram baseline with add-one counts of the tokens before the test, worked by hand', () => {
    // Counts of 0 1 1 plus one each: 2, 3, 1 of 6; the test token 2 has probability 1/6: perplexity 6.
    const judged = textBaselines(Int32Array.from([0, 1, 1, 2]), 2, 3, 3, 2);
    expect(judged.unigram).toBeCloseTo(6, 12);
    expect(judged.orderLosses).toHaveLength(2);
    expect(judged.ngram).toBeCloseTo(1 / new KneserNeyModel([0, 1, 1], judged.order, 3).probability([0, 1, 1], 0, 3, 2), 12);
  });
});
