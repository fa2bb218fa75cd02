import { describe, expect, it } from 'vitest';
import { lossCurveSvg, sparkline } from '@weft/cli';

describe('the loss pictures', () => {
  it('draw a sparkline from highest to lowest bar, averaging buckets', () => {
    // Eight bar heights for nine levels: value v of 0…8 gets bar ⌊v⌋ capped at the eighth, so 7 and 8 share it.
    expect(sparkline([8, 7, 6, 5, 4, 3, 2, 1, 0])).toBe('██▇▆▅▄▃▂▁');
    expect(sparkline([1, 1, 1])).toBe('▁▁▁');
    expect(sparkline([Number.NaN])).toBe('');
    expect(
      sparkline(
        Array.from({ length: 400 }, (_, i) => 400 - i),
        40,
      ),
    ).toHaveLength(40);
  });

  it('draw an SVG with the training line, validation dots and an escaped title', () => {
    const svg = lossCurveSvg(
      [
        { step: 1, loss: 2 },
        { step: 2, loss: 1 },
      ],
      [{ step: 2, loss: 1.5 }],
      'a < b & c',
    );
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg).toContain('a &lt; b &amp; c');
    expect(svg).toMatch(/<polyline [^>]*points="[\d.]+,[\d.]+ [\d.]+,[\d.]+"/);
    expect(svg.match(/<circle /g)).toHaveLength(1);
  });
});

describe("a long run's loss curve", () => {
  it('stays bounded: 58,000 steps draw at most 1,200 line points and 400 dots, and keep the highest spike', async () => {
    const { MAX_DOTS, MAX_PLOTTED, lossCurveSvg, thinPoints } = await import('../src/plot.js');
    const training = Array.from({ length: 58_000 }, (_, i) => ({ step: i + 1, loss: i === 31_337 ? 50 : 1 / Math.sqrt(i + 1) }));
    const validation = Array.from({ length: 5_800 }, (_, i) => ({ step: 10 * (i + 1), loss: 2 / Math.sqrt(i + 1) }));
    const thinned = thinPoints(training);
    expect(thinned.length).toBeLessThanOrEqual(MAX_PLOTTED);
    expect(thinned.some((p) => p.loss === 50)).toBe(true);
    expect(thinned.every((p, i) => i === 0 || p.step > thinned[i - 1].step)).toBe(true);
    const svg = lossCurveSvg(training, validation, 'long run');
    expect((svg.match(/<circle /g) ?? []).length).toBeLessThanOrEqual(MAX_DOTS);
    expect(svg.length).toBeLessThan(64 * 1024);
  });
});

describe("the loss curve's scales", () => {
  it('ticks at round values: 1, 2 or 5 times a power of ten, and each decade of a log scale', async () => {
    const { logTicks, roundTicks } = await import('../src/plot.js');
    expect(roundTicks(0, 1)).toEqual([0, 0.2, 0.4, 0.6, 0.8, 1]);
    expect(roundTicks(0, 58_000, 6)).toEqual([0, 10_000, 20_000, 30_000, 40_000, 50_000]);
    expect(roundTicks(0.0031, 0.0097)).toEqual([0.004, 0.006, 0.008]);
    expect(logTicks(0.05, 5)).toEqual([0.05, 0.1, 0.2, 0.5, 1, 2, 5]);
    expect(logTicks(1e-4, 10)).toEqual([1e-4, 1e-3, 0.01, 0.1, 1, 10]);
  });

  it('smooths the training loss by a centred moving mean (mathjs mean of each window)', async () => {
    const { mean } = await import('mathjs');
    const { smoothed } = await import('../src/plot.js');
    const losses = [5, 1, 4, 1, 5, 9, 2, 6];
    const line = smoothed(
      losses.map((loss, i) => ({ step: i + 1, loss })),
      1,
    );
    expect(line.map((p) => p.step)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    line.forEach((p, i) => expect(p.loss).toBeCloseTo(mean(losses.slice(Math.max(0, i - 1), i + 2)) as number, 12));
    // A long run is drawn with at most MAX_PLOTTED smoothed points.
    const { MAX_PLOTTED } = await import('../src/plot.js');
    expect(smoothed(Array.from({ length: 58_000 }, (_, i) => ({ step: i + 1, loss: 1 }))).length).toBeLessThanOrEqual(MAX_PLOTTED);
  });
});
