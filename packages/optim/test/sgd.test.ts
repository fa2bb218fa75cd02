import { describe, expect, it } from 'vitest';
import { SgdRule } from '@weft/optim';
import { parameter, setGradient } from './parameters.js';

describe('SGD', () => {
  it('follows its update rule with momentum and with Nesterov momentum', () => {
    const p = parameter([1]);
    const sgd = new SgdRule({ rate: 0.1, momentum: 0.9 });
    setGradient(p, [2]);
    sgd.update([p]); // v = 2, θ = 1 − 0.2
    setGradient(p, [1]);
    sgd.update([p]); // v = 1.8 + 1 = 2.8, θ = 0.8 − 0.28
    expect(p.data[0]).toBeCloseTo(0.52, 15);
    const q = parameter([1]);
    const nesterov = new SgdRule({ rate: 0.1, momentum: 0.9, nesterov: true });
    setGradient(q, [2]);
    nesterov.update([q]); // v = 2, step = 0.1·(2 + 0.9·2) = 0.38
    expect(q.data[0]).toBeCloseTo(0.62, 15);
  });
});
