import { describe, expect, it } from 'vitest';
import { javascriptBackend, tensor } from '@weft/core';
import { BestValidation } from '../../src/training/stopping.js';
import type { ValidationResult } from '@weft/optim';

const result = (loss: number): ValidationResult => ({ loss, metric: 0, metricName: 'meanAbsoluteError', perplexity: loss });

describe('the stopping rule', () => {
  it('keeps the best validation and stops when patience runs out (worked by hand: patience 2)', () => {
    const weights = tensor([1, 2], [2], 'f64');
    const rule = new BestValidation(javascriptBackend, 2);
    const seen: boolean[] = [];
    for (const [step, loss] of [
      [10, 3],
      [20, 2],
      [30, 2.5],
      [40, 2],
    ] as const) {
      weights.data.fill(step);
      seen.push(rule.observe(result(loss), step, [weights]));
    }
    // 3 best; 2 best (its weights copied); 2.5 stale (1); 2 is not lower than 2: stale (2) = patience → stop.
    expect(seen).toEqual([false, false, false, true]);
    expect([rule.loss, rule.step, rule.stale]).toEqual([2, 20, 2]);
    expect(rule.putBack([weights])).toBe(20);
    expect(Array.from(weights.data)).toEqual([20, 20]);
  });

  it('never stops without a patience, and has nothing to put back before a validation', () => {
    const weights = tensor([5], [1], 'f64');
    const rule = new BestValidation(javascriptBackend, undefined);
    expect(rule.putBack([weights])).toBeNull();
    expect([1, 2, 3, 4].map((loss, i) => rule.observe(result(loss), i, [weights]))).toEqual([false, false, false, false]);
    expect(rule.stale).toBe(0);
  });
});
