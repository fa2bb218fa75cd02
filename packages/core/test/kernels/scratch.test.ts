import { describe, expect, it } from 'vitest';
import { SCRATCH_LEFT, SCRATCH_RIGHT, scratch } from '../../src/kernels/scratch.js';

describe("the kernels' scratch memory", () => {
  it('grows a slot by doubling to the largest size asked and hands the same array back after that', () => {
    const first = scratch(SCRATCH_LEFT, 100);
    expect(first).toBeInstanceOf(Float64Array);
    expect(first.length).toBeGreaterThanOrEqual(100);
    expect(scratch(SCRATCH_LEFT, 50)).toBe(first);
    const grown = scratch(SCRATCH_LEFT, first.length + 1);
    expect(grown.length).toBe(first.length * 2);
    expect(scratch(SCRATCH_LEFT, 10)).toBe(grown);
  });

  it('keeps its two slots apart', () => {
    expect(scratch(SCRATCH_RIGHT, 8)).not.toBe(scratch(SCRATCH_LEFT, 8));
  });
});
