/**
 * The forecast picture (forecast-plot.ts): the band is a polygon through the intervals' upper ends and back through
 * their lower ends (SVG 1.1 `polygon` and `polyline` points, W3C), a missing value breaks a line, each series is drawn
 * on its own scale with its count of values inside the band, and a long input keeps only its last rows; the
 * recorder puts each forecast at the row it is for. Coordinates are worked by hand from the picture's layout.
 */
import { describe, expect, it } from 'vitest';
import { MAX_PLOTTED_ROWS, TraceRecorder, forecastSvg } from '../src/forecast-plot.js';

describe('the forecast picture', () => {
  it('draws the values, the forecasts and a band through the upper ends and back through the lower ends', () => {
    const svg = forecastSvg([{ title: 'heat', actual: [1, 2, 3], forecast: [NaN, 2, 2], low: [NaN, 1, 1], high: [NaN, 3, 3] }], 'a < b', 0.9);
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg" width="900" height="256"')).toBe(true);
    expect(svg).toContain('a &lt; b');
    expect(svg).toContain('heat: 2 of 2 values inside the band');
    expect(svg).toContain('■ 90% prediction intervals');
    // One series: x from 56 to 886 over 3 rows (56, 471, 886); y from 206 (value 1) to 54 (value 3).
    expect(svg).toContain('<polygon fill="#9ec5ea" fill-opacity="0.55" stroke="none" points="471.0,54.0 886.0,54.0 886.0,206.0 471.0,206.0"/>');
    expect(svg).toContain('<polyline fill="none" stroke="#555" stroke-width="1.6" points="56.0,206.0 471.0,130.0 886.0,54.0"/>');
    expect(svg).toContain('<polyline fill="none" stroke="#c0392b" stroke-width="1.3" points="471.0,130.0 886.0,130.0"/>');
  });

  it('breaks a line at a missing value, draws several series two to a row on their own scales, and names no band without intervals', () => {
    const trace = (title: string, scale: number) => ({
      title,
      actual: [1, NaN, 3, 4].map((v) => v * scale),
      forecast: [NaN, NaN, NaN, NaN],
      low: [NaN, NaN, NaN, NaN],
      high: [NaN, NaN, NaN, NaN],
    });
    const svg = forecastSvg([trace('north', 1), trace('south', 1000), trace('east', 5)], 'three', null);
    expect(svg).toContain('width="900" height="456"');
    expect(svg.match(/<polyline fill="none" stroke="#555"/g)).toHaveLength(6);
    expect(svg).toContain('>4000<');
    expect(svg).not.toContain('prediction intervals');
    expect(svg).not.toContain('<polygon');
  });

  it("keeps a long series' last rows, and places each forecast at the row it is for", () => {
    const recorder = new TraceRecorder('level', 2);
    for (let row = 0; row < 1000; row++) recorder.add(row, row, row + 2, 0.5);
    const trace = recorder.trace();
    // The forecast made at row 997 is for row 999; the one made at 999 for row 1001, past the last value.
    const last = trace.actual.length - 1;
    expect(trace.actual[last - 2]).toBe(999);
    expect(trace.forecast[last - 2]).toBe(999);
    expect(trace.forecast[last]).toBe(1001);
    expect(trace.low[last]).toBe(1000.5);
    expect(trace.actual.length).toBeLessThanOrEqual(2 * MAX_PLOTTED_ROWS + 3);
    const svg = forecastSvg([trace], 'long', 0.95);
    expect(svg).toContain(`level (last ${MAX_PLOTTED_ROWS} rows)`);
    expect(svg.length).toBeLessThan(64 * 1024);
  });
});
