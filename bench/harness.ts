/**
 * The benchmark harness: runs cases with the `benchmark` package and writes the results file described in the
 * design notes ({ node, cpus, when, results: { id: { value, unit } } }). Each bench module exports its cases; a
 * case turns the measured rate (calls per second) into its reported value. Derived results (ratios between two
 * measurements) are computed from the same run.
 */
import Benchmark from 'benchmark';
import type { Backend } from '@weft/core';

export interface BenchCase {
  /** Dotted lower-case id, as named in the issue that asked for it. */
  readonly id: string;
  readonly unit: string;
  /**
   * Builds the timed function (all allocation happens here, outside the timing) on `backend`, which is also the
   * default backend while it runs; may be async.
   */
  readonly setup: (backend: Backend) => (() => void) | Promise<() => void>;
  /**
   * For work that is asynchronous (steps on worker threads): measures itself for about `seconds` after its own
   * warm-up and returns calls per second; `setup` is then not called.
   */
  readonly measureAsync?: (backend: Backend, seconds: number) => Promise<number>;
  /** Measured on the default backend only (no `.js` twin): for cases that are JavaScript by nature. */
  readonly defaultOnly?: boolean;
  /** Turns calls per second into the reported value. */
  readonly value: (callsPerSecond: number) => number;
}

export interface BenchResult {
  readonly value: number;
  readonly unit: string;
  /** Relative margin of error of the underlying rate, in percent (from the benchmark package). */
  readonly marginPercent?: number;
}

export type Derived = (results: Record<string, BenchResult>) => Record<string, BenchResult>;

export async function measure(item: BenchCase, maxTime: number, backend: Backend): Promise<BenchResult> {
  if (item.measureAsync !== undefined) return { value: round(item.value(await item.measureAsync(backend, maxTime))), unit: item.unit };
  const fn = await item.setup(backend);
  for (let i = 0; i < 3; i++) fn(); // warm-up outside the timing
  const bench = new Benchmark(item.id, fn, { maxTime, minSamples: 5 });
  bench.run({ async: false });
  if (bench.error !== undefined && bench.error !== null) throw bench.error as unknown as Error;
  const hz = bench.hz;
  return { value: round(item.value(hz)), unit: item.unit, marginPercent: round(bench.stats.rme) };
}

export function round(value: number): number {
  return Number(value.toPrecision(4));
}
