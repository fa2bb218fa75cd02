/**
 * The inference runtime: batch-1 streaming step latency (one sample in, one output out, state carried) for LSTM
 * and GRU models of several sizes (µs per step, input width i, hidden h, readout to 8 values), and the size of
 * the runtime entry bundled with esbuild (minified, gzipped) in bytes.
 *
 * Decision these numbers led to: a single stream reads each weight matrix in place (no packing for fewer than four
 * rows), so a step costs about as much as its matrix-vector products.
 *
 * On WebAssembly a layer step is one call (products, bias and gates fused, weights packed once into 8-column
 * panels). In the last full run the LSTM at 32 inputs and 64 hidden ran 11.4× the JavaScript backend and the GRU
 * 10.3× (2.85 and 2.21 µs a step), 16.8× at 64 and 256. Two changes took the GRU from 6.3–7.4× to that: the
 * one-row product walked two panels at a time, which V8 keeps in registers (four spilled; three since, see
 * core/wasm/packed.ts), and arrays are found
 * by an offset recorded when they were made (core/backend/memory.ts), not by `byteOffset`, which costs 10–15 ns a
 * read in Node 20.
 * The reference: bench/reference/streaming.py times the same steps written in numpy on one thread (OpenBLAS), in
 * the same run when `python3` with numpy is on the machine, as `reference.numpy.step.…`; `step.….speedup-over-numpy`
 * is its time over ours (above 1: ours is faster). Without python3 or numpy the bench says so and records neither.
 * Two bundles are counted: `runtime.bundle-gzip-bytes` (with the forward WebAssembly module) and
 * `runtime.javascript.bundle-gzip-bytes` (`@weft/io/runtime/javascript`), lazy chunks included; their budgets are
 * packages/io/test/bundle.test.ts's.
 */
import { spawnSync } from 'node:child_process';
import { gzipSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { Runtime, forwardBackend } from '@weft/io/runtime';
import type { BenchCase, BenchResult, Derived } from './harness.js';

function stepCase(cell: 'lstm' | 'gru', inputs: number, hidden: number): BenchCase {
  return {
    id: `step.${cell}.i${inputs}h${hidden}`,
    unit: 'µs/step',
    setup: async (backend) => {
      const model = buildModel({ input: { kind: 'values', width: inputs }, layers: [{ cell, hidden }], readout: { width: 8 } }, { seed: 1 });
      const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
      const runtime = new Runtime(file, forwardBackend(backend.name, 4 * 1048576));
      const random = new Random(1);
      const input = Float32Array.from({ length: inputs }, () => random.between(-1, 1));
      const streams = runtime.streams(1);
      return () => void streams.step(input);
    },
    value: (hz) => 1e6 / hz,
  };
}

export const cases: BenchCase[] = [
  ...(['lstm', 'gru'] as const).flatMap((cell) => [stepCase(cell, 16, 32), stepCase(cell, 32, 64), stepCase(cell, 32, 128), stepCase(cell, 64, 256)]),
];

/** Measured once, outside the timing loop: the bundle sizes are counts, not rates. */
export async function counts(): Promise<Record<string, BenchResult>> {
  const size = async (file: string): Promise<number> => {
    const entry = fileURLToPath(new URL(`../packages/io/dist/runtime/${file}`, import.meta.url));
    const result = await build({ entryPoints: [entry], bundle: true, minify: true, format: 'esm', platform: 'browser', write: false, logLevel: 'silent' });
    return gzipSync(result.outputFiles[0].contents, { level: 9 }).length;
  };
  return {
    'runtime.bundle-gzip-bytes': { value: await size('index.js'), unit: 'bytes' },
    'runtime.javascript.bundle-gzip-bytes': { value: await size('javascript.js'), unit: 'bytes' },
  };
}

/**
 * The numpy reference's step times (bench/reference/streaming.py), measured now, in this run; an empty record and
 * a note on stderr when python3 or numpy is missing here.
 */
export function numpyReference(): Record<string, BenchResult> {
  const script = fileURLToPath(new URL('./reference/streaming.py', import.meta.url));
  const ran = spawnSync('python3', [script], { encoding: 'utf8', timeout: 600_000 });
  if (ran.error !== undefined || ran.status !== 0) {
    const why = ran.error?.message ?? ran.stderr.trim().split('\n').at(-1) ?? `exit ${ran.status}`;
    console.error(`bench: no numpy reference (${why}); install python3 and numpy to record it`);
    return {};
  }
  let figures: Record<string, number | string>;
  try {
    figures = JSON.parse(ran.stdout) as Record<string, number | string>;
  } catch {
    console.error(`bench: no numpy reference (bench/reference/streaming.py printed no JSON: ${ran.stdout.slice(0, 80)})`);
    return {};
  }
  const out: Record<string, BenchResult> = {};
  for (const [id, value] of Object.entries(figures)) {
    if (typeof value === 'number') out[`reference.numpy.${id}`] = { value: Number(value.toPrecision(4)), unit: 'µs/step' };
  }
  console.error(`bench: numpy ${String(figures.numpy)} reference measured (bench/reference/streaming.py)`);
  return out;
}

/** `step.<cell>.<shape>.speedup-over-numpy`: the numpy reference's time over ours, both from this run. */
export const derived: Derived = (results) => {
  const out: Record<string, BenchResult> = {};
  for (const [id, result] of Object.entries(results)) {
    const reference = results[`reference.numpy.${id}`];
    if (!/^step\.(lstm|gru)\.i\d+h\d+$/.test(id) || reference === undefined) continue;
    out[`${id}.speedup-over-numpy`] = { value: Number((reference.value / result.value).toPrecision(4)), unit: 'ratio' };
  }
  return out;
};
