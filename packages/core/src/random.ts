/**
 * The seeded random-number generator. Every random choice in weft (initial weights, dropout masks, shuffling,
 * sampled gradient-check entries, sampling of outputs) draws from one of these, so the same seed gives the same
 * bits. The underlying generator is seedrandom's Alea; its state is four plain numbers, saved and restored
 * exactly for checkpoints. The generator's code is the package's own, bundled into an ES module at build time
 * (scripts/build-random.mjs), so core has no CommonJS dependency and loads in a browser without a bundler.
 */
import alea from './alea.generated.js';
import { fail } from './errors.js';

/** The generator's state as plain data (safe to put in JSON: every field is an exactly representable number). */
export interface RandomState {
  /** Alea's carry. */
  readonly c: number;
  /** Alea's first state word (a fraction in [0, 1)). */
  readonly s0: number;
  /** Alea's second state word. */
  readonly s1: number;
  /** Alea's third state word. */
  readonly s2: number;
}

type AleaGenerator = ReturnType<typeof alea>;

/** The seeded generator every random choice in weft draws from; same seed, same bits, on every platform. */
export class Random {
  private generator: AleaGenerator;

  constructor(seed: string | number) {
    if (typeof seed === 'number' && !Number.isFinite(seed)) {
      fail('invalid_argument', 'Random.seed', 'a finite number or a string', String(seed));
    }
    this.generator = alea(String(seed), { state: true });
  }

  /** A generator that continues from a saved state. */
  static fromState(state: RandomState): Random {
    const random = new Random(0);
    random.restore(state);
    return random;
  }

  /** Uniform in [0, 1), 53 random bits. */
  uniform(): number {
    return this.generator.double();
  }

  /** Uniform in [low, high). */
  between(low: number, high: number): number {
    return low + (high - low) * this.generator.double();
  }

  /** A whole number in [0, count). */
  integer(count: number): number {
    return Math.floor(this.generator.double() * count);
  }

  /**
   * Standard normal by the Box–Muller transform (Box & Muller 1958). One pair of uniforms per call and no
   * cached spare, so the state is just the generator's.
   */
  normal(): number {
    let u = this.generator.double();
    while (u === 0) u = this.generator.double();
    const v = this.generator.double();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  }

  /** Shuffles in place (Fisher–Yates, Durstenfeld's form). */
  shuffle<T>(items: T[] | Int32Array | Uint32Array): void {
    for (let i = items.length - 1; i > 0; i--) {
      const j = Math.floor(this.generator.double() * (i + 1));
      const held = items[i];
      items[i] = items[j];
      items[j] = held;
    }
  }

  /** The generator's state as plain data, to save in a checkpoint. */
  state(): RandomState {
    const { c, s0, s1, s2 } = this.generator.state();
    return { c, s0, s1, s2 };
  }

  /** Continues from a saved state (each field checked to be a finite number). */
  restore(state: RandomState): void {
    for (const key of ['c', 's0', 's1', 's2'] as const) {
      if (typeof state[key] !== 'number' || !Number.isFinite(state[key])) {
        fail('invalid_argument', `RandomState.${key}`, 'a finite number', String(state[key]));
      }
    }
    this.generator = alea('', { state: { c: state.c, s0: state.s0, s1: state.s1, s2: state.s2 } });
  }
}
