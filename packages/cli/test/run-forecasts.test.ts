/**
 * `weft run` on a model that forecasts every row up to its horizon at once (run-forecasts.ts): one column per target
 * and row ahead, equal to what the library's row forecaster writes for the same rows (the runtime a program
 * embeds); `--ahead` lays the last row's forecasts out on the rows they are for, and refuses more rows than the
 * model forecasts. The model is trained here on an invented series of a tank's level.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createRowForecaster, readWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-run-ahead-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const weft = (args: string[]) => {
  const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', timeout: 120_000 });
  return { code: result.status, out: result.stdout, err: result.stderr };
};

// Invented hourly readings of a tank's level and inflow.
const readings = Array.from({ length: 300 }, (_, t) => ({ level: 50 + 10 * Math.sin(t / 9) + t / 50, inflow: 3 + Math.cos(t / 9) }));

beforeAll(() => {
  writeFileSync(join(folder, 'tank.csv'), `level,inflow\n${readings.map((r) => `${r.level.toFixed(3)},${r.inflow.toFixed(3)}`).join('\n')}\n`);
  const trained = weft([
    'train',
    'tank.csv',
    '--target',
    'level',
    '--horizon',
    '3',
    '--hybrid',
    'no',
    '--hidden',
    '8',
    '--epochs',
    '3',
    '--out',
    'tank.weft.json',
    '--quiet',
  ]);
  expect(trained.code, trained.err).toBe(0);
  // The test part is scored at every row ahead, each against the best baseline, and so are the intervals.
  expect(trained.out).toMatch(/MAE by rows ahead: 1: [\d.]+ \([\d.]+\), 2: [\d.]+ \([\d.]+\), 3: [\d.]+ \([\d.]+\)/);
  expect(trained.out).toMatch(
    /^ {2}prediction intervals at 95% \(split conformal on the validation part's errors\): coverage [\d.]+% of 90 values, mean width [\d.]+, MSIS [\d.]+(; more than 5 points from the 95% asked: do not rely on these intervals at this level)?$/m,
  );
});

describe('weft run on a model of several rows ahead', () => {
  it('prints a column per row ahead, the numbers the library forecaster writes for the same rows', async () => {
    const run = weft(['run', 'tank.weft.json', 'tank.csv', '--format', 'json']);
    expect(run.code, run.err).toBe(0);
    const records = JSON.parse(run.out) as Record<string, number | string>[];
    expect(Object.keys(records[0])).toEqual([
      'row',
      'level in 1',
      'level in 1 low',
      'level in 1 high',
      'level in 2',
      'level in 2 low',
      'level in 2 high',
      'level in 3',
      'level in 3 low',
      'level in 3 high',
    ]);
    const file = await readWeightFile(readFileSync(join(folder, 'tank.weft.json'), 'utf8'));
    const forecaster = createRowForecaster(await createRuntime(file), file.metadata as Record<string, unknown>);
    expect(forecaster.rowsAhead).toEqual([1, 2, 3]);
    // One half-width per row ahead, from the validation part's errors at that row ahead.
    const half = forecaster.intervals!.halfWidth;
    expect(half).toHaveLength(3);
    const out = new Float64Array(3);
    readings.forEach((r, t) => {
      const ready = forecaster.nextInto({ level: r.level.toFixed(3), inflow: r.inflow.toFixed(3) }, out);
      expect(records[t]['level in 1']).toBe(ready ? Number(out[0].toPrecision(6)) : '');
      expect(records[t]['level in 3']).toBe(ready ? Number(out[2].toPrecision(6)) : '');
      expect(records[t]['level in 3 high']).toBe(ready ? Number((out[2] + half[2]).toPrecision(6)) : '');
    });
  });

  it("lays the last row's forecasts on the rows they are for with --ahead, and refuses more rows than it forecasts", () => {
    const all = JSON.parse(weft(['run', 'tank.weft.json', 'tank.csv', '--format', 'json']).out) as Record<string, number | string>[];
    const last = all[all.length - 1];
    const run = weft(['run', 'tank.weft.json', 'tank.csv', '--ahead', '3', '--format', 'json']);
    expect(run.code, run.err).toBe(0);
    const records = JSON.parse(run.out) as Record<string, number | string>[];
    expect(records).toHaveLength(303);
    expect(records[300]['level in 1 low']).toBe(last['level in 1 low']);
    expect(records.slice(300).map((r) => [r.row, r.made, r['level in 1'], r['level in 2'], r['level in 3']])).toEqual([
      [301, 'at row 300', last['level in 1'], '', ''],
      [302, 'at row 300', '', last['level in 2'], ''],
      [303, 'at row 300', '', '', last['level in 3']],
    ]);
    const refused = weft(['run', 'tank.weft.json', 'tank.csv', '--ahead', '4']);
    expect(refused.code).toBe(2);
    expect(refused.err.trim()).toBe('weft: --ahead 4: this model forecasts rows 1 to 3 ahead at once; ask for at most 3 (or train it with a longer --horizon)');
  });
});
