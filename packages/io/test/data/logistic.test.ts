/**
 * The classifier baseline (data/logistic.ts): summary features worked by hand; the fitted regression checked at
 * its optimum by central finite differences of the penalised loss (an external check: the gradient of a convex
 * loss is zero at its minimum, whatever code computed it); and a three-class problem separable by its means.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { chooseLogistic, fitLogistic, predictLogistic, summaryFeatures } from '@weft/io';
import { logisticLoss } from '@weft/io/internal';

describe('logistic regression on summary features', () => {
  it('summarises a sequence by mean, deviation, minimum, maximum, last value and slope per column', () => {
    // Column 0: 1, 3, 5 → mean 3, deviation √(8/3), 1, 5, last 5, slope 2. Column 1: 4, 4, 1 → mean 3,
    // deviation √2, 1, 4, last 1, slope (−1·1 + 0 + 1·(−2)) / 2 = −1.5.
    const f = summaryFeatures([1, 4, 3, 4, 5, 1], 3, 2);
    expect(f.slice(0, 6)).toEqual([3, Math.sqrt(8 / 3), 1, 5, 5, 2]);
    expect(f[6]).toBe(3);
    expect(f[7]).toBeCloseTo(Math.sqrt(2), 14);
    expect(f.slice(8)).toEqual([1, 4, 1, -1.5]);
  });

  it('stops where central differences of the penalised loss vanish', () => {
    const random = new Random('logistic');
    const rows = Array.from({ length: 60 }, () => [random.normal(), random.normal(), random.normal()]);
    const labels = rows.map((r) => (r[0] + 0.5 * r[1] + 0.8 * random.normal() > 0 ? 1 : 0));
    const model = fitLogistic(rows, labels, 2, 0.01);
    const p = 4;
    const x = new Float64Array(rows.length * p);
    rows.forEach((row, i) => {
      x[i * p] = 1;
      row.forEach((v, f) => (x[i * p + 1 + f] = (v - model.mean[f]) / model.deviation[f]));
    });
    const h = 1e-6;
    const w = Float64Array.from(model.weights);
    for (let i = 0; i < w.length; i++) {
      const saved = w[i];
      w[i] = saved + h;
      const up = logisticLoss(w, x, labels, 2, 0.01, null);
      w[i] = saved - h;
      const down = logisticLoss(w, x, labels, 2, 0.01, null);
      w[i] = saved;
      expect(Math.abs((up - down) / (2 * h))).toBeLessThan(1e-5);
    }
  });

  it('separates three classes with different means and chooses its penalty on validation rows', () => {
    const random = new Random('three');
    const make = (n: number) => Array.from({ length: n }, (_, i) => ({ label: i % 3, row: [3 * (i % 3) + random.normal(), random.normal()] }));
    const train = make(90);
    const validation = make(30);
    const model = chooseLogistic(
      train.map((e) => e.row),
      train.map((e) => e.label),
      validation.map((e) => e.row),
      validation.map((e) => e.label),
      3,
    );
    const test = make(60);
    const correct = test.filter((e) => predictLogistic(model, e.row) === e.label).length;
    expect(correct / 60).toBeGreaterThan(0.85);
  });
});
