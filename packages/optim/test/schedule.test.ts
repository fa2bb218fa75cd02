import { describe, expect, it } from 'vitest';
import { scheduleFactor } from '@weft/optim';

describe('learning-rate schedules', () => {
  it('warm up linearly, then follow their formula', () => {
    expect([0, 1, 2, 3, 10].map((t) => scheduleFactor({ kind: 'constant', warmup: 4 }, t))).toEqual([0.25, 0.5, 0.75, 1, 1]);
    expect([0, 9, 10, 25].map((t) => scheduleFactor({ kind: 'step', every: 10, factor: 0.5 }, t))).toEqual([1, 1, 0.5, 0.25]);
    expect(scheduleFactor({ kind: 'exponential', every: 10, factor: 0.5 }, 5)).toBeCloseTo(Math.SQRT1_2, 15);
  });

  it('cosine falls from 1 to the floor over its span (Loshchilov & Hutter 2017, eq. 5)', () => {
    const schedule = { kind: 'cosine', total: 102, warmup: 2, floor: 0.1 } as const;
    expect(scheduleFactor(schedule, 1)).toBe(1);
    expect(scheduleFactor(schedule, 2)).toBe(1);
    expect(scheduleFactor(schedule, 52)).toBeCloseTo(0.55, 15);
    expect(scheduleFactor(schedule, 102)).toBeCloseTo(0.1, 15);
    expect(scheduleFactor(schedule, 500)).toBeCloseTo(0.1, 15);
  });
});
