/**
 * End-to-end: the built `weft` binary run as a subprocess on temporary files (the test command builds it first).
 * train → checkpoint → SIGINT → resume → run → inspect → sample; check on a correct and a broken cell; and the
 * one-line errors for malformed input.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const fixtures = fileURLToPath(new URL('./fixtures/', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-cli-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

function weft(args: string[], input?: string) {
  const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', input, timeout: 120_000 });
  return { code: result.status, out: result.stdout, err: result.stderr };
}

/** Expect one line on stderr, matching `pattern`, no stack trace, and the exit code. */
function expectOneLineError(result: ReturnType<typeof weft>, code: number, pattern: RegExp): void {
  expect(result.code).toBe(code);
  const lines = result.err.trimEnd().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(pattern);
  expect(result.err).not.toMatch(/\n\s+at /);
}

// An invented text: notes from a weaving workshop, repeated with variations.
const notes = Array.from({ length: 60 }, (_, i) => `day ${i % 7}: the warp was ${['wool', 'linen', 'silk'][i % 3]} and the weft was ${['red', 'blue', 'gold', 'grey'][i % 4]}; we wove ${10 + (i % 9)} rows before tea.\n`).join('');
writeFileSync(join(folder, 'notes.txt'), notes);

describe('the weft command', () => {
  it('answers --version and --help on every verb, with an example line', () => {
    const version = weft(['--version']);
    expect(version.code).toBe(0);
    expect(version.out.trim()).toMatch(/^\d+\.\d+\.\d+$/);
    for (const verb of ['train', 'run', 'sample', 'inspect', 'check']) {
      const help = weft([verb, '--help']);
      expect(help.code).toBe(0);
      expect(help.out).toContain(`usage: weft ${verb}`);
      expect(help.out).toMatch(/example:\n {2}weft /);
    }
  });

  it('trains, is interrupted by SIGINT with a checkpoint (exit 130), resumes, runs, inspects and samples', async () => {
    const args = ['train', 'notes.txt', '--cell', 'gru', '--hidden', '32', '--window', '24', '--streams', '4', '--epochs', '40', '--checkpoint-every', '5', '--out', 'notes.weft.json'];
    const child = spawn(process.execPath, [binary, ...args], { cwd: folder });
    let stdout = '';
    child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()));
    const checkpoint = join(folder, 'notes.weft.checkpoint.json');
    const started = Date.now();
    while (!existsSync(checkpoint) && Date.now() - started < 60_000) await new Promise((r) => setTimeout(r, 50));
    expect(existsSync(checkpoint)).toBe(true);
    child.kill('SIGINT');
    const code = await new Promise<number | null>((resolve) => child.on('exit', (c) => resolve(c)));
    expect(code).toBe(130);
    expect(stdout).toMatch(/interrupted at step \d+; checkpoint written to .*notes\.weft\.checkpoint\.json/);
    const stoppedAt = Number(/interrupted at step (\d+)/.exec(stdout)![1]);
    // The exact command that resumes: the same data and flags, and --resume with the checkpoint.
    expect(stdout).toContain(`resume with: weft ${args.join(' ')} --resume ${checkpoint}\n`);
    expect(existsSync(join(folder, 'notes.weft.json'))).toBe(false);

    const resumed = weft([...args, '--resume', 'notes.weft.checkpoint.json']);
    expect(resumed.code).toBe(0);
    expect(resumed.out).toContain(`resuming from notes.weft.checkpoint.json at step ${stoppedAt}`);
    expect(resumed.out).toMatch(/^finished \d+ steps in [\d.ms]+ \(resumed runs included\); /m);
    expect(resumed.out).toMatch(/^  unigram +perplexity [\d.]+  \(each token as often as in the training text\)$/m);
    expect(resumed.out).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline unigram): perplexity [\d.]+ against/m);
    expect(existsSync(join(folder, 'notes.weft.checkpoint.loss.svg'))).toBe(true);
    expect(readFileSync(join(folder, 'notes.weft.checkpoint.loss.svg'), 'utf8')).toMatch(/^<svg [^>]*>[\s\S]*<polyline/);

    const run = weft(['run', 'notes.weft.json', '-', '--format', 'json'], 'the warp was ');
    expect(run.code).toBe(0);
    const rows = JSON.parse(run.out) as { token: string; 'most likely next': string }[];
    expect(rows).toHaveLength(13);
    expect(rows[0].token).toBe('t');

    const inspect = weft(['inspect', 'notes.weft.json']);
    expect(inspect.code).toBe(0);
    expect(inspect.out).toContain('layers[0].forward.recurrentCandidate');
    expect(inspect.out).toMatch(/digest: SHA-256 [0-9a-f]{64} — verified/);

    const sample = weft(['sample', 'notes.weft.json', '--prefix', 'day 3: ', '--length', '60', '--seed', '2']);
    expect(sample.code).toBe(0);
    expect(sample.out.startsWith('day 3: ')).toBe(true);
    expect(sample.out.trim().length).toBe(67);
    expect(sample.out.endsWith('\n')).toBe(true);
    expect(weft(['sample', 'notes.weft.json', '--prefix', 'day 3: ', '--length', '60', '--seed', '2']).out).toBe(sample.out);
    // A prefix with a character the model never saw: said on stderr, and shown as written.
    const unknown = weft(['sample', 'notes.weft.json', '--prefix', 'day Ω: ', '--length', '10', '--seed', '2']);
    expect(unknown.code).toBe(0);
    expect(unknown.err.trim()).toBe("weft: 1 of 7 characters of --prefix are not in the model's vocabulary; the model reads them as <unknown>");
    expect(unknown.out.startsWith('day Ω: ')).toBe(true);
  });

  it('checks the built-in cells, a correct cell of your own, and catches a broken one', () => {
    const builtIn = weft(['check']);
    expect(builtIn.code).toBe(0);
    expect(builtIn.out).toContain('all 10 gradient checks passed');
    const good = weft(['check', '--module', join(fixtures, 'gated-cell.mjs'), '--export', 'makeCell']);
    expect(good.code).toBe(0);
    expect(good.out).toContain('all 1 gradient checks passed');
    const broken = weft(['check', '--module', join(fixtures, 'broken-cell.mjs')]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]/);
    expect(broken.out).toContain('GRADIENT CHECK FAILED');
  });

  it('prints only the result line of a passing check under --quiet, and still the report of a failing one', () => {
    const quiet = weft(['check', '--quiet']);
    expect(quiet.code).toBe(0);
    expect(quiet.out).toBe('all 10 gradient checks passed (backend webassembly; finite differences in f64 run on the JavaScript kernels on every backend)\n'.replace('webassembly', process.env.WEFT_BACKEND ?? 'webassembly'));
    const broken = weft(['check', '--quiet', '--module', join(fixtures, 'broken-cell.mjs')]);
    expect(broken.code).toBe(1);
    expect(broken.out).toMatch(/FAIL recurrent \[4, 4\]/);
  });

  it('ends the flags at --, so a file whose name starts with dashes can be named', () => {
    writeFileSync(join(folder, '--odd.weft.json'), readFileSync(join(folder, 'notes.weft.json')));
    const inspect = weft(['inspect', '--', '--odd.weft.json']);
    expect(inspect.code).toBe(0);
    expect(inspect.out).toMatch(/digest: SHA-256 [0-9a-f]{64} — verified/);
    // After --, even --help is a file name.
    expectOneLineError(weft(['inspect', '--', '--help']), 1, /--help/);
  });

  it('refuses a flag given twice instead of keeping one silently', () => {
    expectOneLineError(weft(['train', 'notes.txt', '--epochs', '1', '--epochs=2']), 2, /^weft: flag --epochs of weft train is given twice; give it once$/);
  });

  describe('malformed input gets one line on stderr and a non-zero exit', () => {
    it('a missing file', () => {
      expectOneLineError(weft(['train', 'nowhere.csv']), 1, /^weft: nowhere\.csv: no such file$/);
    });

    it('a malformed CSV row', () => {
      writeFileSync(join(folder, 'short.csv'), 'a,b\n1,2\n3\n4,5\n');
      expectOneLineError(weft(['train', 'short.csv']), 1, /^weft: Bad data at short\.csv:3:2: expected 2 comma-separated fields, as the header has, received 1$/);
      writeFileSync(join(folder, 'quote.csv'), 'a,b\n1,2\n3,4"x\n');
      expectOneLineError(weft(['train', 'quote.csv']), 1, /^weft: Bad data at quote\.csv:3:4: expected a quote only at the start of a field \(or doubled inside quotes\), received a quote inside an unquoted field$/);
    });

    it('a non-numeric value, with line and column', () => {
      const rows = Array.from({ length: 300 }, (_, i) => `${Math.sin(i)},${Math.cos(i)}`);
      rows[150] = '0.5,warm';
      writeFileSync(join(folder, 'sensor.csv'), `x,y\n${rows.join('\n')}\n`);
      expectOneLineError(weft(['train', 'sensor.csv', '--window', '8', '--streams', '2']), 1, /^weft: Bad data at sensor\.csv:152:5: expected a decimal number in column "y", received "warm" \(299 of 300 cells there are; fix the cell, or choose the columns with --columns\)$/);
    });

    it('an unknown flag', () => {
      expectOneLineError(weft(['train', 'notes.txt', '--hiden', '8']), 2, /^weft: unknown flag --hiden for weft train \(see weft train --help\)$/);
    });

    it('a checkpoint that does not match the requested model', () => {
      const result = weft(['train', 'notes.txt', '--cell', 'gru', '--hidden', '16', '--window', '24', '--streams', '4', '--resume', 'notes.weft.checkpoint.json']);
      expectOneLineError(result, 1, /^weft: notes\.weft\.checkpoint\.json: the checkpoint does not match the requested model: model\.layers\[0\]\.hidden is 32 in the checkpoint, 16 requested$/);
    });

    it('a damaged weight file, every problem on the one line', () => {
      writeFileSync(join(folder, 'damaged.json'), '{"format":"weft-weights","version":1}');
      expectOneLineError(weft(['inspect', 'damaged.json']), 1, /^weft: 3 problems: Bad weight file at damaged\.json: model: .*; Bad weight file at damaged\.json: digest: .*; Bad weight file at damaged\.json: tensors: expected an array, received undefined$/);
      writeFileSync(join(folder, 'not-json.json'), 'hello\nworld\n');
      expectOneLineError(weft(['run', 'not-json.json', '-']), 1, /^weft: Bad weight file at not-json\.json: \(file\): expected valid JSON, received .*$/);
    });

    it('shows the stack trace only with --debug', () => {
      const result = weft(['train', 'nowhere.csv', '--debug']);
      expect(result.code).toBe(1);
      expect(result.err).toMatch(/\n\s+at /);
    });
  });
});

describe('weft run on forecasts and classifications', () => {
  it('writes forecasts for a CSV to a file, and classes for labelled sequences as CSV', () => {
    const rows = Array.from({ length: 400 }, (_, i) => `${(20 + 5 * Math.sin(i / 6)).toFixed(3)},${(50 + 10 * Math.cos(i / 6)).toFixed(3)}`);
    writeFileSync(join(folder, 'room.csv'), `temperature,humidity\n${rows.join('\n')}\n`);
    const trained = weft(['train', 'room.csv', '--target', 'temperature', '--horizon', '2', '--hidden', '8', '--window', '16', '--streams', '4', '--epochs', '2', '--out', 'room.weft.json', '--quiet']);
    expect(trained.code).toBe(0);
    // --quiet: no progress, no notes, only the final result lines.
    expect(trained.err).toBe('');
    expect(trained.out).not.toMatch(/^(training a |loss (?!curve)|left out )/m);
    expect(trained.out.split('\n')[0]).toMatch(/^held out/);
    expect(trained.out).toMatch(/^weight file: .*room\.weft\.json$/m);
    for (const name of ['model', 'persistence', 'training mean', 'linear']) expect(trained.out).toMatch(new RegExp(`^  ${name} +MAE [\\d.]+  RMSE [\\d.]+  MAPE`, 'm'));
    expect(trained.out).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline [a-z ]+): MAE [\d.]+ against/m);
    writeFileSync(join(folder, 'new-room.csv'), `humidity,temperature\n55,21\n54,22\n52,23\n`);
    const run = weft(['run', 'room.weft.json', 'new-room.csv', '--out', 'forecast.csv']);
    expect(run.code).toBe(0);
    const forecast = readFileSync(join(folder, 'forecast.csv'), 'utf8').trim().split('\n');
    expect(forecast[0]).toBe('row,temperature in 2');
    expect(forecast).toHaveLength(4);
    for (const line of forecast.slice(1)) expect(Number(line.split(',')[1])).toBeGreaterThan(5);

    const labelled = Array.from({ length: 160 }, (_, i) => {
      const rising = i % 2 === 0;
      const items = Array.from({ length: 4 + (i % 5) }, (_, t) => (rising ? t : -t) + ((i * 7) % 3) * 0.1);
      return `${rising ? 'rising' : 'falling'},${items.map((v) => v.toFixed(2)).join(' ')}`;
    });
    writeFileSync(join(folder, 'trends.csv'), `label,sequence\n${labelled.join('\n')}\n`);
    const classifier = weft(['train', 'trends.csv', '--hidden', '8', '--streams', '16', '--epochs', '8', '--rate', '0.02', '--out', 'trends.weft.json', '--quiet']);
    expect(classifier.code).toBe(0);
    expect(classifier.out).toMatch(/^  majority class +accuracy [\d.]+%  macro-F1 [\d.]+  \(always "[a-z]+", the most common class in training\)$/m);
    expect(classifier.out).toMatch(/^counts by actual class \(rows\) and predicted class \(columns\):$/m);
    const classes = weft(['run', 'trends.weft.json', '-'], 'sequence\n"0 1 2 3 4"\n"0 -1 -2 -3"\n');
    expect(classes.code).toBe(0);
    expect(classes.out.split('\n')[0]).toBe('row,predicted,p(falling),p(rising)');
    expect(classes.out.split('\n')[1].split(',')[1]).toBe('rising');
    expect(classes.out.split('\n')[2].split(',')[1]).toBe('falling');
  });
});
