/**
 * `weft sweep GRID`: train every combination of a grid — values per `weft train` flag, and the data files — several
 * at a time across the cores, one weight file and one result per combination, and a table sorted by the model's
 * validation figure in the data's units (see `ranked`). `--part K/N` runs only the combinations whose index i (0-based, in the grid's fixed order) has i mod N =
 * K − 1, so N machines (the tasks of a cluster's job array) can share a sweep; `--merge` joins the parts' result
 * files into the one table, the same table one process running every combination writes.
 *
 * The grid (JSON): { "data": "readings.csv" or [files], "flags": { "hidden": [16, 32], "rate": [0.01, 0.003] } },
 * paths relative to the grid file. Combinations are the data files in order, then the flags' values in the order
 * given, flag names sorted; a combination's index never depends on the part or the machine.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, readdirSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { dirname, isAbsolute, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeFileAtomic } from '@weft/io/node';
import type { FlagSpec, ParsedArgs } from './args.js';
import { numberFlag } from './args.js';
import { CommandError } from './errors.js';
import { shown } from './terminal.js';
import { trainFlags } from './train.js';
import type { RunResults } from './results.js';
import { gridDigest, readDone, readPart } from './sweep-parts.js';
import type { Combination, SweepRow } from './sweep-types.js';

export type { Combination, SweepRow } from './sweep-types.js';
export { watchSweepParent } from './sweep-parts.js';

export const sweepFlags: FlagSpec[] = [
  { name: 'part', value: 'K/N', description: "run only the K-th of N parts of the grid (for a cluster's job array)", fallback: '1/1' },
  { name: 'jobs', value: 'NUMBER', description: 'trainings at once', fallback: 'the cores this machine offers' },
  { name: 'folder', value: 'DIR', description: 'where weight files and results go', fallback: '<grid name>.sweep' },
  { name: 'merge', switch: true, description: "join the parts' results in the folder into the table (every combination must be there)" },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

/** Flags a sweep sets itself for each combination, so a grid may not. */
const reserved = new Set(['out', 'checkpoint', 'resume', 'start-over', 'quiet', 'results', 'debug', 'checkpoint-every']);

/** Reads and checks a grid file; every problem is a one-line error naming the file and the field. */
export function readGrid(path: string): Combination[] {
  let grid: unknown;
  try {
    grid = JSON.parse(readFileSync(path, 'utf8'));
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new CommandError(`${shown(path)}: ${code === 'ENOENT' ? 'no such file' : `not JSON (${(error as Error).message})`}`);
  }
  if (typeof grid !== 'object' || grid === null || Array.isArray(grid)) throw new CommandError(`${shown(path)}: expected an object with "data" and "flags"`);
  const { data, flags, ...rest } = grid as Record<string, unknown>;
  for (const key of Object.keys(rest)) throw new CommandError(`${shown(path)}: unknown field ${JSON.stringify(key)} (a grid has "data" and "flags")`);
  const files = (Array.isArray(data) ? data : [data]).map((file, i) => {
    if (typeof file !== 'string' || file === '') throw new CommandError(`${shown(path)}: data[${i}] must be a file name, got ${JSON.stringify(file)}`);
    return { data: file, path: isAbsolute(file) ? file : resolve(dirname(path), file) };
  });
  if (files.length === 0) throw new CommandError(`${shown(path)}: "data" names no file`);
  if (typeof flags !== 'object' || flags === null || Array.isArray(flags)) throw new CommandError(`${shown(path)}: "flags" must be an object of value lists`);
  const known = new Map(trainFlags.map((f) => [f.name, f]));
  const lists = Object.keys(flags)
    .sort()
    .map((name) => {
      const spec = known.get(name);
      if (spec === undefined || reserved.has(name)) {
        throw new CommandError(
          `${shown(path)}: flags.${name} is ${spec === undefined ? 'not a flag of weft train' : 'set by the sweep itself'} (see weft train --help)`,
        );
      }
      const given = (flags as Record<string, unknown>)[name];
      const values = Array.isArray(given) ? given : [given];
      if (values.length === 0) throw new CommandError(`${shown(path)}: flags.${name} has an empty list of values`);
      values.forEach((v, i) => {
        const ok = spec.switch === true ? typeof v === 'boolean' : typeof v === 'string' || (typeof v === 'number' && Number.isFinite(v));
        if (!ok)
          throw new CommandError(
            `${shown(path)}: flags.${name}[${i}] must be ${spec.switch === true ? 'true or false' : 'a number or text'}, got ${JSON.stringify(v)}`,
          );
      });
      return { name, values: values as (string | number | boolean)[] };
    });
  // Counted before any is made: a few hundred bytes of grid can ask for 10⁸ runs.
  const count = lists.reduce((n, l) => n * l.values.length, files.length);
  if (count > MAX_COMBINATIONS) {
    throw new CommandError(
      `${shown(path)}: ${count.toLocaleString('en')} combinations (${files.length} data file${files.length === 1 ? '' : 's'} × ${lists.map((l) => `${l.values.length} ${l.name}`).join(' × ')}); a grid may hold at most ${MAX_COMBINATIONS.toLocaleString('en')}: split it into grids of fewer values`,
    );
  }
  const combinations: Combination[] = [];
  for (const file of files) {
    let partial: Record<string, string | number | boolean>[] = [{}];
    for (const { name, values } of lists) partial = partial.flatMap((p) => values.map((v) => ({ ...p, [name]: v })));
    for (const flagSet of partial) combinations.push({ index: combinations.length, data: file.data, path: file.path, flags: flagSet });
  }
  return combinations;
}

/** The most combinations a grid may hold (each is a training run). */
export const MAX_COMBINATIONS = 10_000;

/** `--part K/N` as [K, N], checked. */
export function partOf(text: string | undefined): [number, number] {
  if (text === undefined) return [1, 1];
  const match = /^(\d+)\/(\d+)$/.exec(text.trim());
  const [k, n] = match === null ? [NaN, NaN] : [Number(match[1]), Number(match[2])];
  if (!(Number.isSafeInteger(k) && Number.isSafeInteger(n) && n >= 1 && k >= 1 && k <= n && n <= MAX_COMBINATIONS)) {
    throw new CommandError(
      `--part must be K/N with 1 ≤ K ≤ N ≤ ${MAX_COMBINATIONS.toLocaleString('en')} (the K-th of N parts), got ${JSON.stringify(text)}`,
      2,
    );
  }
  return [k, n];
}

/** The combinations of part K of N: index mod N = K − 1. */
export function partCombinations(all: readonly Combination[], k: number, n: number): Combination[] {
  return all.filter((c) => c.index % n === k - 1);
}

/** The train command line of one combination. */
export function trainArguments(c: Combination, folder: string): string[] {
  const args = ['train', c.path];
  for (const [name, value] of Object.entries(c.flags)) {
    if (value === false) continue;
    args.push(`--${name}`);
    if (value !== true) args.push(String(value));
  }
  // Several combinations train at a time, one per core: each in one thread unless the grid says otherwise.
  if (!('workers' in c.flags)) args.push('--workers', '1');
  const base = join(folder, `c${c.index}`);
  args.push('--out', `${base}.weft.json`, '--checkpoint', `${base}.checkpoint.json`, '--start-over', '--quiet', '--results', `${base}.result.json`);
  return args;
}

const command = fileURLToPath(new URL('./main.js', import.meta.url));

function trainOne(c: Combination, folder: string): Promise<SweepRow> {
  return new Promise((done) => {
    // The child ends itself when this process is gone (killed, even with SIGKILL): see watchSweepParent.
    const child = spawn(process.execPath, [command, ...trainArguments(c, folder)], {
      stdio: ['ignore', 'ignore', 'pipe'],
      env: { ...process.env, WEFT_SWEEP_PARENT: String(process.pid) },
    });
    let stderr = '';
    child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
    child.on('close', (code) => {
      const resultPath = join(folder, `c${c.index}.result.json`);
      if (code === 0 && existsSync(resultPath)) {
        done({ ...c, results: JSON.parse(readFileSync(resultPath, 'utf8')) as RunResults, error: null });
      } else {
        done({ ...c, results: null, error: stderr.trim().split('\n').at(-1) ?? `exit ${String(code)}` });
      }
    });
  });
}

/**
 * The rows in table order: by the validation figure in the data's units (MAE, MASE, perplexity: lowest first;
 * accuracy: highest first), never by the test figure, which would choose on the rows the verdict is scored on, nor
 * by the validation loss, whose units change with --transform; runs without a figure by validation loss after
 * them; failed runs last; ties by index.
 */
export function ranked(rows: readonly SweepRow[]): SweepRow[] {
  const key = (r: SweepRow): [number, number] => {
    if (r.results === null) return [3, 0];
    if (r.results.validationFigure !== null && r.results.validationFigure !== undefined)
      return [0, r.results.lowerIsBetter ? r.results.validationFigure : -r.results.validationFigure];
    return [r.results.validationLoss === null ? 2 : 1, r.results.validationLoss ?? 0];
  };
  return [...rows].sort((a, b) => {
    const [ga, va] = key(a);
    const [gb, vb] = key(b);
    return ga - gb || va - vb || a.index - b.index;
  });
}

/** The table as CSV, every figure written in full (so tables from parts and from one process compare exactly). */
export function tableCsv(rows: readonly SweepRow[]): string {
  const flagNames = [...new Set(rows.flatMap((r) => Object.keys(r.flags)))].sort();
  const lines = [
    [
      'rank',
      'index',
      'data',
      ...flagNames,
      'validation loss',
      'metric',
      'validation figure',
      'test figure',
      'best baseline',
      'baseline test figure',
      'steps',
      'error',
    ].join(','),
  ];
  ranked(rows).forEach((r, i) => {
    const q = (v: unknown) => (typeof v === 'string' && /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : String(v ?? ''));
    lines.push(
      [
        i + 1,
        r.index,
        q(r.data),
        ...flagNames.map((f) => q(r.flags[f])),
        q(r.results?.validationLoss),
        q(r.results?.metric),
        q(r.results?.validationFigure),
        q(r.results?.model),
        q(r.results?.bestBaseline?.name),
        q(r.results?.bestBaseline?.value),
        q(r.results?.steps),
        q(r.error),
      ].join(','),
    );
  });
  return `${lines.join('\n')}\n`;
}

function readable(rows: readonly SweepRow[]): string {
  return ranked(rows)
    .map((r, i) => {
      const flags = Object.entries(r.flags)
        .map(([k, v]) => `--${k} ${String(v)}`)
        .join(' ');
      const figure =
        r.results === null
          ? `failed: ${r.error ?? ''}`
          : `validation ${r.results.metric} ${r.results.validationFigure?.toPrecision(4) ?? '—'} (loss ${r.results.validationLoss?.toPrecision(4) ?? '—'}), test ${r.results.metric} ${r.results.model.toPrecision(4)}${r.results.bestBaseline === null ? '' : ` (best baseline ${r.results.bestBaseline.name} ${r.results.bestBaseline.value.toPrecision(4)})`}`;
      return `${String(i + 1).padStart(3)}. c${r.index} ${shown(r.data.split(/[\\/]/).at(-1) ?? r.data)} ${shown(flags)}: ${shown(figure)}`;
    })
    .join('\n');
}

export async function sweep(args: ParsedArgs): Promise<{ text: string; failed: boolean }> {
  const [gridPath] = args.positional;
  if (gridPath === undefined) throw new CommandError('weft sweep needs a grid file (see weft sweep --help)', 2);
  const all = readGrid(gridPath);
  const folder = resolve(args.flags.get('folder') ?? `${gridPath.replace(/\.json$/i, '')}.sweep`);
  if (args.switches.has('merge')) {
    if (!existsSync(folder)) throw new CommandError(`${shown(folder)}: no such folder (run the parts first)`);
    const seen = new Map<number, SweepRow>();
    const digest = await gridDigest(all);
    for (const name of readdirSync(folder)
      .filter((f) => /^part-\d+-of-\d+\.json$/.test(f))
      .sort()) {
      for (const row of readPart(join(folder, name), name, all, digest)) {
        if (seen.has(row.index)) throw new CommandError(`${shown(name)}: combination ${row.index} is in two parts' results`);
        seen.set(row.index, row);
      }
    }
    const missing = all.filter((c) => !seen.has(c.index)).map((c) => c.index);
    if (missing.length > 0)
      throw new CommandError(
        `${shown(folder)}: no results for combination${missing.length === 1 ? '' : 's'} ${missing.join(', ')} of ${all.length} (run the missing parts)`,
      );
    const rows = all.map((c) => seen.get(c.index) as SweepRow);
    writeFileAtomic(join(folder, 'table.csv'), tableCsv(rows));
    return { text: `${readable(rows)}\ntable: ${join(folder, 'table.csv')}`, failed: rows.some((r) => r.results === null) };
  }
  const [k, n] = partOf(args.flags.get('part'));
  const mine = partCombinations(all, k, n);
  const digest = await gridDigest(all);
  const jobs = numberFlag(args, 'jobs', Math.max(1, availableParallelism()), { whole: true, min: 1, max: 256 });
  mkdirSync(folder, { recursive: true });
  const rows: SweepRow[] = [];
  let next = 0;
  let reused = 0;
  const worker = async (): Promise<void> => {
    while (next < mine.length) {
      const c = mine[next++];
      // A combination this grid finished before (a part stopped and run again) is not trained again.
      const done = join(folder, `c${c.index}.row.json`);
      const earlier = existsSync(done) ? readDone(done, all, digest) : null;
      if (earlier !== null && earlier.index === c.index) {
        reused++;
        rows.push(earlier);
        continue;
      }
      const row = await trainOne(c, folder);
      if (row.results !== null) writeFileAtomic(done, `${JSON.stringify({ grid: digest, row })}\n`);
      rows.push(row);
    }
  };
  await Promise.all(Array.from({ length: Math.min(jobs, mine.length) }, worker));
  rows.sort((a, b) => a.index - b.index);
  writeFileAtomic(join(folder, `part-${k}-of-${n}.json`), `${JSON.stringify({ grid: digest, part: [k, n], rows }, null, 1)}\n`);
  const lines = [
    `part ${k} of ${n}: ${mine.length} of ${all.length} combinations, ${Math.min(jobs, Math.max(1, mine.length))} at a time${reused > 0 ? ` (${reused} finished by an earlier run of this grid, not trained again)` : ''}`,
    readable(rows),
  ];
  if (n === 1) {
    writeFileAtomic(join(folder, 'table.csv'), tableCsv(rows));
    lines.push(`table: ${join(folder, 'table.csv')}`);
  } else {
    lines.push(`results: ${join(folder, `part-${k}-of-${n}.json`)} (weft sweep ${shown(gridPath)} --merge, once every part has run)`);
  }
  return { text: lines.join('\n'), failed: rows.some((r) => r.results === null) };
}
