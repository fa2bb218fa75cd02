/**
 * Fitting every forecasting baseline on a long series: 100,000 hourly rows (a rising line, a 24-row season and
 * seeded noise), the last tenth scored, the season chosen from the time column's spacing (24 and 168 tried). One
 * call is `forecastBaselines`: naive, seasonal naive, the five smoothing methods fitted by Nelder–Mead, Theta with
 * its seasonal test and decomposition, and the least-squares fit, each run over every row. Reported in seconds per
 * call; plain JavaScript by nature (no kernels), so measured on the default backend only.
 *
 * Decision these numbers led to: the smoothing fits are capped at 60 evaluations per parameter (Nelder–Mead from
 * small α, β, γ), which keeps the whole set under a second on 100,000 rows on this 2-core machine.
 */
import { Random } from '@weft/core';
import { forecastBaselines } from '@weft/io';
import type { BenchCase } from './harness.js';

const ROWS = 100_000;

export const cases: BenchCase[] = [
  {
    id: 'baselines.forecast.100k',
    unit: 's',
    defaultOnly: true,
    setup: () => {
      const random = new Random('baselines bench');
      const values = Array.from({ length: ROWS }, (_, t) => [50 + 0.0005 * t + 5 * Math.sin((2 * Math.PI * t) / 24) + random.normal()]);
      const fitRows = ROWS - ROWS / 10;
      const positions = Array.from({ length: ROWS / 10 }, (_, i) => fitRows - 1 + i);
      return () => {
        forecastBaselines({ values, targets: [0], horizon: 1, fitRows, positions }, { spacing: { unit: 'hours', seasons: [24, 168] } });
      };
    },
    value: (callsPerSecond) => 1 / callsPerSecond,
  },
];
