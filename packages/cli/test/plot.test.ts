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
