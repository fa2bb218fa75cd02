/**
 * Fuzzing the weight-file reader with fast-check (seeded): byte flips, truncations, deleted and retyped fields,
 * huge or negative shapes, deep nesting. Whatever arrives, the reader returns a checked file or throws the
 * library's own error; it never hangs (each case is timed by the runner) and never builds a tensor past its cap.
 * WEFT_FUZZ_RUNS raises the count (scripts/fuzz-weight-file.sh runs 50,000).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';

const RUNS = Number(process.env.WEFT_FUZZ_RUNS ?? 2000);
const CAP = 5_000;

async function validFile(): Promise<string> {
  const model = buildModel(
    {
      input: { kind: 'embedding', vocabulary: 5, width: 3 },
      layers: [
        { cell: 'gru', hidden: 4, resetAfterProduct: true },
        { cell: 'lstm', hidden: 3, peepholes: true },
      ],
      readout: { width: 5 },
    },
    { seed: 1 },
  );
  const dtypes: Record<string, 'f32' | 'f16' | 'i8'> = {};
  model.parameters().forEach((p, i) => (dtypes[p.name] = (['f32', 'f16', 'i8'] as const)[i % 3]));
  return writeWeightFile(model.description, modelTensors(model), { dtype: dtypes, metadata: { task: 'fuzz', vocabulary: ['a', 'b', 'c', 'd', 'e'] } });
}

/** Reads and reports only what is allowed to happen: a file within the cap, or a WeftError. */
async function outcome(text: string): Promise<'read' | 'refused'> {
  try {
    const file = await readWeightFile(text, { maxElements: CAP });
    const total = file.tensors.reduce((n, t) => n + t.values.length, 0);
    expect(total).toBeLessThanOrEqual(CAP);
    return 'read';
  } catch (error) {
    if (!(error instanceof WeftError)) throw new Error(`not the library's error: ${String(error)}`);
    expect(error.message.length).toBeGreaterThan(0);
    return 'refused';
  }
}

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

function paths(value: Json, prefix: (string | number)[] = []): (string | number)[][] {
  if (value === null || typeof value !== 'object') return [prefix];
  const keys: (string | number)[] = Array.isArray(value) ? value.map((_, i) => i) : Object.keys(value);
  return [prefix, ...keys.flatMap((k) => paths((value as Record<string, Json>)[k as string], [...prefix, k]))];
}

function edit(root: Json, path: (string | number)[], change: (parent: Record<string, Json> | Json[], key: string | number) => void): Json {
  const copy = JSON.parse(JSON.stringify(root)) as Json;
  if (path.length === 0) return copy;
  let parent = copy as Record<string, Json>;
  for (const key of path.slice(0, -1)) parent = parent[key as string] as Record<string, Json>;
  change(parent, path[path.length - 1]);
  return copy;
}

const strangeValues: Json[] = [null, true, -1, 0, 1e308, -2147483649, 2 ** 31, 'f64', '', '====', [], {}, [-5], [1e9, 1e9], [2 ** 40], 'AAAA', { __x: 1 }];

describe(`weight-file reader under fuzzing (${RUNS} cases per property, seeded)`, () => {
  it('survives byte flips and truncations of a valid file', async () => {
    const text = await validFile();
    expect(await outcome(text)).toBe('read');
    await fc.assert(
      fc.asyncProperty(fc.nat(text.length - 1), fc.integer({ min: 0, max: 255 }), fc.boolean(), async (at, byte, truncate) => {
        const changed = truncate ? text.slice(0, at) : text.slice(0, at) + String.fromCharCode(byte) + text.slice(at + 1);
        await outcome(changed);
      }),
      { numRuns: RUNS, seed: 20261202 },
    );
  });

  it('survives deleted and retyped fields, huge and negative shapes', async () => {
    const root = JSON.parse(await validFile()) as Json;
    const all = paths(root);
    await fc.assert(
      fc.asyncProperty(fc.nat(all.length - 1), fc.nat(strangeValues.length - 1), fc.boolean(), async (which, value, remove) => {
        const path = all[which];
        const changed = edit(root, path, (parent, key) => {
          if (remove && !Array.isArray(parent)) delete (parent as Record<string, Json>)[key as string];
          else (parent as Record<string, Json>)[key as string] = strangeValues[value];
        });
        await outcome(JSON.stringify(changed));
      }),
      { numRuns: RUNS, seed: 7 },
    );
  });

  it('refuses deep nesting and shapes far past the cap without building them', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 65, max: 200_000 }), async (depth) => {
        expect(await outcome(`{"format":"weft-weights","version":1,"metadata":${'['.repeat(depth)}${']'.repeat(depth)}}`)).toBe('refused');
      }),
      { numRuns: Math.min(RUNS, 300), seed: 3 },
    );
    const root = JSON.parse(await validFile()) as { tensors: { shape: number[] }[] };
    root.tensors[0].shape = [100000, 100000, 100000];
    expect(await outcome(JSON.stringify(root))).toBe('refused');
  });
});
