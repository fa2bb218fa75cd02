/**
 * A series as long streams (series-streams.ts, through prepareSeries): values normalised by each column's training
 * mean and population deviation (mathjs, a general-purpose reference library, gives both); a transform's changes
 * as targets; forecasts that are exactly right score 0 against the baselines; missing inputs carried and flagged,
 * missing targets weighed 0 and never scored.
 */
import { describe, expect, it } from 'vitest';
import { mean, std } from 'mathjs';
import { prepareSeries } from '@weft/io';
import type { SeriesStreams } from '@weft/io';

const options = { window: 8, lookback: 0, streams: 4, validationShare: 0.1, testShare: 0.1, horizon: 1, seed: '1' };
const table = (rows: number) =>
  `level,flow\n${Array.from({ length: rows }, (_, t) => `${(20 + 0.01 * t + Math.sin(t / 5)).toFixed(5)},${(3 + Math.cos(t / 7)).toFixed(5)}`).join('\n')}\n`;

describe('a series as streams', () => {
  it("normalises a stream by the training rows' mean and deviation, and scores exact forecasts as 0", () => {
    const prepared = prepareSeries(table(400), 's.csv', { ...options, examples: 'streams', targets: ['level'] });
    const streams = prepared.examples as SeriesStreams;
    expect([streams.trainEnd, streams.testStart, streams.rows]).toEqual([320, 360, 400]);
    const level = Array.from({ length: 400 }, (_, t) => Number((20 + 0.01 * t + Math.sin(t / 5)).toFixed(5)));
    const m = mean(level.slice(0, 320)) as number;
    const d = std(level.slice(0, 320), 'uncorrected') as number;
    expect(streams.values[2 * 7]).toBeCloseTo((level[7] - m) / d, 12);
    expect(streams.targets).toEqual({ columns: [0] });
    // The forecast made at row t of row t + 1 is the output at t; exactly right outputs are next rows' values.
    const exact = level.slice(1).map((v) => (v - m) / d);
    expect(prepared.heldOut(exact, 1).model.value).toBeCloseTo(0, 9);
    expect(prepared.validationFigure(exact.slice(0, 359), 1)).toBeCloseTo(0, 9);
    expect(prepared.heldOut(exact, 1).baselines.every((b) => b.value > 0)).toBe(true);
  });

  it("gives a transform's normalised changes as the targets of a stream", () => {
    const prepared = prepareSeries(table(400), 's.csv', { ...options, transform: 'differences', targets: ['level'] });
    const streams = prepared.examples as SeriesStreams;
    const level = Array.from({ length: 400 }, (_, t) => Number((20 + 0.01 * t + Math.sin(t / 5)).toFixed(5)));
    const changes = level.slice(1, 320).map((v, t) => v - level[t]);
    const m = mean(changes) as number;
    const d = std(changes, 'uncorrected') as number;
    expect('values' in streams.targets).toBe(true);
    const targets = streams.targets as { values: number[]; width: number };
    expect(targets.width).toBe(1);
    expect(targets.values[10]).toBeCloseTo((level[10] - level[9] - m) / d, 12);
  });

  it("carries a stream's missing inputs from the last value with a flag each, weighs a missing target 0, and scores only observed rows", () => {
    const level = Array.from({ length: 400 }, (_, t) => Number((20 + 0.01 * t + Math.sin(t / 5)).toFixed(5)));
    const gone = (t: number) => t % 17 === 5;
    const text = `level\n${level.map((v, t) => (gone(t) ? 'NA' : v)).join('\n')}\n`;
    const prepared = prepareSeries(text, 'g.csv', { ...options, examples: 'streams' });
    const streams = prepared.examples as SeriesStreams;
    // One column and its flag per row.
    expect(streams.features).toBe(2);
    const observed = level.slice(0, 320).filter((_, t) => !gone(t));
    const m = mean(observed) as number;
    const d = std(observed, 'uncorrected') as number;
    // Row 5 is missing: it carries row 4's value, flagged 1; row 6 is read as it is, flagged 0.
    expect(streams.values[2 * 5]).toBeCloseTo((level[4] - m) / d, 12);
    expect(streams.values[2 * 5 + 1]).toBe(1);
    expect(streams.values[2 * 6 + 1]).toBe(0);
    expect(streams.targetWeights?.slice(4, 7)).toEqual([1, 0, 1]);
    expect(prepared.metadata.missing).toMatchObject({ rule: 'carry', flagged: [0] });
    // Exactly right outputs score 0 on the observed rows; the rows never observed are not counted.
    const exact = level.slice(1).map((v) => (v - m) / d);
    const report = prepared.heldOut(
      exact.map((v, t) => (gone(t + 1) ? 1e12 : v)),
      1,
    );
    expect(report.model.value).toBeCloseTo(0, 9);
    const scored = Array.from({ length: 40 }, (_, i) => 360 + i).filter((t) => !gone(t)).length;
    expect(report.model.overall?.count).toBe(scored);
    expect(() => prepareSeries(text, 'g.csv', { ...options, transform: 'differences' })).toThrowError(
      'Invalid option at --transform: expected none for a series with missing readings',
    );
  });
});
