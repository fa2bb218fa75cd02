/**
 * `--backend`: the demo's training run (the flags `npm run demo` uses, on a short budget, on the bundled greenhouse data) on each
 * backend reaches a held-out error within 2% of the other's, and the first progress line names the backend that
 * ran; a backend name that does not exist is a one-line usage error. `--kernels` picks the WebAssembly kernel set, which
 * the progress line names and the weight file records.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultBackend, relaxedKernelsUnavailable, setDefaultBackend, webAssemblyUnavailable } from '@weft/core';
import { parseArgs } from '../src/args.js';
import { chooseBackend } from '../src/backend.js';
import { train, trainFlags } from '../src/train.js';

const data = fileURLToPath(new URL('../demo/greenhouse.csv', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-backend-'));
const original = defaultBackend();
afterAll(() => {
  setDefaultBackend(original);
  rmSync(folder, { recursive: true, force: true });
});

async function demoRun(backend: 'javascript' | 'webassembly'): Promise<{ heldOut: number; first: string }> {
  const lines: string[] = [];
  // The demo's flags on a short budget (the demo chooses its epochs from the data): sliding windows over every row
  // ahead up to 8, two epochs, the plain model alone (the demo also tries the hybrid).
  const flags = [
    '--target',
    'air_temperature_c',
    '--horizon',
    '8',
    '--cell',
    'gru',
    '--epochs',
    '2',
    '--hybrid',
    'no',
    '--validation',
    '0.15',
    '--backend',
    backend,
    '--out',
    join(folder, `${backend}.weft.json`),
  ];
  const outcome = await train(parseArgs('train', [data, ...flags], trainFlags), (line) => lines.push(line));
  return { heldOut: outcome.heldOut.model.value, first: lines.find((l) => l.startsWith('training a ')) ?? '' };
}

describe('weft train --backend', () => {
  it.skipIf(webAssemblyUnavailable() !== null)(
    'trains the demo to held-out errors within 2% of each other on the two backends',
    async () => {
      const wasm = await demoRun('webassembly');
      const js = await demoRun('javascript');
      console.log(`demo held-out MAE: webassembly ${wasm.heldOut}, javascript ${js.heldOut}`);
      expect(wasm.first).toMatch(/, webassembly backend, this thread$/);
      expect(js.first).toMatch(/, javascript backend, this thread$/);
      expect(Math.abs(wasm.heldOut - js.heldOut) / js.heldOut).toBeLessThan(0.02);
    },
    120_000,
  );

  for (const set of ['standard', 'relaxed'] as const) {
    const unavailable = set === 'standard' ? webAssemblyUnavailable() : relaxedKernelsUnavailable();
    it.skipIf(unavailable !== null)(
      `trains on the ${set} kernel set with --kernels ${set}, says so and records it in the weight file`,
      async () => {
        const out = join(folder, `${set}.weft.json`);
        const lines: string[] = [];
        const flags = ['--target', 'air_temperature_c', '--horizon', '1', '--epochs', '1', '--hybrid', 'no', '--kernels', set, '--out', out];
        await train(parseArgs('train', [data, ...flags], trainFlags), (line) => lines.push(line));
        const said = set === 'relaxed' ? /, webassembly backend \(relaxed kernels\), this thread$/ : /, webassembly backend, this thread$/;
        expect(lines.find((l) => l.startsWith('training an LSTM'))).toMatch(said);
        const file = JSON.parse(readFileSync(out, 'utf8')) as { metadata: { training: { kernels: string } } };
        expect(file.metadata.training.kernels).toBe(`webassembly ${set}`);
      },
      60_000,
    );
  }

  it.skipIf(relaxedKernelsUnavailable() !== null)(
    'says so when a run resumed from a checkpoint continues on the other kernel set',
    async () => {
      const checkpoint = join(folder, 'kernels-first.checkpoint.json');
      const flags = ['--target', 'air_temperature_c', '--horizon', '1', '--epochs', '1', '--hybrid', 'no'];
      await train(
        parseArgs('train', [data, ...flags, '--kernels', 'standard', '--out', join(folder, 'first.weft.json'), '--checkpoint', checkpoint], trainFlags),
        () => {},
      );
      const lines: string[] = [];
      const resumed = [...flags, '--kernels', 'relaxed', '--resume', checkpoint, '--out', join(folder, 'resumed.weft.json')];
      await train(parseArgs('train', [data, ...resumed], trainFlags), (line) => lines.push(line));
      expect(lines.join('\n')).toContain(
        'note: the checkpoint was trained on the webassembly standard kernels and continues on the webassembly relaxed kernels: the result will not be the same bits as a run on either alone (--kernels chooses)',
      );
    },
    60_000,
  );

  it('refuses a kernel set that does not exist, and --kernels with the JavaScript backend, in one line each', () => {
    expect(() => chooseBackend(parseArgs('train', ['x.csv', '--kernels', 'fast'], trainFlags))).toThrowError(
      '--kernels must be one of standard, relaxed, got "fast"',
    );
    expect(() => chooseBackend(parseArgs('train', ['x.csv', '--kernels', 'standard', '--backend', 'javascript'], trainFlags))).toThrowError(
      '--kernels chooses among the WebAssembly kernels; leave it out with --backend javascript',
    );
  });

  it.skipIf(relaxedKernelsUnavailable() === null)('refuses --kernels relaxed where this Node lacks relaxed SIMD, saying what to use', () => {
    expect(() => chooseBackend(parseArgs('train', ['x.csv', '--kernels', 'relaxed'], trainFlags))).toThrowError(
      /--kernels relaxed: .*relaxed SIMD.*; use --kernels standard/,
    );
  });

  it('refuses a backend that does not exist, naming the choices', () => {
    expect(() => chooseBackend(parseArgs('train', ['x.csv', '--backend', 'gpu'], trainFlags))).toThrowError(
      '--backend must be one of javascript, webassembly, got "gpu"',
    );
  });
});
