import seedrandom from 'seedrandom';
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';

// The bundled generator (scripts/build-random.mjs) against the seedrandom package itself, loaded the package's own
// way (its CommonJS entry): the external reference for every seeded number in weft.
describe('the bundled generator against the seedrandom package', () => {
  const bits = (value: number) => {
    const view = new DataView(new ArrayBuffer(8));
    view.setFloat64(0, value);
    return view.getBigUint64(0).toString(16);
  };

  it('draws bit-identical doubles for many seeds, numbers and strings alike', () => {
    const seeds = [0, 1, 42, -7, 3.25, 2 ** 40, '', 'greenhouse', 'ünïcode ☃', 'x'.repeat(300)];
    for (const seed of seeds) {
      const ours = new Random(seed);
      const theirs = seedrandom.alea(String(seed), { state: true });
      for (let i = 0; i < 2000; i++) expect(bits(ours.uniform()), `seed ${String(seed)}, draw ${i}`).toBe(bits(theirs.double()));
      expect(ours.state()).toEqual(theirs.state());
    }
  });

  it("keeps the package's state format: a state saved by one continues bit-identically in the other", () => {
    const ours = new Random('handover');
    for (let i = 0; i < 513; i++) ours.normal();
    const theirs = seedrandom.alea('', { state: ours.state() });
    const back = Random.fromState(theirs.state());
    for (let i = 0; i < 1000; i++) expect(bits(back.uniform())).toBe(bits(theirs.double()));
    expect(Object.keys(theirs.state()).sort()).toEqual(['c', 's0', 's1', 's2']);
  });
});

describe('the seeded generator', () => {
  it('gives the same bits for the same seed and different ones for another', () => {
    const draw = (seed: number | string) => {
      const r = new Random(seed);
      return Array.from({ length: 5 }, () => r.uniform());
    };
    expect(draw(1)).toEqual(draw(1));
    expect(draw('1')).toEqual(draw(1));
    expect(draw(2)).not.toEqual(draw(1));
  });

  it('pins its first values for seed 42, so any change of generator shows up', () => {
    const r = new Random(42);
    const first = [r.uniform(), r.uniform(), r.integer(1000)];
    // Values recorded from this implementation (seedrandom 3.0.5 Alea with seed "42"); a change here changes
    // every seeded result in weft.
    expect(first).toEqual(PINNED_42);
  });

  it('resumes exactly from a saved state, through JSON', () => {
    const r = new Random('resume');
    for (let i = 0; i < 17; i++) r.normal();
    const saved = JSON.parse(JSON.stringify(r.state()));
    const expected = Array.from({ length: 10 }, () => r.uniform());
    const resumed = Random.fromState(saved);
    expect(Array.from({ length: 10 }, () => resumed.uniform())).toEqual(expected);
  });

  it('shuffles as a permutation', () => {
    const items = Array.from({ length: 50 }, (_, i) => i);
    new Random(3).shuffle(items);
    expect([...items].sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
    expect(items).not.toEqual(Array.from({ length: 50 }, (_, i) => i));
  });

  it('refuses a bad state naming the field', () => {
    expect(() => Random.fromState({ c: 1, s0: Number.NaN, s1: 0, s2: 0 })).toThrowError(
      'Invalid argument at RandomState.s0: expected a finite number, received NaN',
    );
  });
});

const PINNED_42 = [0.6848634964661496, 0.8455933186223463, 563];
