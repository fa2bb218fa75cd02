/**
 * `npm run demo` (demo.ts) on a short budget: it trains on the bundled greenhouse readings, compares with the
 * baselines, saves the weight file, loads it into the runtime, prints held-out forecasts in °C and says where its
 * files went.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const demo = fileURLToPath(new URL('../dist/demo.js', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-demo-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

describe('the demo', () => {
  it('trains, compares with every baseline, saves, reloads into the runtime and prints forecasts, in two epochs', () => {
    const result = spawnSync(process.execPath, [demo, folder], { encoding: 'utf8', env: { ...process.env, WEFT_DEMO_EPOCHS: '2' }, timeout: 120_000 });
    expect(result.status).toBe(0);
    expect(result.stdout).toMatch(/^ {2}model +MAE [\d.]+ {2}RMSE [\d.]+ {2}MAPE [\d.]+% {2}sMAPE [\d.]+% {2}MASE [\d.]+/m);
    for (const baseline of [
      'naive',
      'seasonal naive',
      'simple smoothing',
      'Holt',
      'damped trend',
      'Holt-Winters additive',
      'Holt-Winters multiplicative',
      'Theta',
      'linear',
    ])
      expect(result.stdout).toMatch(new RegExp(`^  ${baseline} +MAE`, 'm'));
    expect(result.stdout).toMatch(/^season of 96 rows from the time column \(rows 15 minutes apart\)/m);
    expect(result.stdout).toMatch(/^verdict: the model /m);
    const forecasts = result.stdout.split('\n').filter((line) => /^ {2}2026-\d\d-\d\dT\d\d:\d\d +-?[\d.]+ +-?[\d.]+ +-?[\d.]+$/.test(line));
    expect(forecasts.length).toBeGreaterThanOrEqual(5);
    expect(existsSync(join(folder, 'greenhouse.weft.json'))).toBe(true);
    expect(result.stdout).toContain('see the README before letting any model drive decisions');
  });
});
