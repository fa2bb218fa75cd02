/**
 * `weft run` as a pipeline stage (run.ts): a table on standard input is read row by row and each forecast is
 * written before the next row is sent (as `tail -f readings.csv | weft run MODEL -` needs); `--keep` carries
 * key columns through; the outputs equal what the library's translator and runtime compute from the same weight
 * file (so a program embedding the runtime gets the numbers `weft run` prints); bad rows are one line naming
 * file, line and column. The model is trained here on an invented series.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTranslator, readWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-run-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const weft = (args: string[], input?: string) => {
  const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', input, timeout: 120_000 });
  return { code: result.status, out: result.stdout, err: result.stderr };
};

// Invented readings of a tank: level and inflow, every hour.
const readings = Array.from({ length: 400 }, (_, t) => ({
  hour: `h${t}`,
  level: (50 + 10 * Math.sin(t / 9)).toFixed(3),
  inflow: (3 + Math.cos(t / 9)).toFixed(3),
}));

beforeAll(() => {
  writeFileSync(join(folder, 'tank.csv'), `hour,level,inflow\n${readings.map((r) => `${r.hour},${r.level},${r.inflow}`).join('\n')}\n`);
  const trained = weft([
    'train',
    'tank.csv',
    '--examples',
    'streams',
    '--target',
    'level',
    '--hidden',
    '8',
    '--window',
    '16',
    '--streams',
    '4',
    '--epochs',
    '2',
    '--out',
    'tank.weft.json',
    '--quiet',
  ]);
  expect(trained.code).toBe(0);
});

describe('weft run', () => {
  it('forecasts each row from standard input before the next row is written, carrying the --keep column', async () => {
    const child = spawn(process.execPath, [binary, 'run', 'tank.weft.json', '-', '--keep', 'hour'], { cwd: folder });
    let received = '';
    const waiters: (() => void)[] = [];
    child.stdout.on('data', (chunk: Buffer) => {
      received += chunk.toString('utf8');
      waiters.splice(0).forEach((w) => w());
    });
    const lineCount = () => received.split('\n').length - 1;
    const until = (lines: number) =>
      new Promise<void>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`waited for ${lines} lines, have: ${JSON.stringify(received)}`)), 20_000);
        const check = (): void => {
          if (lineCount() < lines) {
            waiters.push(check);
            return;
          }
          clearTimeout(timer);
          resolve();
        };
        check();
      });
    child.stdin.write('hour,level,inflow\n');
    for (let i = 0; i < 3; i++) {
      const r = readings[i];
      child.stdin.write(`${r.hour},${r.level},${r.inflow}\n`);
      // The header line comes with the first forecast; each row's forecast arrives while stdin is still open.
      await until(i + 2);
      expect(lineCount()).toBe(i + 2);
    }
    child.stdin.end();
    const code = await new Promise<number | null>((resolve) => child.on('close', resolve));
    expect(code).toBe(0);
    const lines = received.trim().split('\n');
    // Each forecast comes with the prediction interval weft train recorded (95%, split conformal).
    expect(lines[0]).toBe('row,hour,level in 1,level in 1 low,level in 1 high');
    expect(lines.slice(1).map((l) => l.split(',')[1])).toEqual(['h0', 'h1', 'h2']);
  }, 60_000);

  it('prints what the translator and the runtime compute from the same weight file', async () => {
    const rows = readings.slice(0, 30);
    writeFileSync(join(folder, 'new.csv'), `inflow,level\n${rows.map((r) => `${r.inflow},${r.level}`).join('\n')}\n`);
    const run = weft(['run', 'tank.weft.json', 'new.csv', '--format', 'json']);
    expect(run.code).toBe(0);
    const printed = (JSON.parse(run.out) as Record<string, number>[]).map((r) => r['level in 1']);
    const file = await readWeightFile(readFileSync(join(folder, 'tank.weft.json'), 'utf8'));
    const translator = createTranslator(file.metadata as Record<string, unknown>);
    const streams = (await createRuntime(file)).streams(1);
    const own = rows.map((r) => Number(translator.outputs(streams.step(translator.inputs({ level: r.level, inflow: r.inflow }))).level.toPrecision(6)));
    expect(printed).toEqual(own);
  });

  it('prints for a text model what the translator and the runtime compute, unknown characters counted on stderr', async () => {
    const notes = Array.from({ length: 40 }, (_, i) => `vat ${i % 5} is ${['indigo', 'madder', 'weld'][i % 3]}; `).join('');
    writeFileSync(join(folder, 'dye.txt'), notes);
    expect(weft(['train', 'dye.txt', '--hidden', '8', '--epochs', '2', '--window', '16', '--streams', '4', '--out', 'dye.weft.json', '--quiet']).code).toBe(0);
    const probe = 'vat 3 is weld! ';
    const run = weft(['run', 'dye.weft.json', '-', '--format', 'json'], probe);
    expect(run.code).toBe(0);
    expect(run.err.trim()).toBe("weft: 1 of 15 characters of <stdin> are not in the model's vocabulary; they are read as <unknown>");
    const printed = JSON.parse(run.out) as { token: string; 'most likely next': string; probability: number }[];
    const file = await readWeightFile(readFileSync(join(folder, 'dye.weft.json'), 'utf8'));
    const translator = createTranslator(file.metadata as Record<string, unknown>);
    const streams = (await createRuntime(file)).streams(1);
    const { ids } = translator.tokenIds(probe);
    const own = Array.from(ids, (id) => {
      const out = streams.step(Int32Array.of(id));
      let best = 0;
      for (let k = 1; k < out.length; k++) if (out[k] > out[best]) best = k;
      const max = out[best];
      const total = Array.from(out).reduce((s, z) => s + Math.exp(z - max), 0);
      return { next: translator.tokenText(best), probability: Number((1 / total).toPrecision(4)) };
    });
    expect(printed.map((p) => p['most likely next'])).toEqual(own.map((o) => o.next));
    expect(printed.map((p) => p.probability)).toEqual(own.map((o) => o.probability));
    expect(printed.map((p) => p.token).join('')).toBe(probe);
  });

  it('forecasts past the end with --ahead by feeding each forecast back, and refuses a model that cannot', async () => {
    writeFileSync(join(folder, 'both.csv'), `level,inflow\n${readings.map((r) => `${r.level},${r.inflow}`).join('\n')}\n`);
    expect(
      weft([
        'train',
        'both.csv',
        '--examples',
        'streams',
        '--hidden',
        '8',
        '--window',
        '16',
        '--streams',
        '4',
        '--epochs',
        '2',
        '--out',
        'both.weft.json',
        '--quiet',
      ]).code,
    ).toBe(0);
    const tail = readings.slice(0, 40);
    const run = weft(
      ['run', 'both.weft.json', '-', '--ahead', '3', '--format', 'json'],
      `level,inflow\n${tail.map((r) => `${r.level},${r.inflow}`).join('\n')}\n`,
    );
    expect(run.code).toBe(0);
    const records = JSON.parse(run.out) as { row: number; made: string; 'level in 1': number; 'inflow in 1': number }[];
    expect(records).toHaveLength(43);
    expect(records.slice(40).map((r) => [r.row, r.made])).toEqual([
      [41, 'from forecasts'],
      [42, 'from forecasts'],
      [43, 'from forecasts'],
    ]);
    // The same recursion through the library: the forecast made at row 40 is the input of row 41, and so on.
    const file = await readWeightFile(readFileSync(join(folder, 'both.weft.json'), 'utf8'));
    const translator = createTranslator(file.metadata as Record<string, unknown>);
    const streams = (await createRuntime(file)).streams(1);
    let last: Record<string, number> = {};
    for (const r of tail) last = translator.outputs(streams.step(translator.inputs({ level: r.level, inflow: r.inflow })));
    for (let k = 0; k < 3; k++) {
      last = translator.outputs(streams.step(translator.inputs(last)));
      expect(records[40 + k]['level in 1']).toBe(Number(last.level.toPrecision(6)));
    }
    const refused = weft(['run', 'tank.weft.json', 'both.csv', '--ahead', '2']);
    expect(refused.code).toBe(2);
    expect(refused.err.trim()).toMatch(
      /^weft: --ahead feeds each forecast back as the next row, so the model must forecast every column it reads, 1 row ahead, and read no times; this one forecasts level 1 row\(s\) ahead and does not forecast inflow/,
    );
  });

  it('names the file, line and column of a row that is not a number, and of a ragged row, in one line', () => {
    const bad = weft(['run', 'tank.weft.json', '-'], 'hour,level,inflow\nh0,50,3\nh1,dry,3\n');
    expect(bad.code).toBe(1);
    expect(bad.err.trim()).toBe('weft: <stdin>:3:4: "dry" in column "level" is not a number');
    const ragged = weft(['run', 'tank.weft.json', '-'], 'hour\tlevel\tinflow\nh0\t50\t3\nh1\t50\n');
    expect(ragged.code).toBe(1);
    expect(ragged.err.trim()).toBe('weft: Bad data at <stdin>:3:6: expected 3 tab-separated fields, as the header has, received 2');
    const missing = weft(['run', 'tank.weft.json', '-', '--keep', 'date'], 'hour,level,inflow\nh0,50,3\n');
    expect(missing.err.trim()).toBe('weft: <stdin>: no column "date" (for --keep); the input has hour, level, inflow');
  });
});

describe('weft run on forecasts and classifications', () => {
  it('writes forecasts for a CSV to a file, and classes for labelled sequences as CSV', () => {
    const rows = Array.from({ length: 400 }, (_, i) => `${(20 + 5 * Math.sin(i / 6)).toFixed(3)},${(50 + 10 * Math.cos(i / 6)).toFixed(3)}`);
    writeFileSync(join(folder, 'room.csv'), `temperature,humidity\n${rows.join('\n')}\n`);
    const trained = weft([
      'train',
      'room.csv',
      '--examples',
      'streams',
      '--target',
      'temperature',
      '--horizon',
      '2',
      '--hidden',
      '8',
      '--window',
      '16',
      '--streams',
      '4',
      '--epochs',
      '2',
      '--out',
      'room.weft.json',
      '--quiet',
    ]);
    expect(trained.code).toBe(0);
    // --quiet: no progress, no notes, only the final result lines.
    expect(trained.err).toBe('');
    expect(trained.out).not.toMatch(/^(training a |loss (?!curve)|left out )/m);
    expect(trained.out.split('\n')[0]).toBe(
      'parts of room.csv, in time order: training lines 2–321 (320 rows); validation, for stopping and keeping weights, lines 322–361 (40 rows); test, scored once at the end, lines 362–401 (40 rows)',
    );
    expect(trained.out).toMatch(/^weight file: .*room\.weft\.json$/m);
    for (const name of ['model', 'naive', 'simple smoothing', 'Theta', 'linear'])
      expect(trained.out).toMatch(new RegExp(`^  ${name} +MAE [\\d.]+  RMSE [\\d.]+  MAPE`, 'm'));
    expect(trained.out).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline [\w -]+): MAE [\d.]+ against/m);
    writeFileSync(join(folder, 'new-room.csv'), `humidity,temperature\n55,21\n54,22\n52,23\n`);
    const run = weft(['run', 'room.weft.json', 'new-room.csv', '--out', 'forecast.csv']);
    expect(run.code).toBe(0);
    const forecast = readFileSync(join(folder, 'forecast.csv'), 'utf8').trim().split('\n');
    expect(forecast[0]).toBe('row,temperature in 2,temperature in 2 low,temperature in 2 high');
    expect(forecast).toHaveLength(4);
    for (const line of forecast.slice(1)) {
      const [, middle, low, high] = line.split(',').map(Number);
      expect(middle).toBeGreaterThan(5);
      expect(low).toBeLessThan(middle);
      expect(high).toBeGreaterThan(middle);
    }

    const labelled = Array.from({ length: 160 }, (_, i) => {
      const rising = i % 2 === 0;
      const items = Array.from({ length: 4 + (i % 5) }, (_, t) => (rising ? t : -t) + ((i * 7) % 3) * 0.1);
      return `${rising ? 'rising' : 'falling'},${items.map((v) => v.toFixed(2)).join(' ')}`;
    });
    writeFileSync(join(folder, 'trends.csv'), `label,sequence\n${labelled.join('\n')}\n`);
    const classifier = weft([
      'train',
      'trends.csv',
      '--hidden',
      '8',
      '--streams',
      '16',
      '--epochs',
      '8',
      '--rate',
      '0.02',
      '--out',
      'trends.weft.json',
      '--quiet',
    ]);
    expect(classifier.code).toBe(0);
    expect(classifier.out).toMatch(/^ {2}majority class +accuracy [\d.]+% {2}macro-F1 [\d.]+ {2}\(always "[a-z]+", the most common class in training\)$/m);
    expect(classifier.out).toMatch(/^counts by actual class \(rows\) and predicted class \(columns\):$/m);
    const classes = weft(['run', 'trends.weft.json', '-'], 'sequence\n"0 1 2 3 4"\n"0 -1 -2 -3"\n');
    expect(classes.code).toBe(0);
    expect(classes.out.split('\n')[0]).toBe('row,predicted,p(falling),p(rising)');
    expect(classes.out.split('\n')[1].split(',')[1]).toBe('rising');
    expect(classes.out.split('\n')[2].split(',')[1]).toBe('falling');
  });
});
