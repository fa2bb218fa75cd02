/**
 * Fuzzing what the command does with hostile weight files and checkpoints (fast-check, seeded): the model
 * description, the metadata and the training state are mutated (values retyped, made huge, given control
 * characters, names like __proto__), not only bytes. Each mutated file goes the whole way a user's would — read,
 * metadata checked, model built, runtime made, `weft inspect` rendered — and the test asserts that only the
 * library's or the command's own errors arise, that what would reach the terminal has no control character and no
 * line longer than the stated maximum, and that memory stays bounded. WEFT_FUZZ_RUNS raises the count
 * (scripts/fuzz-weight-file.sh runs 50,000; CI runs 1,000 per property).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { loadModel, modelTensors, writeCheckpoint, writeWeightFile } from '@weft/io';
import { loadCheckpoint, loadWeightFile } from '@weft/io/node';
import { Runtime } from '@weft/io/runtime';
import { parseArgs } from '../src/args.js';
import { CommandError } from '../src/errors.js';
import { inspect, inspectFlags } from '../src/inspect.js';
import { errorReport } from '../src/main.js';
import { LONGEST_LINE } from '../src/terminal.js';

const RUNS = Number(process.env.WEFT_FUZZ_RUNS ?? 1000);
const folder = mkdtempSync(join(tmpdir(), 'weft-fuzz-files-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

const description = { input: { kind: 'values' as const, width: 2 }, layers: [{ cell: 'gru' as const, hidden: 3 }], readout: { width: 2 } };
const metadata = { task: 'forecast', columns: ['a', 'b'], targetColumns: ['a', 'b'], horizon: 2, normalisation: { mean: [0, 1], deviation: [1, 2] } };

async function files(): Promise<{ weights: Json; checkpoint: Json }> {
  const model = buildModel(description, { seed: 1 });
  const weights = JSON.parse(await writeWeightFile(model.description, modelTensors(model), { metadata })) as Json;
  const values = Array.from({ length: 200 }, (_, i) => Math.sin(i / 5));
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'values', values, features: 2 }, { streams: 2, window: 8 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: 1,
  });
  trainer.step();
  const checkpoint = JSON.parse(await writeCheckpoint(trainer, model, metadata)) as Json;
  return { weights, checkpoint };
}

function paths(value: Json, prefix: (string | number)[] = []): (string | number)[][] {
  if (value === null || typeof value !== 'object') return [prefix];
  const keys: (string | number)[] = Array.isArray(value) ? value.map((_, i) => i) : Object.keys(value);
  return [prefix, ...keys.flatMap((k) => paths((value as Record<string, Json>)[k as string], [...prefix, k]))];
}

function edited(root: Json, path: (string | number)[], value: Json | undefined): string {
  const copy = JSON.parse(JSON.stringify(root)) as Json;
  if (path.length === 0) return JSON.stringify(copy);
  let parent = copy as Record<string, Json>;
  for (const key of path.slice(0, -1)) parent = parent[key as string] as Record<string, Json>;
  const key = path[path.length - 1] as string;
  if (value === undefined && !Array.isArray(parent)) delete parent[key];
  else parent[key] = value ?? null;
  return JSON.stringify(copy).replace('"__INFINITY__"', '1e999');
}

const hostile: (Json | undefined)[] = [
  undefined,
  null,
  true,
  -1,
  0,
  2.5,
  1e308,
  2 ** 31,
  2 ** 40,
  '',
  'x'.repeat(100_000),
  'line\nweft: forged',
  '\u001b]0;title\u0007\u001b[31m',
  '\u202eevil',
  '__proto__',
  '__INFINITY__',
  [],
  {},
  [0],
  ['a'],
  [1e9, 1e9],
  { mean: [0], deviation: [0] },
  { __x: 1 },
  [null, 'b'],
  Array.from({ length: 5000 }, (_, i) => `c${i}`),
  { cell: 'lstm', hidden: 100000 },
  { kind: 'embedding', vocabulary: 1e6, width: 1e6 },
];

/** Every way the command could report a problem with this file, checked for what may reach the terminal. */
async function throughTheCommand(text: string, kind: 'weights' | 'checkpoint'): Promise<void> {
  const path = join(folder, `case.${kind}.json`);
  writeFileSync(path, text);
  const outputs: string[] = [];
  try {
    if (kind === 'weights') {
      const file = await loadWeightFile(path);
      loadModel(file);
      new Runtime(file);
    } else {
      await loadCheckpoint(path);
    }
    outputs.push(await inspect(parseArgs('inspect', [path], inspectFlags)));
  } catch (error) {
    if (!(error instanceof WeftError) && !(error instanceof CommandError)) throw new Error(`not weft's own error: ${String(error)}`);
    outputs.push(errorReport(error, false).text);
  }
  for (const output of outputs) {
    expect(output).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/);
    for (const row of output.split('\n')) expect(row.length).toBeLessThanOrEqual(LONGEST_LINE);
  }
}

describe(`hostile weight files and checkpoints through the command (${RUNS} cases per property, seeded)`, () => {
  const before = process.memoryUsage().rss;

  for (const kind of ['weights', 'checkpoint'] as const) {
    it(`meets only weft's errors, prints nothing raw and stays within memory: mutated ${kind === 'weights' ? 'weight files' : 'checkpoints'}`, async () => {
      const root = (await files())[kind];
      // The description, the metadata and the training state, not the tensor bytes (the reader's own fuzzing does those).
      const all = paths(root).filter((p) => p.length > 0 && ['model', 'metadata', 'training'].includes(p[0] as string));
      await fc.assert(
        fc.asyncProperty(fc.nat(all.length - 1), fc.nat(hostile.length - 1), async (which, value) => {
          await throughTheCommand(edited(root, all[which], hostile[value]), kind);
        }),
        { numRuns: RUNS, seed: kind === 'weights' ? 11 : 13 },
      );
      expect(process.memoryUsage().rss - before).toBeLessThan(400 * 1024 * 1024);
    }, 600_000);
  }
});
