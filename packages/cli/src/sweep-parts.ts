/**
 * What a sweep reads back, trusted only once checked: part files and finished combinations carry the grid's digest,
 * and every row must match its combination and look as weft train writes results; a training a sweep started ends
 * itself when the sweep is gone.
 */
import { readFileSync } from 'node:fs';
import { sha256Hex } from '@weft/io/internal';
import { CommandError } from './errors.js';
import type { RunResults } from './results.js';
import type { Combination, SweepRow } from './sweep-types.js';
import { shown } from './terminal.js';

/** The grid's digest: SHA-256 of its combinations in order (data file and flags), so parts of another grid are known. */
export async function gridDigest(all: readonly Combination[]): Promise<string> {
  return sha256Hex(new TextEncoder().encode(JSON.stringify(all.map((c) => [c.index, c.data, c.flags]))));
}

/** A row read back from a file, checked against its combination: anything else is a one-line error naming the file. */
export function checkedRow(value: unknown, all: readonly Combination[], file: string): SweepRow {
  const row = value as Partial<SweepRow> | null;
  const index = row?.index;
  if (typeof row !== 'object' || row === null || typeof index !== 'number' || !Number.isInteger(index) || index < 0 || index >= all.length) {
    throw new CommandError(`${shown(file)}: a row that names no combination of the grid (index ${shown(JSON.stringify(index) ?? 'missing')})`);
  }
  const c = all[index];
  if (JSON.stringify(row.flags) !== JSON.stringify(c.flags) || row.data !== c.data)
    throw new CommandError(`${shown(file)}: combination ${index} has other flags or data than the grid's (the grid changed: run the parts again)`);
  const r = row.results as Partial<RunResults> | null | undefined;
  const number = (v: unknown) => v === null || (typeof v === 'number' && Number.isFinite(v));
  const sound =
    r === null ||
    (typeof r === 'object' &&
      r !== undefined &&
      typeof r.metric === 'string' &&
      typeof r.lowerIsBetter === 'boolean' &&
      typeof r.model === 'number' &&
      number(r.validationLoss) &&
      number(r.validationFigure ?? null) &&
      typeof r.steps === 'number');
  if (!sound || !(row.error === null || typeof row.error === 'string') || (r === null) !== (row.error !== null)) {
    throw new CommandError(`${shown(file)}: combination ${index}: its results are not those weft train writes (changed by hand?)`);
  }
  return { ...c, results: r as RunResults | null, error: row.error as string | null };
}

/** A finished combination's row from an earlier run, or null when it is not of this grid or not sound. */
export function readDone(path: string, all: readonly Combination[], digest: string): SweepRow | null {
  try {
    const done = JSON.parse(readFileSync(path, 'utf8')) as { grid?: unknown; row?: unknown };
    return done.grid === digest ? checkedRow(done.row, all, path) : null;
  } catch {
    return null;
  }
}

/** A part's results file, checked: made from this grid, every row sound. */
export function readPart(path: string, name: string, all: readonly Combination[], digest: string): SweepRow[] {
  let parsed: unknown;
  try {
    parsed = JSON.parse(readFileSync(path, 'utf8'));
  } catch (error) {
    throw new CommandError(`${shown(name)}: not a part's results (${(error as Error).message})`);
  }
  const part = parsed as { grid?: unknown; rows?: unknown } | null;
  if (typeof part !== 'object' || part === null || Array.isArray(part) || !Array.isArray(part.rows))
    throw new CommandError(`${shown(name)}: not a part's results (expected an object with "grid" and "rows")`);
  if (part.grid !== digest) throw new CommandError(`${shown(name)}: made from another grid (the grid changed since: run the parts again)`);
  return part.rows.map((row) => checkedRow(row, all, name));
}

/**
 * In a training run a sweep started (WEFT_SWEEP_PARENT names the sweep's process): ends this process when the
 * sweep is gone, checked every second, so a sweep killed even with SIGKILL leaves no training running.
 */
export function watchSweepParent(): void {
  const parent = Number(process.env.WEFT_SWEEP_PARENT);
  if (!Number.isInteger(parent) || parent <= 0) return;
  const timer = setInterval(() => {
    let alive = process.ppid === parent;
    if (alive) {
      try {
        process.kill(parent, 0);
      } catch {
        alive = false;
      }
    }
    if (!alive) process.exit(1);
  }, 1000);
  timer.unref();
}
