/**
 * The verdict `weft train` prints, on data where the answer is known from outside the project:
 * - Open data: daily Seattle weather 2012–2015, vega-datasets 3.2.1 (npm, development dependency), file
 *   data/seattle-weather.csv (the package credits NOAA's daily climate records; from memory). The README's command
 *   forecasts the next day's maximum temperature with the last 20% of the days held out, and must beat every
 *   baseline it prints (persistence, training mean, seasonal naive, linear least squares).
 * - A random walk with drift, generated here: the best forecast of a random walk is the value now (persistence;
 *   common practice), and the held-out part drifts above the training range, so the model must lose to some
 *   baseline, and the verdict must say so and name it.
 * - A rising series, generated here: its held-out levels lie above every level trained on, which a model of the
 *   level cannot reach; with --transform differences it forecasts the change and comes close to persistence
 *   (common practice: difference a trending series before modelling it).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { parseArgs, train } from '@weft/cli';
import { trainFlags } from '../packages/cli/src/train.js';

const seattle = fileURLToPath(new URL('../node_modules/vega-datasets/data/seattle-weather.csv', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-verdicts-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

async function trainQuietly(argv: string[]) {
  const lines: string[] = [];
  const outcome = await train(parseArgs('train', argv, trainFlags), (line) => lines.push(line));
  return { outcome, text: lines.join('\n') };
}

describe('the held-out verdict', () => {
  it('beats every printed baseline on next-day maximum temperature in Seattle (the README command)', async () => {
    const { outcome, text } = await trainQuietly([seattle, '--target', 'temp_max', '--validation', '0.2', '--quiet', '--out', join(folder, 'seattle.weft.json')]);
    const report = outcome.heldOut;
    console.log(text.split('\n').filter((l) => l.startsWith('  ') || l.startsWith('verdict')).join('\n'));
    expect(report.baselines.map((b) => b.name)).toEqual(['persistence', 'training mean', 'seasonal naive', 'linear']);
    for (const baseline of report.baselines) expect(report.model.value).toBeLessThan(baseline.value);
    expect(text).toMatch(/^verdict: the model beats every baseline: MAE [\d.]+ against [\d.]+ for the best baseline, (persistence|linear) /m);
    // The held-out rows are the last 20% of the 1461 days, scored in °C.
    expect(report.what).toContain('seattle-weather.csv (the last 292 rows, not trained on)');
  }, 60_000);

  it('says plainly that the model loses to the best baseline of a random walk, and names it', async () => {
    const random = new Random('walk');
    let level = 0;
    const rows = Array.from({ length: 1200 }, () => {
      level += 0.05 + random.normal();
      return level.toFixed(4);
    });
    const file = join(folder, 'walk.csv');
    writeFileSync(file, `level\n${rows.join('\n')}\n`);
    const { outcome, text } = await trainQuietly([file, '--validation', '0.25', '--hidden', '16', '--epochs', '5', '--quiet', '--out', join(folder, 'walk.weft.json')]);
    const report = outcome.heldOut;
    const best = report.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    expect(report.model.value).toBeGreaterThan(best.value);
    expect(text).toContain(`verdict: the model does NOT beat the baseline ${best.name}: MAE `);
    expect(text).toMatch(/train longer \(--epochs, --patience\), on more data, or use the baseline$/m);
  }, 60_000);

  it('forecasts a rising series far better as differences than as levels', async () => {
    const rows = Array.from({ length: 1200 }, (_, t) => (0.05 * t + 2 * Math.sin(t / 5)).toFixed(4));
    const file = join(folder, 'rising.csv');
    writeFileSync(file, `level\n${rows.join('\n')}\n`);
    const levels = await trainQuietly([file, '--validation', '0.2', '--quiet', '--out', join(folder, 'levels.weft.json')]);
    const changes = await trainQuietly([file, '--validation', '0.2', '--transform', 'differences', '--quiet', '--out', join(folder, 'changes.weft.json')]);
    const persistence = changes.outcome.heldOut.baselines.find((b) => b.name === 'persistence')!.value;
    console.log(`rising series MAE: levels ${levels.outcome.heldOut.model.value}, differences ${changes.outcome.heldOut.model.value}, persistence ${persistence}`);
    expect(changes.outcome.heldOut.model.value).toBeLessThan(0.3 * levels.outcome.heldOut.model.value);
    expect(changes.outcome.heldOut.model.value).toBeLessThan(1.2 * persistence);
  }, 60_000);
});
