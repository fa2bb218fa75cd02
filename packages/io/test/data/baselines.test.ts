/**
 * Forecast baselines (data/baselines.ts): the linear baseline against mathjs least squares (lusolve on the
 * normal equations; mathjs is a general-purpose reference library) on seeded random data, to 1e-9; persistence,
 * the training mean and seasonal naive against hand-worked values (the methods as Hyndman & Athanasopoulos,
 * "Forecasting: Principles and Practice", ch. 5, define them); season detection on a generated seasonal series.
 */
import { describe, expect, it } from 'vitest';
import { lusolve, multiply, transpose } from 'mathjs';
import { Random, WeftError } from '@weft/core';
import { bestBaseline, detectSeason, fitLinear, forecastBaselines, solve } from '@weft/io';
import type { SeriesSplit } from '@weft/io';

describe('the linear baseline', () => {
  it('matches mathjs least squares on the normal equations to 1e-9 on random data', () => {
    const random = new Random('linear baseline');
    const values = Array.from({ length: 120 }, () => [random.between(-3, 3), random.between(-1, 1), random.between(0, 10)]);
    const split: SeriesSplit = { values, targets: [2, 0], horizon: 2, trainRows: 100, positions: [100, 101] };
    const weights = fitLinear(split);
    split.targets.forEach((j, k) => {
      const x: number[][] = [];
      const y: number[][] = [];
      for (let t = 0; t + 2 < 100; t++) {
        x.push([1, ...values[t]]);
        y.push([values[t + 2][j]]);
      }
      const xt = transpose(x);
      const reference = (lusolve(multiply(xt, x), multiply(xt, y)) as number[][]).map((r) => r[0]);
      reference.forEach((w, i) => expect(Math.abs(weights[k][i] - w)).toBeLessThan(1e-9));
    });
  });

  it('gives a repeated or constant input weight 0 instead of dividing by a zero pivot', () => {
    expect(solve([[2, 0], [0, 0]], [4, 0])).toEqual([2, 0]);
    const values = Array.from({ length: 30 }, (_, t) => [t, 7, 2 * t + 1]);
    const w = fitLinear({ values, targets: [2], horizon: 1, trainRows: 30, positions: [] })[0];
    // y(t+1) = 2(t+1) + 1 = 2t + 3: the fit reproduces it exactly whichever way it spreads the weight.
    for (const t of [0, 5, 20]) expect(w[0] + w[1] * t + w[2] * 7 + w[3] * (2 * t + 1)).toBeCloseTo(2 * t + 3, 9);
  });
});

describe('forecast baselines', () => {
  const values = [[1], [2], [4], [8], [3], [6], [9]];
  const split: SeriesSplit = { values, targets: [0], horizon: 1, trainRows: 4, positions: [4, 5] };

  it('scores persistence, the training mean and seasonal naive as worked by hand', () => {
    const scores = forecastBaselines(split, { season: 2 });
    const byName = Object.fromEntries(scores.map((s) => [s.name, s.overall.mae]));
    // persistence: |6 − 3| and |9 − 6| → 3; mean of 1, 2, 4, 8 = 3.75 → |6 − 3.75|, |9 − 3.75| → 3.75;
    // seasonal naive, season 2: row t+1 from row t−1: |6 − 8|, |9 − 3| → 4.
    expect(byName.persistence).toBe(3);
    expect(byName['training mean']).toBe(3.75);
    expect(byName['seasonal naive']).toBe(4);
    expect(Object.keys(byName)).toContain('linear');
    expect(bestBaseline(scores).overall.mae).toBe(Math.min(...Object.values(byName)));
  });

  it('refuses a season as long as the training rows, naming the option', () => {
    let error: unknown;
    try {
      forecastBaselines(split, { season: 4 });
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).message).toBe('Invalid option at season: expected a whole number of rows in [1, 3] (shorter than the training rows), received 4');
  });

  it('detects the period of a noisy seasonal series and none in white noise', () => {
    const random = new Random('season');
    const seasonal = Array.from({ length: 600 }, (_, t) => Math.sin((2 * Math.PI * t) / 50) + 0.2 * random.normal());
    expect(detectSeason(seasonal)).toBeGreaterThanOrEqual(49);
    expect(detectSeason(seasonal)).toBeLessThanOrEqual(51);
    const noise = Array.from({ length: 600 }, () => random.normal());
    expect(detectSeason(noise)).toBeNull();
  });
});
