import { describe, expect, it } from 'vitest';
import { AdagradRule } from '@weft/optim';
import { parameter, setGradient } from './parameters.js';

// Duchi, Hazan & Singer 2011: s ← s + g², θ ← θ − η·g/(√s + ε).
describe('Adagrad', () => {
  it('scales each step by the root of its accumulated squares', () => {
    const q = parameter([1]);
    const adagrad = new AdagradRule({ rate: 0.5, epsilon: 1e-300 });
    setGradient(q, [3]);
    adagrad.update([q]); // s = 9, step = 0.5
    setGradient(q, [4]);
    adagrad.update([q]); // s = 25, step = 0.5·4/5 = 0.4
    expect(q.data[0]).toBeCloseTo(1 - 0.5 - 0.4, 15);
  });
});
