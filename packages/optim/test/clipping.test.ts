import { describe, expect, it } from 'vitest';
import { gradientNorm, limitGradientNorm, limitGradientValues } from '@weft/optim';
import { parameter, setGradient } from './parameters.js';

describe('gradient clipping', () => {
  it('by global norm matches Pascanu, Mikolov & Bengio 2013, Algorithm 1, on a hand example', () => {
    // ĝ = (3, 4 | 12): ‖ĝ‖ = 13 ≥ threshold 6.5, so ĝ ← (6.5/13)·ĝ = (1.5, 2 | 6).
    const a = parameter([0, 0]);
    const b = parameter([0]);
    setGradient(a, [3, 4]);
    setGradient(b, [12]);
    expect(limitGradientNorm([a, b], 6.5)).toBe(13);
    expect(Array.from(a.gradient!)).toEqual([1.5, 2]);
    expect(Array.from(b.gradient!)).toEqual([6]);
    expect(gradientNorm([a, b])).toBe(6.5);
    // Below the threshold nothing changes.
    expect(limitGradientNorm([a, b], 100)).toBe(6.5);
    expect(Array.from(a.gradient!)).toEqual([1.5, 2]);
  });

  it('by global norm with the norm the caller computed scales by that norm, as without it', () => {
    // Same hand example: gradientNorm gives 13, and handing it over gives the same (1.5, 2 | 6).
    const a = parameter([0, 0]);
    const b = parameter([0]);
    setGradient(a, [3, 4]);
    setGradient(b, [12]);
    const norm = gradientNorm([a, b]);
    expect(norm).toBe(13);
    expect(limitGradientNorm([a, b], 6.5, norm)).toBe(13);
    expect(Array.from(a.gradient!)).toEqual([1.5, 2]);
    expect(Array.from(b.gradient!)).toEqual([6]);
  });

  it('by value limits each entry', () => {
    const a = parameter([0, 0, 0]);
    setGradient(a, [-5, 0.5, 7]);
    expect(limitGradientValues([a], 1)).toBe(2);
    expect(Array.from(a.gradient!)).toEqual([-1, 0.5, 1]);
  });
});
