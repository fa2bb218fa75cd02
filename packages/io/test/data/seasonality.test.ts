/**
 * Seasons (data/seasonality.ts): autocorrelations against mathjs (a general-purpose reference library) computed
 * from their definition; the M4 benchmarks' 90% test (Makridakis, Spiliotis & Assimakopoulos 2020) worked by
 * hand; the choice on a trending series with a 24-row season, from a time column and from the data alone; the
 * classical decomposition's indices on a noiseless seasonal series (common practice).
 */
import { describe, expect, it } from 'vitest';
import { dot, mean, subtract } from 'mathjs';
import { Random } from '@weft/core';
import { chooseSeason, isSeasonal } from '@weft/io';
import { autocorrelations, seasonalIndices, seasonalityLimit } from '@weft/io/internal';

describe('seasons', () => {
  const random = new Random('seasons');
  const trendingDaily = Array.from({ length: 24 * 30 }, (_, t) => 10 + 0.05 * t + 4 * Math.sin((2 * Math.PI * t) / 24) + 0.5 * random.normal());

  it('computes autocorrelations as their definition does in mathjs', () => {
    const series = trendingDaily.slice(0, 200);
    const centred = subtract(series, mean(series)) as number[];
    const acf = autocorrelations(series, 5);
    for (let k = 1; k <= 5; k++) {
      const reference = (dot(centred.slice(k), centred.slice(0, centred.length - k)) as number) / (dot(centred, centred) as number);
      expect(Math.abs(acf[k] - reference)).toBeLessThan(1e-12);
    }
  });

  it('works the 90% limit by hand: 1.645 √((1 + 2 Σ r_k²) / n)', () => {
    // r = [1, 0.5, 0.25], m = 3, n = 100: √(1 + 2(0.25 + 0.0625)) / 10 · 1.645 = 1.645 · √1.625 / 10.
    expect(seasonalityLimit([1, 0.5, 0.25], 3, 100)).toBeCloseTo((1.645 * Math.sqrt(1.625)) / 10, 14);
    expect(isSeasonal(trendingDaily, 24)).toBe(true);
    expect(isSeasonal(trendingDaily.slice(0, 70), 24)).toBe(false);
  });

  it('finds the 24-row season of a trending series from hourly times, and says why', () => {
    const choice = chooseSeason(trendingDaily, { unit: 'hours', seasons: [24, 168] });
    expect(choice.season).toBe(24);
    expect(choice.reason).toMatch(
      /^season of 24 rows from the time column \(rows hours apart\): autocorrelation of the differences 0\.\d{3}, above the 90% limit 0\.\d{3}$/,
    );
    expect(choice.candidates.map((c) => c.rows)).toEqual([24, 168]);
  });

  it('finds the same season with no time column, from the differences alone', () => {
    expect(chooseSeason(trendingDaily).season).toBe(24);
  });

  it('finds no season in a random walk and names every candidate it rejected', () => {
    let level = 0;
    const walk = Array.from({ length: 500 }, () => (level += random.normal()));
    const choice = chooseSeason(walk, { unit: 'days', seasons: [7, 365] });
    expect(choice.season).toBeNull();
    expect(choice.reason).toContain('7 rows: autocorrelation of the differences');
    expect(choice.reason).toContain('365 rows: fewer than 3 seasons');
  });

  it('recovers the seasonal indices of a noiseless multiplicative and additive series', () => {
    const shape = [1.2, 0.9, 1.1, 0.8];
    const product = Array.from({ length: 40 }, (_, t) => 50 * shape[t % 4]);
    [...seasonalIndices(product, 40, 4, true)].forEach((v, j) => expect(v).toBeCloseTo(shape[j], 12));
    const offsets = [2, -1, 0.5, -1.5, 0];
    const sum = Array.from({ length: 50 }, (_, t) => 7 + 0.2 * t + offsets[t % 5]);
    [...seasonalIndices(sum, 50, 5, false)].forEach((v, j) => expect(v).toBeCloseTo(offsets[j], 12));
  });
});
