/**
 * The pictures weft writes, rendered by Chromium (Debian's, through playwright-core) as a user opens them: the loss
 * curve of a 58,000-step run and of a 20-step run, and the forecast picture of `weft run --plot`. Each is asserted on
 * the elements Chromium laid out (labelled axes, round tick values, the kept step marked, a log scale where the loss
 * spans more than a decade) and saved as a PNG under artifacts/ for a person to look at.
 */
import { existsSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { lossCurveSvg } from '../packages/cli/src/plot.js';
import { forecastSvg } from '../packages/cli/src/forecast-plot.js';

const executable = '/usr/bin/chromium';
const available = existsSync(executable);
if (!available && process.env.CI !== undefined) throw new Error(`${executable} is missing: .ci/run should have installed Debian's chromium`);
const artifacts = fileURLToPath(new URL('../artifacts/', import.meta.url));
let browser: Browser;
let page: Page;

/** The SVG laid out by Chromium, saved as a PNG, and the texts of the elements of each class asked. */
async function render(svg: string, name: string, classes: readonly string[]): Promise<Record<string, string[]>> {
  const size = /width="(\d+)" height="(\d+)"/.exec(svg)!;
  await page.setViewportSize({ width: Number(size[1]), height: Number(size[2]) });
  await page.setContent(`<!doctype html><body style="margin:0">${svg}</body>`);
  mkdirSync(artifacts, { recursive: true });
  await page.screenshot({ path: join(artifacts, `${name}.png`) });
  const found: Record<string, string[]> = {};
  for (const c of classes) found[c] = await page.$$eval(`svg .${c}`, (elements) => elements.map((e) => e.textContent ?? ''));
  return found;
}

describe.skipIf(!available)('the pictures, rendered', () => {
  beforeAll(async () => {
    browser = await chromium.launch({ executablePath: executable, headless: true, args: ['--no-sandbox', '--disable-gpu', '--no-first-run'] });
    page = await browser.newPage();
  }, 60_000);
  afterAll(async () => browser?.close());

  it('draws a 58,000-step run on a log scale with round ticks, labelled axes and the kept step marked', async () => {
    const random = new Random('long run');
    const training = Array.from({ length: 58_000 }, (_, i) => ({
      step: i + 1,
      loss: 3 / Math.sqrt(1 + i / 20) + 0.05 + (0.05 * random.normal()) / Math.sqrt(1 + i / 500),
    }));
    const validation = Array.from({ length: 580 }, (_, i) => ({ step: 100 * (i + 1), loss: 3 / Math.sqrt(1 + 5 * (i + 1)) + 0.08 }));
    const svg = lossCurveSvg(training, validation, 'a long run', 40_100);
    const found = await render(svg, 'loss-58000-steps', ['axis-label', 'loss-tick-label', 'step-tick-label', 'kept', 'kept-label']);
    expect(found['axis-label']).toEqual(['step', 'loss (log scale)']);
    // Round values only: 1, 2 or 5 times a power of ten on the log scale, round thousands of steps.
    for (const label of found['loss-tick-label']) expect(label).toMatch(/^[125](e-?\d+|0*)?$|^0\.0*[125]$/);
    expect(found['loss-tick-label'].length).toBeGreaterThanOrEqual(4);
    expect(found['step-tick-label']).toEqual(['0', '10,000', '20,000', '30,000', '40,000', '50,000']);
    expect(found.kept).toHaveLength(1);
    expect(found['kept-label']).toEqual(['weights kept: step 40,100']);
    expect(svg.length).toBeLessThan(128 * 1024);
  }, 60_000);

  it('draws a 20-step run on a linear scale from 0 with every fifth step labelled and the kept step marked', async () => {
    const training = Array.from({ length: 20 }, (_, i) => ({ step: i + 1, loss: 0.9 - 0.02 * i }));
    const svg = lossCurveSvg(
      training,
      [
        { step: 10, loss: 0.8 },
        { step: 20, loss: 0.72 },
      ],
      'a short run',
      20,
    );
    const found = await render(svg, 'loss-20-steps', ['axis-label', 'loss-tick-label', 'step-tick-label', 'kept-label', 'validation']);
    expect(found['axis-label']).toEqual(['step', 'loss']);
    expect(found['loss-tick-label']).toEqual(['0', '0.2', '0.4', '0.6', '0.8', '1']);
    expect(found['step-tick-label']).toEqual(['0', '5', '10', '15', '20']);
    expect(found['kept-label']).toEqual(['weights kept: step 20']);
    expect(found.validation).toHaveLength(2);
  }, 60_000);

  it("draws many series' forecasts with their bands, two to a row", async () => {
    const random = new Random('bands');
    const traces = ['north', 'south', 'east'].map((title, s) => {
      const actual = Array.from({ length: 120 }, (_, i) => (s + 1) * 100 + 20 * Math.sin(i / 6) + 5 * random.normal());
      const forecast = actual.map((_, i) => (i < 24 ? NaN : (s + 1) * 100 + 20 * Math.sin(i / 6)));
      return { title, actual, forecast, low: forecast.map((f) => f - 10 * (s + 1)), high: forecast.map((f) => f + 10 * (s + 1)) };
    });
    await render(forecastSvg(traces, 'three sites', 0.95), 'forecast-bands', []);
    const bands = await page.$$eval('svg polygon', (elements) => elements.length);
    expect(bands).toBe(3);
    const captions = await page.$$eval('svg text', (elements) => elements.map((e) => e.textContent ?? '').filter((t) => / inside the band$/.test(t)));
    expect(captions.map((c) => c.split(':')[0])).toEqual(['north', 'south', 'east']);
  }, 60_000);
});
