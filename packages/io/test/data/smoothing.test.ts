/**
 * Exponential smoothing (data/smoothing.ts) against the component-form equations of Hyndman, Koehler, Ord &
 * Snyder, "Forecasting with Exponential Smoothing" (2008), Table 2.1: values worked by hand from those equations
 * (not copied from a published table), and properties that pin each method: α = 1 simple smoothing is the naive
 * forecast; Holt's method reproduces a noiseless line, and Holt–Winters a noiseless line plus a repeating season,
 * exactly; the damped trend with φ = 1 is Holt's method. One published worked value: NIST/SEMATECH e-Handbook of
 * Statistical Methods, §6.4.3.2 ("Forecasting with Single Exponential Smoothing", bootstrapping example): with
 * α = 0.1 on the twelve points of §6.4.3.1's example, the forecast of the last point, 70, "was 71.7". The twelve
 * points (71, 70, 69, 68, 64, 65, 72, 78, 75, 75, 75, 70) are from memory; that they give the published 71.7
 * supports the recall.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { fitSmoothing, runSmoothing } from '@weft/io';
import { SmoothingStepper, initialStates, oneStepError } from '@weft/io/internal';
import type { SmoothingParameters } from '@weft/io';

const base = { beta: 0, gamma: 0, phi: 1, trend: 0, seasonal: [] as number[], season: 1 };

describe('exponential smoothing', () => {
  it('works simple smoothing by hand: α ½ on 10, 12, 11', () => {
    // ℓ₋₁ = 10; forecasts 10, 10, 11; errors 0, 2, 0 → mean square 4/3; the last level 11.
    const p: SmoothingParameters = { ...base, method: 'simple', alpha: 0.5, level: 10 };
    const out = new Float64Array(3);
    expect(runSmoothing([10, 12, 11], 3, p, 1, out)).toBe(4 / 3);
    expect([...out]).toEqual([10, 11, 11]);
  });

  it("works Holt's method by hand: α ½, β ½ on 1, 3, 4, 8", () => {
    // b₋₁ = 2, ℓ₋₁ = −1; forecasts 1, 3, 5, 6.25; errors 0, 0, −1, 1.75; ℓ₃ = 7.125, b₃ = 2.1875.
    const states = initialStates([1, 3, 4, 8], 'holt', 1)!;
    expect(states).toEqual({ level: -1, trend: 2, seasonal: [] });
    const p: SmoothingParameters = { ...base, ...states, method: 'holt', alpha: 0.5, beta: 0.5 };
    const one = new Float64Array(4);
    expect(runSmoothing([1, 3, 4, 8], 4, p, 1, one)).toBe((1 + 1.75 ** 2) / 4);
    expect(one[3]).toBe(7.125 + 2.1875);
    const two = new Float64Array(4);
    runSmoothing([1, 3, 4, 8], 4, p, 2, two);
    expect(two[3]).toBe(7.125 + 2 * 2.1875);
  });

  it("forecasts the last point of the NIST handbook's example as 71.7 with α 0.1", () => {
    const points = [71, 70, 69, 68, 64, 65, 72, 78, 75, 75, 75, 70];
    const out = new Float64Array(12);
    runSmoothing(points, 12, { ...base, method: 'simple', alpha: 0.1, level: points[0] }, 1, out);
    // out[10] is the forecast made at the eleventh point of the twelfth (NIST's S₁₂, starting from S₂ = y₁).
    expect(out[10].toFixed(1)).toBe('71.7');
    expect(out[10]).toBeCloseTo(71.6653, 4);
  });

  it('is the naive forecast when simple smoothing has α = 1', () => {
    const random = new Random('naive');
    const series = Array.from({ length: 40 }, () => random.normal());
    const out = new Float64Array(40);
    runSmoothing(series, 40, { ...base, method: 'simple', alpha: 1, level: series[0] }, 3, out);
    series.forEach((v, t) => expect(out[t]).toBe(v));
  });

  it("reproduces a noiseless line with Holt's method, whatever the fitted parameters", () => {
    const line = Array.from({ length: 60 }, (_, t) => 5 + 0.75 * t);
    const fit = fitSmoothing(line, 50, 'holt')!;
    expect(fit.meanSquaredError).toBeLessThan(1e-24);
    const out = new Float64Array(60);
    runSmoothing(line, 50, fit, 4, out);
    for (let t = 0; t + 4 < 60; t++) expect(Math.abs(out[t] - line[t + 4])).toBeLessThan(1e-10);
  });

  it('reproduces a noiseless line plus a repeating season with additive Holt–Winters', () => {
    const shape = [3, -1, 0.5, -2.5, 4, -4];
    const series = Array.from({ length: 96 }, (_, t) => 20 + 0.3 * t + shape[t % 6]);
    const fit = fitSmoothing(series, 72, 'additive', 6)!;
    expect(fit.meanSquaredError).toBeLessThan(1e-20);
    const out = new Float64Array(96);
    runSmoothing(series, 72, fit, 7, out);
    for (let t = 0; t + 7 < 96; t++) expect(Math.abs(out[t] - series[t + 7])).toBeLessThan(1e-9);
  });

  it('reproduces a level times a repeating season with multiplicative Holt–Winters', () => {
    const shape = [1.2, 0.9, 1.1, 0.8];
    const series = Array.from({ length: 48 }, (_, t) => 50 * shape[t % 4]);
    const fit = fitSmoothing(series, 40, 'multiplicative', 4)!;
    expect(fit.meanSquaredError).toBeLessThan(1e-20);
    const out = new Float64Array(48);
    runSmoothing(series, 40, fit, 1, out);
    for (let t = 0; t + 1 < 48; t++) expect(Math.abs(out[t] - series[t + 1])).toBeLessThan(1e-9);
  });

  it('refuses the multiplicative form on values that are not all positive', () => {
    expect(fitSmoothing([1, 2, -1, 3, 2, 1, 4, 2], 8, 'multiplicative', 2)).toBeNull();
  });

  it("is Holt's method when the damped trend has φ = 1", () => {
    const random = new Random('damped');
    const series = Array.from({ length: 50 }, (_, t) => t + 3 * random.normal());
    const states = initialStates(series, 'holt', 1)!;
    const holt = new Float64Array(50);
    const damped = new Float64Array(50);
    const p = { ...base, ...states, alpha: 0.4, beta: 0.2 };
    const a = runSmoothing(series, 50, { ...p, method: 'holt' }, 3, holt);
    const b = runSmoothing(series, 50, { ...p, method: 'damped', phi: 1 }, 3, damped);
    expect(b).toBe(a);
    expect([...damped]).toEqual([...holt]);
  });

  it('fits a damped trend with φ inside [0.8, 0.98] and α, β inside their bounds', () => {
    const random = new Random('bounds');
    const series = Array.from({ length: 80 }, (_, t) => 10 * Math.log(1 + t) + random.normal());
    const fit = fitSmoothing(series, 80, 'damped')!;
    expect(fit.phi).toBeGreaterThanOrEqual(0.8);
    expect(fit.phi).toBeLessThanOrEqual(0.98);
    for (const v of [fit.alpha, fit.beta]) expect(v > 0 && v < 1).toBe(true);
  });

  it('gives the same one-step error in the fitting loops as in the forecasting loop, to the bit, for every form', () => {
    const random = new Random('loops');
    const series = Array.from({ length: 200 }, (_, t) => 30 + 0.1 * t + 4 * Math.sin(t / 2) + random.normal());
    for (const method of ['simple', 'holt', 'damped', 'additive', 'multiplicative'] as const) {
      const fit = fitSmoothing(series, 150, method, 12)!;
      expect(oneStepError(series, 150, fit)).toBe(runSmoothing(series, 150, fit, 1, new Float64Array(200)));
    }
  });

  it('steps one row at a time to the same bits as the forecasting loop, for every form and 3 rows ahead', () => {
    const random = new Random('stepper');
    const series = Array.from({ length: 120 }, (_, t) => 30 + 0.1 * t + 4 * Math.sin(t / 2) + random.normal());
    for (const method of ['simple', 'holt', 'damped', 'additive', 'multiplicative'] as const) {
      const fit = fitSmoothing(series, 100, method, 12)!;
      const whole = new Float64Array(120);
      runSmoothing(series, 100, fit, 3, whole);
      const stepper = new SmoothingStepper(fit, 3);
      series.forEach((y, t) => expect(stepper.next(y)).toBe(whole[t]));
    }
  });

  it('writes the forecasts of every row ahead at each row, the bits of the forecasting loop run once per row ahead', () => {
    const random = new Random('stepper rows ahead');
    const series = Float64Array.from({ length: 120 }, (_, t) => 30 + 0.1 * t + 4 * Math.sin(t / 2) + random.normal());
    for (const method of ['simple', 'holt', 'damped', 'additive', 'multiplicative'] as const) {
      const fit = fitSmoothing(series, 100, method, 12)!;
      const wholes = [1, 2, 5].map((h) => {
        const whole = new Float64Array(120);
        runSmoothing(series, 100, fit, h, whole);
        return whole;
      });
      const stepper = new SmoothingStepper(fit);
      const into = new Float64Array(4);
      for (let t = 0; t < 120; t++) {
        stepper.nextFrom(series, t, [1, 2, 5], into, 1);
        expect([into[1], into[2], into[3]]).toEqual(wholes.map((w) => w[t]));
        expect(stepper.ahead(2)).toBe(wholes[1][t]);
      }
    }
  });

  it('moves on as its own forecast at a missing value: the forecast made there is the one made a row before, one row farther, for every form', () => {
    // The state-space form with a missing observation (HKOS 2008, from memory): no error, no update, the forecast
    // of every later row unchanged.
    const random = new Random('gap');
    const series = Array.from({ length: 80 }, (_, t) => 30 + 0.1 * t + 4 * Math.sin((2 * Math.PI * t) / 12) + random.normal());
    for (const method of ['simple', 'holt', 'damped', 'additive', 'multiplicative'] as const) {
      const fit = fitSmoothing(series, 60, method, 12)!;
      const before = new SmoothingStepper(fit, 3);
      const gappy = new SmoothingStepper(fit, 2);
      for (let t = 0; t < 40; t++) {
        const made = before.next(series[t]);
        gappy.next(series[t]);
        if (t === 39) expect(gappy.next(NaN)).toBeCloseTo(made, 10);
      }
    }
  });

  it('fits and scores over the values present when some are missing, never reading the gaps', () => {
    const random = new Random('gaps fit');
    const series = Array.from({ length: 120 }, (_, t) => 30 + 0.1 * t + 4 * Math.sin((2 * Math.PI * t) / 12) + random.normal());
    const gappy = series.map((v, t) => (t % 9 === 4 ? NaN : v));
    for (const method of ['simple', 'holt', 'damped', 'additive', 'multiplicative'] as const) {
      const fit = fitSmoothing(gappy, 100, method, 12)!;
      const error = oneStepError(gappy, 100, fit);
      expect(Number.isFinite(error)).toBe(true);
      expect(error).toBe(runSmoothing(gappy, 100, fit, 1, new Float64Array(120)));
      // A forecast at every row, gaps included.
      const forecasts = new Float64Array(120);
      runSmoothing(gappy, 100, fit, 1, forecasts);
      expect(forecasts.every((f) => Number.isFinite(f))).toBe(true);
    }
  });
});
