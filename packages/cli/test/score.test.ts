/**
 * `weft score` (score.ts) end to end, on tasks generated here whose answers are known:
 * - a long table (one step per row, three number columns per step) where the class is the column with the
 *   highest mean over the sequence, so every column is needed: trained with --id-column, the model must score
 *   well above the majority-class baseline, and the counts by actual and predicted class that `weft score`
 *   prints must equal the ones this test counts from `weft run`'s predictions and the true labels;
 * - a forecast model scored on a later file: MAE on its last fifth against a hand computation from `weft run`'s
 *   forecasts, and every baseline present; on the file it was trained on, the same verdict as `weft train`, and
 *   a warning when the part scored overlaps the rows trained on.
 * One-line errors: a classify file with one class, ids whose steps are out of order.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-score-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const weft = (args: string[], input?: string) => {
  const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', input, timeout: 120_000 });
  return { code: result.status, out: result.stdout, err: result.stderr };
};

/** Sequences of 10 steps × 3 columns; the label names the column with the highest mean. */
function longTable(seed: string, count: number): { text: string; labels: Map<string, string> } {
  const random = new Random(seed);
  const names = ['pressure', 'flow', 'heat'];
  const lines = ['unit,step,label,pressure,flow,heat'];
  const labels = new Map<string, string>();
  for (let i = 0; i < count; i++) {
    const means = names.map(() => random.between(-1, 1));
    const steps = Array.from({ length: 10 }, () => means.map((m) => m + 0.5 * random.normal()));
    const sums = names.map((_, j) => steps.reduce((s, row) => s + row[j], 0));
    const label = names[sums.indexOf(Math.max(...sums))];
    labels.set(`u${i}`, label);
    steps.forEach((row, t) => lines.push(`u${i},${t + 1},${label},${row.map((v) => v.toFixed(4)).join(',')}`));
  }
  return { text: `${lines.join('\n')}\n`, labels };
}

describe('weft score', () => {
  it('scores a classifier of three number columns per step beside a logistic regression, with counts that match weft run', () => {
    writeFileSync(join(folder, 'units.csv'), longTable('train', 600).text);
    const trained = weft([
      'train',
      'units.csv',
      '--id-column',
      'unit',
      '--step-column',
      'step',
      '--cell',
      'gru',
      '--hidden',
      '16',
      '--epochs',
      '30',
      '--rate',
      '0.01',
      '--streams',
      '16',
      '--out',
      'units.weft.json',
      '--quiet',
    ]);
    expect(trained.code).toBe(0);
    // The class is the column with the highest mean: a logistic regression on the means can be perfect, so the
    // verdict may go either way; it must name the figures.
    expect(trained.out).toMatch(/^ {2}logistic regression +accuracy [\d.]+%/m);
    expect(trained.out).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline logistic regression): accuracy/m);
    const fresh = longTable('fresh', 150);
    writeFileSync(join(folder, 'fresh.csv'), fresh.text);
    const scored = weft(['score', 'units.weft.json', 'fresh.csv', '--format', 'json']);
    expect(scored.code).toBe(0);
    const report = JSON.parse(scored.out) as {
      what: string;
      model: { value: number; scores: { confusion: number[][]; macroF1: number } };
      baselines: { name: string; value: number }[];
      names: string[];
    };
    console.log(
      `long table: accuracy ${report.model.value}, macro-F1 ${report.model.scores.macroF1}, baselines ${report.baselines.map((b) => `${b.name} ${b.value}`).join(', ')}`,
    );
    expect(report.baselines.map((b) => b.name)).toEqual(['majority class', 'logistic regression']);
    expect(report.what).toBe('30 of the 150 labelled sequences (1500 step rows) of fresh.csv, drawn at random');
    expect(report.model.value).toBeGreaterThan(0.8);
    expect(report.model.value).toBeGreaterThan(report.baselines[0].value + 0.3);
    // The counts, from weft run's predictions and the true labels of the 30 sequences drawn as documented: the
    // first 30 of a shuffle of the 150 (in file order) by core's generator, seed "1:split".
    const run = weft(['run', 'units.weft.json', 'fresh.csv', '--format', 'json']);
    expect(run.code).toBe(0);
    const predictions = JSON.parse(run.out) as { unit: string; predicted: string }[];
    expect(predictions).toHaveLength(150);
    const order = predictions.map((_, i) => i);
    new Random('1:split').shuffle(order);
    const counted = report.names.map(() => report.names.map(() => 0));
    for (const i of order.slice(0, 30)) counted[report.names.indexOf(fresh.labels.get(predictions[i].unit)!)][report.names.indexOf(predictions[i].predicted)]++;
    expect(report.model.scores.confusion).toEqual(counted);
    const text = weft(['score', 'units.weft.json', 'fresh.csv']);
    expect(text.out).toMatch(/^counts by actual class \(rows\) and predicted class \(columns\):$/m);
  }, 120_000);

  it("scores a forecast model with the MAE of weft run's own forecasts on the last fifth, beside every baseline", () => {
    const rows = Array.from({ length: 300 }, (_, t) => `${(20 + 5 * Math.sin(t / 6)).toFixed(3)},${(Math.cos(t / 6)).toFixed(3)}`);
    writeFileSync(join(folder, 'kiln.csv'), `heat,draft\n${rows.join('\n')}\n`);
    expect(
      weft([
        'train',
        'kiln.csv',
        '--examples',
        'streams',
        '--target',
        'heat',
        '--hidden',
        '8',
        '--epochs',
        '3',
        '--streams',
        '4',
        '--out',
        'kiln.weft.json',
        '--quiet',
      ]).code,
    ).toBe(0);
    const rows2 = Array.from({ length: 200 }, (_, t) => `${(21 + 5 * Math.sin(t / 6 + 1)).toFixed(3)},${(Math.cos(t / 6 + 1)).toFixed(3)}`);
    writeFileSync(join(folder, 'kiln-later.csv'), `heat,draft\n${rows2.join('\n')}\n`);
    const scored = JSON.parse(weft(['score', 'kiln.weft.json', 'kiln-later.csv', '--format', 'json', '--season', 'none']).out) as {
      what: string;
      context: string[];
      model: { value: number; overall: { count: number } };
      baselines: { name: string }[];
    };
    expect(scored.baselines.map((b) => b.name)).toEqual(['naive', 'simple smoothing', 'Holt', 'damped trend', 'Theta', 'linear']);
    expect(scored.what).toBe('40 forecasts of heat, 1 row ahead, for lines 162–201 (40 rows) of kiln-later.csv');
    expect(scored.context).toContain(
      "the model's state starts at zero on line 2 and runs through every row; the baselines are fitted on lines 2–161, the rows before the scored ones",
    );
    const forecasts = (JSON.parse(weft(['run', 'kiln.weft.json', 'kiln-later.csv', '--format', 'json']).out) as Record<string, number>[]).map(
      (r) => r['heat in 1'],
    );
    const heat = rows2.map((r) => Number(r.split(',')[0]));
    let error = 0;
    for (let t = 159; t + 1 < heat.length; t++) error += Math.abs(heat[t + 1] - forecasts[t]);
    expect(scored.model.overall.count).toBe(40);
    // weft run prints 6 significant digits, so the two agree to about 1e-4 °C.
    expect(Math.abs(scored.model.value - error / 40)).toBeLessThan(1e-3);
  }, 60_000);

  it("repeats weft train's verdict on the file trained on, and warns when the part asked overlaps the rows trained on", () => {
    const trained = weft(['train', 'kiln.csv', '--target', 'heat', '--hidden', '8', '--epochs', '3', '--streams', '4', '--out', 'kiln2.weft.json']);
    const trainVerdict = trained.out.split('\n').find((l) => l.startsWith('verdict: '));
    const same = weft(['score', 'kiln2.weft.json', 'kiln.csv']);
    expect(same.out).toMatch(/^test: 30 forecasts of heat, 1 row ahead, for the training run's test part, lines 272–301 \(30 rows\) of kiln\.csv$/m);
    // The same verdict: the same baseline and figures; the model's MAE agrees to f32 rounding (train scores the
    // model in memory, score the runtime on the saved file; their kernels may round differently in the last bit).
    const scoreVerdict = same.out.split('\n').find((l) => l.startsWith('verdict: '))!;
    const numbers = (line: string) =>
      line
        .replace(/[\d.]+%/g, '')
        .match(/[\d.]+(e-?\d+)?/g)!
        .map(Number);
    expect(scoreVerdict.replace(/[\d.]+/g, '#')).toBe(trainVerdict!.replace(/[\d.]+/g, '#'));
    numbers(scoreVerdict).forEach((v, i) => expect(Math.abs(v - numbers(trainVerdict!)[i])).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(v))));
    const overlap = weft(['score', 'kiln2.weft.json', 'kiln.csv', '--test', '0.5']);
    expect(overlap.out.split('\n')[0]).toBe(
      "warning: this is the file the model was trained on (the same SHA-256), and 120 of the 150 scored rows were trained on or used for stopping: the model's figures are optimistic; leave out --test to score its own test part, or score new data",
    );
  }, 60_000);

  it('refuses a classify file with one class, and a long table with steps out of order, in one line each', () => {
    writeFileSync(join(folder, 'one.csv'), `label,sequence\n${Array.from({ length: 20 }, () => 'calm,"1 2 3"').join('\n')}\n`);
    const one = weft(['train', 'one.csv']);
    expect(one.code).toBe(1);
    expect(one.err.trim()).toBe(
      'weft: Bad data at one.csv:2:1: expected labels of at least two classes (a classifier needs them), received the label "calm" on every sequence',
    );
    writeFileSync(join(folder, 'order.csv'), 'unit,step,label,pressure\nu1,1,a,0.1\nu1,3,a,0.2\nu1,2,a,0.3\nu2,1,b,0.1\n');
    const order = weft(['train', 'order.csv', '--id-column', 'unit', '--step-column', 'step']);
    expect(order.code).toBe(1);
    expect(order.err.trim()).toBe(
      'weft: Bad data at order.csv:4:4: expected a step after 3 (the step of id "u1" on line 3); steps of a sequence must increase down the file, received 2',
    );
  });
});
