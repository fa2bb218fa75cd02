/**
 * A cell of your own from idea to shipped model, with the command: the example's plan (examples/custom-cell/mgu-plan.ts,
 * TypeScript) is gradient-checked by `weft check --module`, trained by `weft train --cell-module`, interrupted by
 * SIGINT at a checkpoint and resumed to the same weights as a run never interrupted, run and converted to ONNX by the
 * command, and loaded and streamed by the runtime as the training model computes it, nothing allocated per step;
 * a module that forgot the plan, exports a class or a plan that does not fit the file is a one-line error.
 */
import { spawn } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { Tape } from '@weft/core';
import { loadModel, readWeightFile } from '@weft/io';
import { createRuntime, runtimeCounts } from '@weft/io/runtime';
import { mguPlan } from '../../../examples/custom-cell/mgu-plan.js';
import { planExport } from '../src/cell-module.js';
import { binary, commandFolder, expectOneLineError, writeNotes } from './command.js';

const { folder, weft } = commandFolder('weft-cell-module-');
writeNotes(folder);
const module = fileURLToPath(new URL('../../../examples/custom-cell/mgu-plan.ts', import.meta.url));
const own = ['--cell-module', module, '--cell-export', 'mguPlan'];
const training = (out: string) => [
  'train',
  'notes.txt',
  ...own,
  '--hidden',
  '16',
  '--window',
  '16',
  '--streams',
  '4',
  '--epochs',
  '6',
  '--checkpoint-every',
  '5',
  '--seed',
  '3',
  '--out',
  out,
];
const plans = { 'lab.mgu': mguPlan };

function messageOf(run: () => unknown): string {
  try {
    run();
  } catch (error) {
    return (error as Error).message;
  }
  return 'accepted';
}

describe('a cell of your own through the command', () => {
  it('takes a plan export and refuses a class, a maker function or a malformed plan, naming the file and the export', () => {
    expect(planExport({ mguPlan }, 'm.ts', 'mguPlan')).toBe(mguPlan);
    expect(messageOf(() => planExport({ mguPlan }, 'm.ts', 'default'))).toBe(
      'm.ts: no export "default" (it exports "mguPlan"); name the plan with --cell-export',
    );
    expect(messageOf(() => planExport({ default: class Mgu {} }, 'm.ts', 'default'))).toMatch(
      /^m\.ts: export "default" is a class; --cell-module takes a cell plan, an object \{ kind, state/,
    );
    expect(messageOf(() => planExport({ default: () => mguPlan }, 'm.ts', 'default'))).toMatch(
      /^m\.ts: export "default" is a function; .*weft check --module also takes a maker function/,
    );
    expect(messageOf(() => planExport({ default: { kind: 'lab.mgu' } }, 'm.ts', 'default'))).toMatch(/^m\.ts: export "default" is not a cell plan/);
    expect(messageOf(() => planExport({ default: { ...mguPlan, kind: 'mgu' } }, 'm.ts', 'default'))).toMatch(
      /m\.ts export "default"\.mgu.*a namespaced kind of your own/,
    );
  });

  it("checks the plan's gradients from its TypeScript module", () => {
    const checked = weft(['check', '--module', module, '--export', 'mguPlan', '--hidden', '8', '--steps', '5']);
    expect(checked.code).toBe(0);
    expect(checked.out).toMatch(/lab\.mgu cell from .*mgu-plan\.ts/);
  });

  it('trains it, resumes an interrupted run to the same weights, and ships it: run, convert, and the runtime streaming it', async () => {
    const whole = weft(training('whole.weft.json'));
    expect(whole.code).toBe(0);
    expect(whole.out).toMatch(/^training a lab\.mgu /m);
    const child = spawn(process.execPath, [binary, ...training('part.weft.json')], { cwd: folder });
    let stdout = '';
    child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
    const checkpoint = join(folder, 'part.weft.checkpoint.json');
    const started = Date.now();
    while (!existsSync(checkpoint) && Date.now() - started < 60_000) await new Promise((r) => setTimeout(r, 20));
    child.kill('SIGINT');
    const code = await new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
    expect(code).toBe(130);
    expect(stdout).toMatch(/interrupted at step \d+/);
    const resumed = weft([...training('part.weft.json'), '--resume', checkpoint]);
    expect(resumed.code).toBe(0);
    // The weights' SHA-256 (the file's digest over every tensor's bytes).
    const digest = (name: string) => readFileSync(join(folder, name), 'utf8').match(/"hex": "([0-9a-f]{64})"/)![1];
    expect(digest('part.weft.json')).toBe(digest('whole.weft.json'));

    // The command runs and converts it with its module, and says what is missing without.
    const ran = weft(['run', 'whole.weft.json', '-', ...own, '--format', 'json'], 'the warp was ');
    expect(ran.code).toBe(0);
    expect((JSON.parse(ran.out) as unknown[]).length).toBe(13);
    expectOneLineError(
      weft(['run', 'whole.weft.json', '-'], 'the warp'),
      1,
      /model\.layers\[0\]\.cell: expected one of 'lstm', 'gru', 'plain' \(lab\.mgu is a cell of your own: give its plan.*; from the command, give its plan with --cell-module FILE/,
    );
    const converted = weft(['convert', 'whole.weft.json', ...own, '--out', 'whole.onnx']);
    expect(converted.code).toBe(0);
    expect(converted.out).toMatch(/Scan/);

    // The runtime streams it as the training model computes it, with no array made per step.
    const file = await readWeightFile(readFileSync(join(folder, 'whole.weft.json'), 'utf8'), { plans });
    const model = loadModel(file, { plans });
    const tokens = Int32Array.from([3, 5, 2, 7, 1, 4, 4, 6, 2, 3]);
    const expected = model.run(new Tape({ recording: false }), { tokens, steps: tokens.length, batch: 1 }).outputs.data;
    for (const backend of ['javascript', 'webassembly'] as const) {
      const runtime = await createRuntime(file, { plans, backend });
      const streams = runtime.streams(1);
      streams.step([0]);
      streams.reset();
      const made = runtimeCounts.arrays;
      let worst = 0;
      tokens.forEach((token, t) => {
        const out = streams.step([token]);
        for (let k = 0; k < out.length; k++) {
          const [a, b] = [out[k], expected[t * out.length + k]];
          worst = Math.max(worst, Math.abs(a - b) / Math.max(1, Math.abs(a), Math.abs(b)));
        }
      });
      expect(runtimeCounts.arrays).toBe(made);
      console.log(`lab.mgu streamed on ${backend}: worst |a − b| / max(1, |a|, |b|) against the training model ${worst.toExponential(2)}`);
      // |a − b| ≤ 1e-5·max(1, |a|, |b|), the backends' bound (runtime tests), the f32 logits being up to ~10: the
      // training model takes the input product of the whole sequence in one product (plan-cell.ts), the runtime
      // one row per step, so their f32 sums run in another order on either backend (JavaScript's worst was 1.04e-6).
      expect(worst).toBeLessThan(1e-5);
    }
  }, 180_000);

  it('refuses a module whose plan does not fit the file, and one that exports a class, in one line naming the file', () => {
    writeFileSync(
      join(folder, 'wider.mjs'),
      `export const plan = { kind: 'lab.mgu', state: ({ hidden }) => [{ name: 'h', width: hidden }],
  parameters: ({ inputWidth, hidden }) => [{ name: 'input', shape: [inputWidth, 2 * hidden] }, { name: 'bias', shape: [2 * hidden] },
    { name: 'recurrentGate', shape: [hidden, 2 * hidden] }, { name: 'recurrentCandidate', shape: [hidden, hidden] }],
  step: (w) => [w.state[0]] };\n`,
    );
    writeFileSync(join(folder, 'class.mjs'), 'export default class Mgu {}\n');
    if (!existsSync(join(folder, 'whole.weft.json'))) return;
    expectOneLineError(
      weft(['run', 'whole.weft.json', '-', '--cell-module', 'wider.mjs', '--cell-export', 'plan'], 'the'),
      1,
      /layers\[0\]\.forward\.recurrentGate.*\[16, ?32\].*\[16, ?16\]/,
    );
    expectOneLineError(
      weft(['run', 'whole.weft.json', '-', '--cell-module', 'class.mjs'], 'the'),
      1,
      /^weft: class\.mjs: export "default" is a class; --cell-module takes a cell plan/,
    );
  });
});
