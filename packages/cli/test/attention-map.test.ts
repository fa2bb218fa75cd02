import { describe, expect, it } from 'vitest';
import { attentionMapSvg } from '../src/attention-map.js';

describe('the attention map', () => {
  it('draws one cell per output step and source position, shaded by its weight, with every token escaped', () => {
    const svg = attentionMapSvg(['2', '0', '<b>'], ['x', 'y'], [1, 0, 0, 0.25, 0.25, 0.5], 'dates & "times"');
    expect(svg.startsWith('<svg xmlns="http://www.w3.org/2000/svg"')).toBe(true);
    expect(svg.match(/<rect /g)).toHaveLength(6);
    // Weight 1 is the darkest shade, 0 white, 0.5 half way (255 · (1 − w)).
    expect(svg).toContain('fill="rgb(0,0,255)" stroke="#ddd"><title>x ← 2: 1.000</title>');
    expect(svg).toContain('fill="rgb(255,255,255)" stroke="#ddd"><title>x ← 0: 0.000</title>');
    expect(svg).toContain('fill="rgb(128,128,255)" stroke="#ddd"><title>y ← &lt;b&gt;: 0.500</title>');
    expect(svg).toContain('<title>dates &amp; &quot;times&quot;</title>');
    expect(svg).not.toContain('<b>');
  });

  it('refuses weights that do not match the tokens', () => {
    expect(() => attentionMapSvg(['a'], ['b', 'c'], [1], 't')).toThrowError('attention map: 2 × 1 weights expected, 1 given');
  });
});
