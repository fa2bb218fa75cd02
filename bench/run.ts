/**
 * `npm run bench [-- --json PATH] [-- --only PREFIX] [-- --time SECONDS]`: runs every bench module and writes
 * the results file (default bench/results.json). Timing lives here and only here; tests never assert on time.
 */
import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { cpus } from 'node:os';
import { dirname, resolve } from 'node:path';
import { defaultBackend, javascriptBackend, setDefaultBackend } from '@weft/core';
import type { BenchCase, BenchResult, Derived } from './harness.js';
import { measure } from './harness.js';
import * as baselines from './baselines.bench.js';
import * as forecast from './forecast.bench.js';
import * as matmul from './matmul.bench.js';
import * as pairs from './pairs.bench.js';
import * as runtime from './runtime.bench.js';
import * as train from './train.bench.js';
import * as window from './window.bench.js';

const modules: { cases: BenchCase[]; derived?: Derived }[] = [matmul, window, train, pairs, runtime, baselines, forecast];

function option(name: string, fallback: string): string {
  const index = process.argv.indexOf(`--${name}`);
  if (index < 0) return fallback;
  const value = process.argv[index + 1];
  if (value === undefined || value.startsWith('--')) {
    console.error(`bench: --${name} needs a value`);
    process.exit(2);
  }
  return value;
}

const path = resolve(option('json', 'bench/results.json'));
const only = option('only', '');
const seconds = Number(option('time', '2'));
if (!(seconds > 0)) {
  console.error(`bench: --time must be a number of seconds > 0, got ${option('time', '2')}`);
  process.exit(2);
}

// Every case runs on the default backend under its own id, and again on the JavaScript backend as `<id>.js`
// (the same run, so the ratios below compare like with like).
const chosen = defaultBackend();
const results: Record<string, BenchResult> = {};
for (const module of modules) {
  for (const item of module.cases) {
    if (!item.id.startsWith(only)) continue;
    const runs: [string, typeof chosen][] = [[item.id, chosen]];
    if (item.defaultOnly !== true && chosen !== javascriptBackend) runs.push([`${item.id}.js`, javascriptBackend]);
    for (const [id, backend] of runs) {
      setDefaultBackend(backend);
      const result = await measure(item, seconds, backend);
      results[id] = result;
      console.log(
        `${id.padEnd(52)} ${String(result.value).padStart(10)} ${result.unit}${result.marginPercent === undefined ? '' : `  ±${result.marginPercent}%`}`,
      );
    }
    setDefaultBackend(chosen);
  }
}
if ('step.'.startsWith(only) || only.startsWith('step.')) {
  for (const [id, result] of Object.entries(runtime.numpyReference())) {
    results[id] = result;
    console.log(`${id.padEnd(52)} ${String(result.value).padStart(10)} ${result.unit}`);
  }
}
if ('runtime'.startsWith(only) || only.startsWith('runtime')) {
  for (const [id, result] of Object.entries(await runtime.counts())) {
    results[id] = result;
    console.log(`${id.padEnd(48)} ${String(result.value).padStart(10)} ${result.unit}`);
  }
}
// <id>.speedup-over-js for the matrix product, window, training and streaming-step ids: how many times faster
// the default backend ran than the JavaScript backend (a rate over a rate, or a time over a time).
for (const [id, result] of Object.entries(results)) {
  const twin = results[`${id}.js`];
  if (twin === undefined || !/^(matmul|window|train|step)\./.test(id)) continue;
  const ratio = result.unit === 'GFLOP/s' ? result.value / twin.value : twin.value / result.value;
  results[`${id}.speedup-over-js`] = { value: Number(ratio.toPrecision(4)), unit: 'ratio' };
  console.log(`${`${id}.speedup-over-js`.padEnd(52)} ${String(results[`${id}.speedup-over-js`].value).padStart(10)} ratio`);
}
for (const module of modules) {
  if (module.derived === undefined) continue;
  for (const [id, result] of Object.entries(module.derived(results))) {
    results[id] = result;
    console.log(`${id.padEnd(48)} ${String(result.value).padStart(10)} ${result.unit}`);
  }
}

const file = {
  node: process.version,
  cpus: `${cpus().length} × ${cpus()[0]?.model ?? 'unknown'}`,
  when: new Date().toISOString(),
  backend: chosen.describe(),
  backends: { '<id>': chosen.name, '<id>.js': javascriptBackend.name },
  results,
};
mkdirSync(dirname(path), { recursive: true });
const temporary = `${path}.${process.pid}.tmp`;
writeFileSync(temporary, `${JSON.stringify(file, null, 2)}\n`);
renameSync(temporary, path);
console.log(`wrote ${path}`);
