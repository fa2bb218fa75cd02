/**
 * `weft sweep`: a grid's combinations in a fixed order, `--part K/N` by index mod N, a 6-combination grid run as 3
 * parts in 3 processes and merged giving the same table file, byte for byte, as one process running all 6; the job
 * arrays of examples/sweep (a Kubernetes Indexed Job and a Slurm array) giving each combination to exactly one part;
 * and one-line errors for a bad grid or part.
 */
import { spawn } from 'node:child_process';
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { binary, commandFolder, expectOneLineError } from './command.js';
import { partCombinations, partOf, readGrid } from '../src/sweep.js';

const { folder, weft } = commandFolder('weft-sweep-');
const greenhouse = readFileSync(fileURLToPath(new URL('../demo/greenhouse.csv', import.meta.url)), 'utf8')
  .split('\n')
  .slice(0, 500)
  .join('\n');
writeFileSync(join(folder, 'small.csv'), `${greenhouse}\n`);
const grid = {
  data: 'small.csv',
  flags: { target: 'air_temperature_c', horizon: 4, cell: 'gru', hidden: [8, 12, 16], rate: [0.01, 0.02], epochs: 2, window: 16, streams: 4 },
};
writeFileSync(join(folder, 'grid.json'), JSON.stringify(grid));
const examples = fileURLToPath(new URL('../../../examples/sweep/', import.meta.url));

function running(args: string[]): Promise<number | null> {
  return new Promise((done) => spawn(process.execPath, [binary, ...args], { cwd: folder, stdio: 'ignore' }).on('close', done));
}

describe('weft sweep', () => {
  it("orders a grid's combinations by data file, then each flag's values with flag names sorted", () => {
    const all = readGrid(join(folder, 'grid.json'));
    expect(all).toHaveLength(6);
    expect(all.map((c) => [c.index, c.flags.hidden, c.flags.rate])).toEqual([
      [0, 8, 0.01],
      [1, 8, 0.02],
      [2, 12, 0.01],
      [3, 12, 0.02],
      [4, 16, 0.01],
      [5, 16, 0.02],
    ]);
    expect([1, 2, 3].map((k) => partCombinations(all, k, 3).map((c) => c.index))).toEqual([
      [0, 3],
      [1, 4],
      [2, 5],
    ]);
  });

  it('run as 3 parts in 3 processes and merged, gives the same table as one process running all 6', async () => {
    const whole = weft(['sweep', 'grid.json', '--folder', 'whole']);
    expect(whole.code).toBe(0);
    expect(whole.out).toMatch(/^part 1 of 1: 6 of 6 combinations/);
    const codes = await Promise.all([1, 2, 3].map((k) => running(['sweep', 'grid.json', '--folder', 'parts', '--part', `${k}/3`])));
    expect(codes).toEqual([0, 0, 0]);
    const merged = weft(['sweep', 'grid.json', '--folder', 'parts', '--merge']);
    expect(merged.code).toBe(0);
    const table = readFileSync(join(folder, 'whole', 'table.csv'), 'utf8');
    expect(table.split('\n')).toHaveLength(8);
    expect(readFileSync(join(folder, 'parts', 'table.csv'), 'utf8')).toBe(table);
    expect(table.split('\n')[1]).toMatch(/^1,\d,small\.csv,gru,2,\d+,4,0\.0\d,4,air_temperature_c,16,[\d.e-]+,MAE,[\d.e-]+,[\d.e-]+,\w[\w -]*,[\d.e-]+,\d+,$/);
  }, 120_000);

  it('trains again only what an earlier run of the same grid did not finish, and merges only parts of this grid, as written', () => {
    const again = weft(['sweep', 'grid.json', '--folder', 'whole']);
    expect(again.code).toBe(0);
    expect(again.out).toMatch(/^part 1 of 1: 6 of 6 combinations, \d+ at a time \(6 finished by an earlier run of this grid, not trained again\)$/m);
    // Another grid over the same folder: its parts are not this grid's.
    writeFileSync(join(folder, 'other.json'), JSON.stringify({ ...grid, flags: { ...grid.flags, rate: [0.01, 0.03] } }));
    expectOneLineError(
      weft(['sweep', 'other.json', '--folder', 'parts', '--merge']),
      1,
      /^weft: part-1-of-3\.json: made from another grid \(the grid changed since: run the parts again\)$/,
    );
    // A part changed by hand: a row's results taken out, or the file broken.
    const partPath = join(folder, 'parts', 'part-1-of-3.json');
    const original = readFileSync(partPath, 'utf8');
    const part = JSON.parse(original) as { rows: { results: unknown }[] };
    part.rows[0].results = null;
    writeFileSync(partPath, JSON.stringify(part));
    expectOneLineError(
      weft(['sweep', 'grid.json', '--folder', 'parts', '--merge']),
      1,
      /^weft: part-1-of-3\.json: combination 0: its results are not those weft train writes \(changed by hand\?\)$/,
    );
    writeFileSync(partPath, original.slice(0, 40));
    expectOneLineError(weft(['sweep', 'grid.json', '--folder', 'parts', '--merge']), 1, /^weft: part-1-of-3\.json: not a part's results \(/);
    writeFileSync(partPath, original);
    expect(weft(['sweep', 'grid.json', '--folder', 'parts', '--merge']).code).toBe(0);
  }, 60_000);

  it.skipIf(process.platform !== 'linux')(
    'leaves no training running when its part is killed with SIGKILL',
    async () => {
      // Trainings long enough to outlive the wait below by far (300 epochs, never stopped early).
      writeFileSync(join(folder, 'long.json'), JSON.stringify({ ...grid, flags: { ...grid.flags, epochs: 300, patience: 1000 } }));
      const child = spawn(process.execPath, [binary, 'sweep', 'long.json', '--folder', 'killed', '--jobs', '2'], { cwd: folder, stdio: 'ignore' });
      // The training processes of this sweep, found by their command lines (Linux's /proc).
      const trainings = () =>
        readdirSync('/proc')
          .filter((pid) => /^\d+$/.test(pid))
          .filter((pid) => {
            try {
              return readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes(join(folder, 'killed', 'c'));
            } catch {
              return false;
            }
          });
      for (let waited = 0; trainings().length === 0 && waited < 30_000; waited += 100) await new Promise((r) => setTimeout(r, 100));
      expect(trainings().length).toBeGreaterThan(0);
      child.kill('SIGKILL');
      // Each training checks every second that its sweep is still there, and ends itself when it is not.
      for (let waited = 0; trainings().length > 0 && waited < 10_000; waited += 100) await new Promise((r) => setTimeout(r, 100));
      expect(trainings()).toEqual([]);
    },
    60_000,
  );

  it('refuses to merge while a part is missing, naming the combinations', () => {
    expectOneLineError(weft(['sweep', 'grid.json', '--folder', 'whole-missing', '--merge']), 1, /no such folder/);
    weft(['sweep', 'grid.json', '--folder', 'half', '--part', '1/3']);
    expectOneLineError(
      weft(['sweep', 'grid.json', '--folder', 'half', '--merge']),
      1,
      /^weft: .*half: no results for combinations 1, 2, 4, 5 of 6 \(run the missing parts\)$/,
    );
  }, 60_000);

  it('refuses a part 3/2, a flag weft train does not know, a flag the sweep sets itself and an empty value list, in one line', () => {
    expect(partOf('2/3')).toEqual([2, 3]);
    expectOneLineError(
      weft(['sweep', 'grid.json', '--part', '3/2']),
      2,
      /^weft: --part must be K\/N with 1 ≤ K ≤ N ≤ 10,000 \(the K-th of N parts\), got "3\/2"$/,
    );
    expectOneLineError(weft(['sweep', 'grid.json', '--part', '1/99999999999999999999']), 2, /^weft: --part must be K\/N with 1 ≤ K ≤ N ≤ 10,000/);
    // A grid of a few hundred bytes asking for 10⁸ runs is refused before any is made (each list of 100 values).
    const hundred = Array.from({ length: 100 }, (_, i) => i + 1);
    writeFileSync(
      join(folder, 'huge.json'),
      JSON.stringify({ data: 'small.csv', flags: { hidden: hundred, window: hundred, streams: hundred, epochs: hundred } }),
    );
    expectOneLineError(
      weft(['sweep', 'huge.json', '--merge']),
      1,
      /^weft: huge\.json: 100,000,000 combinations \(1 data file × 100 epochs × 100 hidden × 100 streams × 100 window\); a grid may hold at most 10,000: split it into grids of fewer values$/,
    );
    writeFileSync(join(folder, 'bad.json'), JSON.stringify({ data: 'small.csv', flags: { hiden: [8] } }));
    expectOneLineError(weft(['sweep', 'bad.json']), 1, /^weft: bad\.json: flags\.hiden is not a flag of weft train \(see weft train --help\)$/);
    writeFileSync(join(folder, 'bad.json'), JSON.stringify({ data: 'small.csv', flags: { out: ['x'] } }));
    expectOneLineError(weft(['sweep', 'bad.json']), 1, /^weft: bad\.json: flags\.out is set by the sweep itself/);
    writeFileSync(join(folder, 'bad.json'), JSON.stringify({ data: 'small.csv', flags: { hidden: [] } }));
    expectOneLineError(weft(['sweep', 'bad.json']), 1, /^weft: bad\.json: flags\.hidden has an empty list of values$/);
  });
});

describe('the job arrays of examples/sweep', () => {
  const all = readGrid(join(examples, 'grid.json'));
  const coverage = (parts: [number, number][]) => {
    const counts = new Map<number, number>();
    for (const [k, n] of parts) for (const c of partCombinations(all, k, n)) counts.set(c.index, (counts.get(c.index) ?? 0) + 1);
    return all.map((c) => counts.get(c.index) ?? 0);
  };

  it('give each combination to exactly one pod of the Kubernetes Indexed Job (index in JOB_COMPLETION_INDEX, from 0)', () => {
    const yaml = readFileSync(join(examples, 'k8s-indexed-job.yaml'), 'utf8');
    expect(yaml).toMatch(/^ {2}completionMode: Indexed$/m);
    const completions = Number(/^ {2}completions: (\d+)$/m.exec(yaml)![1]);
    const command = /command: \[.*"(npx weft sweep [^"]+)"\]/.exec(yaml)![1];
    const part = /--part \$\(\(JOB_COMPLETION_INDEX \+ 1\)\)\/(\d+)/.exec(command)!;
    expect(Number(part[1])).toBe(completions);
    expect(coverage(Array.from({ length: completions }, (_, index) => [index + 1, completions]))).toEqual(all.map(() => 1));
  });

  it('give each combination to exactly one task of the Slurm job array (task id in SLURM_ARRAY_TASK_ID, from 1)', () => {
    const script = readFileSync(join(examples, 'slurm-array.sh'), 'utf8');
    const [, first, last] = /^#SBATCH --array=(\d+)-(\d+)$/m.exec(script)!;
    const n = Number(/--part \$\{SLURM_ARRAY_TASK_ID\}\/(\d+)/.exec(script)![1]);
    expect([Number(first), Number(last)]).toEqual([1, n]);
    expect(coverage(Array.from({ length: n }, (_, i) => [Number(first) + i, n]))).toEqual(all.map(() => 1));
  });
});
