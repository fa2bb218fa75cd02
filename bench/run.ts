/**
 * `npm run bench [-- --json PATH] [-- --only PREFIX] [-- --time SECONDS]`: runs every bench module and writes
 * the results file (default bench/results.json). Timing lives here and only here; tests never assert on time.
 */
import { mkdirSync, renameSync, writeFileSync } from 'node:fs';
import { cpus } from 'node:os';
import { dirname, resolve } from 'node:path';
import type { BenchCase, BenchResult, Derived } from './harness.js';
import { measure } from './harness.js';
import * as matmul from './matmul.bench.js';
import * as runtime from './runtime.bench.js';
import * as train from './train.bench.js';
import * as window from './window.bench.js';

const modules: { cases: BenchCase[]; derived?: Derived }[] = [matmul, window, train, runtime];

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

const results: Record<string, BenchResult> = {};
for (const module of modules) {
  for (const item of module.cases) {
    if (!item.id.startsWith(only)) continue;
    const result = await measure(item, seconds);
    results[item.id] = result;
    console.log(`${item.id.padEnd(48)} ${String(result.value).padStart(10)} ${result.unit}  ±${result.marginPercent}%`);
  }
}
if ('runtime'.startsWith(only) || only.startsWith('runtime')) {
  for (const [id, result] of Object.entries(await runtime.counts())) {
    results[id] = result;
    console.log(`${id.padEnd(48)} ${String(result.value).padStart(10)} ${result.unit}`);
  }
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
  results,
};
mkdirSync(dirname(path), { recursive: true });
const temporary = `${path}.${process.pid}.tmp`;
writeFileSync(temporary, JSON.stringify(file, null, 2) + '\n');
renameSync(temporary, path);
console.log(`wrote ${path}`);
