/**
 * Generated series for the verdict tests: a rising line with a 24-row season and seeded Gaussian noise,
 * y_t = 50 + 0.05 t + 8 sin(2π t / 24) + 0.3 ε_t (the core's seeded generator, seed "seasonal trend").
 */
import { Random } from '@weft/core';

/** The first `rows` values of the seasonal, trending series. */
export function seasonalTrend(rows: number): number[] {
  const random = new Random('seasonal trend');
  return Array.from({ length: rows }, (_, t) => 50 + 0.05 * t + 8 * Math.sin((2 * Math.PI * t) / 24) + 0.3 * random.normal());
}

/**
 * A stationary series with a 24-row season and seeded Gaussian noise of known deviation σ = 0.5:
 * y_t = 10 + 2 sin(2π t / 24) + 0.5 ε_t (seed "seasonal noise"); 95% of its noise lies within ±0.98 (1.96 σ).
 */
export function seasonalNoise(rows: number): number[] {
  const random = new Random('seasonal noise');
  return Array.from({ length: rows }, (_, t) => 10 + 2 * Math.sin((2 * Math.PI * t) / 24) + 0.5 * random.normal());
}
