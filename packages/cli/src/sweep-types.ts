/** A sweep's combinations and rows (sweep.ts), as types. */
import type { RunResults } from './results.js';
/** One combination of the grid. */
export interface Combination {
  /** Its place in the grid's fixed order. */
  readonly index: number;
  /** The data file as the grid names it (relative to the grid file unless absolute). */
  readonly data: string;
  /** The data file's path from here. */
  readonly path: string;
  /** Flag values by name. */
  readonly flags: Readonly<Record<string, string | number | boolean>>;
}

/** A combination with what its training gave (or the error that ended it). */
export interface SweepRow extends Combination {
  /** The run's results, or null when it failed. */
  readonly results: RunResults | null;
  /** Why it failed (the command's error line), or null. */
  readonly error: string | null;
}
