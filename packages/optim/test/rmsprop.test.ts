import { describe, expect, it } from 'vitest';
import { RmsPropRule } from '@weft/optim';
import { parameter, setGradient } from './parameters.js';

// Tieleman & Hinton 2012 (lecture 6.5, from memory): s ← ρs + (1 − ρ)g², θ ← θ − η·g/(√s + ε).
describe('RMSProp', () => {
  it('scales each step by the root of its decaying mean of squares', () => {
    const p = parameter([1]);
    setGradient(p, [2]);
    new RmsPropRule({ rate: 0.01, decay: 0.9, epsilon: 1e-300 }).update([p]); // s = 0.4, step = 0.01·2/√0.4
    expect(p.data[0]).toBeCloseTo(1 - 0.02 / Math.sqrt(0.4), 15);
  });
});
