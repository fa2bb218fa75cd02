/**
 * The Theta method (data/theta.ts) in Hyndman & Billah's form ("Unmasking the Theta method", IJF 19, 2003):
 * simple smoothing plus half the slope of the least-squares line as drift. Checked against the formula worked
 * here from simple smoothing's own forecasts, on a line (where the half drift gives y_t + b·h/2 at α = 1, the
 * method's known damping of a trend: measured, not a flaw of ours), and the seasonal adjustment on a multiplicative
 * seasonal series (the M4 benchmarks' rule, Makridakis, Spiliotis & Assimakopoulos 2020).
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { fitSmoothing, runSmoothing, thetaForecasts } from '@weft/io';
import { lineSlope } from '@weft/io/internal';

describe('the Theta method', () => {
  it("adds half the trend line's slope as drift to simple smoothing, as Hyndman & Billah write it", () => {
    const random = new Random('theta');
    const series = Array.from({ length: 60 }, (_, t) => 100 + 0.8 * t + 2 * random.normal());
    const theta = thetaForecasts(series, 50, 3, null)!;
    const fit = fitSmoothing(series, 50, 'simple')!;
    const ses = new Float64Array(60);
    runSmoothing(series, 50, fit, 3, ses);
    const b = lineSlope(series, 50);
    expect(theta.slope).toBe(b);
    expect(theta.adjustment).toBeNull();
    for (const t of [10, 49, 56]) {
      const expected = ses[t] + (b / 2) * (3 - 1 + (1 - (1 - fit.alpha) ** (t + 1)) / fit.alpha);
      expect(theta.forecasts[t]).toBeCloseTo(expected, 10);
    }
  });

  it('forecasts a straight line h rows ahead as its value now plus half the slope times h', () => {
    const line = Array.from({ length: 50 }, (_, t) => 3 + 2 * t);
    const theta = thetaForecasts(line, 40, 5, null)!;
    expect(theta.slope).toBeCloseTo(2, 12);
    // α runs to its upper bound 0.9999 on a line: the level is the value now (to 1e-3), the drift b·h/2.
    expect(Math.abs(theta.forecasts[39] - (line[39] + 5))).toBeLessThan(1e-3);
  });

  it('takes a season out multiplicatively when the 90% test finds it, and puts it back', () => {
    const shape = [1.3, 0.8, 1.1, 0.8];
    const random = new Random('theta season');
    const series = Array.from({ length: 80 }, (_, t) => (40 + 0.5 * t) * shape[t % 4] * (1 + 0.01 * random.normal()));
    const seasonal = thetaForecasts(series, 64, 1, 4)!;
    const plain = thetaForecasts(series, 64, 1, null)!;
    expect(seasonal.adjustment).toBe('multiplicative');
    let a = 0;
    let b = 0;
    for (let t = 63; t < 79; t++) {
      a += Math.abs(seasonal.forecasts[t] - series[t + 1]);
      b += Math.abs(plain.forecasts[t] - series[t + 1]);
    }
    expect(a).toBeLessThan(0.25 * b);
  });
});
