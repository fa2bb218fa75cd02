import { describe, expect, it } from 'vitest';
import { lossCurveSvg, sparkline } from '@weft/cli';

describe('the loss pictures', () => {
  it('draw a sparkline from highest to lowest bar, averaging buckets', () => {
    // Eight bar heights for nine levels: value v of 0…8 gets bar ⌊v⌋ capped at the eighth, so 7 and 8 share it.
    expect(sparkline([8, 7, 6, 5, 4, 3, 2, 1, 0])).toBe('██▇▆▅▄▃▂▁');
    expect(sparkline([1, 1, 1])).toBe('▁▁▁');
    expect(sparkline([Number.NaN])).toBe('');
    expect(sparkline(Array.from({ length: 400 }, (_, i) => 400 - i), 40)).toHaveLength(40);
  });

  it('draw an SVG with the training line, validation dots and an escaped title', () => {
    const svg = lossCurveSvg([{ step: 1, loss: 2 }, { step: 2, loss: 1 }], [{ step: 2, loss: 1.5 }], 'a < b & c');
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg).toContain('a &lt; b &amp; c');
    expect(svg).toMatch(/<polyline [^>]*points="[\d.]+,[\d.]+ [\d.]+,[\d.]+"/);
    expect(svg.match(/<circle /g)).toHaveLength(1);
  });
});

describe('a long run\'s loss curve', () => {
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
