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
 * one-row product walks two panels at a time, which V8 keeps in registers (four spilled), and arrays are found
 * by an offset recorded when they were made (core/backend/memory.ts), not by `byteOffset`, which costs 10–15 ns a
 * read in Node 20.
 * Two bundles are counted: `runtime.bundle-gzip-bytes` (with the forward WebAssembly module, budget 20 KiB) and
 * `runtime.javascript.bundle-gzip-bytes` (`@weft/io/runtime/javascript`, budget 12 KiB).
 */
import { gzipSync } from 'node:zlib';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { Runtime, forwardBackend } from '@weft/io/runtime';
import type { BenchCase, BenchResult } from './harness.js';

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
