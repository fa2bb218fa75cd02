/**
 * `--backend`: the demo's training run (the flags `npm run demo` uses, on a short budget, on the bundled greenhouse data) on each
 * backend reaches a held-out error within 2% of the other's, and the first progress line names the backend that
 * ran; a backend name that does not exist is a one-line usage error.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { defaultBackend, setDefaultBackend, webAssemblyUnavailable } from '@weft/core';
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

  it('refuses a backend that does not exist, naming the choices', () => {
    expect(() => chooseBackend(parseArgs('train', ['x.csv', '--backend', 'gpu'], trainFlags))).toThrowError(
      '--backend must be one of javascript, webassembly, got "gpu"',
    );
  });
});
