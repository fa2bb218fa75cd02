/**
 * `weft train` end to end, the built binary on temporary files: train → checkpoint → SIGINT → resume → run, and the
 * one-line errors for malformed training data and a checkpoint of another model.
 */
import { spawn } from 'node:child_process';
import { existsSync, readFileSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { binary, commandFolder, expectOneLineError, writeNotes } from './command.js';

const { folder, weft } = commandFolder('weft-train-');
writeNotes(folder);

describe('weft train', () => {
  it('trains, is interrupted by SIGINT with a checkpoint (exit 130), resumes and runs', async () => {
    const args = [
      'train',
      'notes.txt',
      '--cell',
      'gru',
      '--hidden',
      '32',
      '--window',
      '24',
      '--streams',
      '4',
      '--epochs',
      '40',
      '--checkpoint-every',
      '5',
      '--out',
      'notes.weft.json',
    ];
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
    expect(resumed.out).toMatch(/^ {2}unigram +perplexity [\d.]+ {2}\(each token as often as in the training and validation text \(add-one\)\)$/m);
    expect(resumed.out).toMatch(
      /^ {2}[1-6]-gram +perplexity [\d.]+ {2}\(interpolated Kneser-Ney over characters, order [1-6] of 1-6 chosen on the validation part/m,
    );
    expect(resumed.out).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline (unigram|[1-6]-gram)): perplexity [\d.]+ against/m);
    expect(existsSync(join(folder, 'notes.weft.checkpoint.loss.svg'))).toBe(true);
    expect(readFileSync(join(folder, 'notes.weft.checkpoint.loss.svg'), 'utf8')).toMatch(/^<svg [^>]*>[\s\S]*<polyline/);

    const run = weft(['run', 'notes.weft.json', '-', '--format', 'json'], 'the warp was ');
    expect(run.code).toBe(0);
    const rows = JSON.parse(run.out) as { token: string; 'most likely next': string }[];
    expect(rows).toHaveLength(13);
    expect(rows[0].token).toBe('t');
  });

  it('a checkpoint that does not match the requested model', () => {
    const result = weft([
      'train',
      'notes.txt',
      '--cell',
      'gru',
      '--hidden',
      '16',
      '--window',
      '24',
      '--streams',
      '4',
      '--resume',
      'notes.weft.checkpoint.json',
    ]);
    expectOneLineError(
      result,
      1,
      /^weft: notes\.weft\.checkpoint\.json: the checkpoint does not match the requested model: model\.layers\[0\]\.hidden is 32 in the checkpoint, 16 requested$/,
    );
  });

  describe('malformed training data gets one line on stderr and a non-zero exit', () => {
    it('a malformed CSV row', () => {
      writeFileSync(join(folder, 'short.csv'), 'a,b\n1,2\n3\n4,5\n');
      expectOneLineError(
        weft(['train', 'short.csv']),
        1,
        /^weft: Bad data at short\.csv:3:2: expected 2 comma-separated fields, as the header has, received 1$/,
      );
      writeFileSync(join(folder, 'quote.csv'), 'a,b\n1,2\n3,4"x\n');
      expectOneLineError(
        weft(['train', 'quote.csv']),
        1,
        /^weft: Bad data at quote\.csv:3:4: expected a quote only at the start of a field \(or doubled inside quotes\), received a quote inside an unquoted field$/,
      );
    });

    it('a data file past the size limit, refused before it is read (a sparse 33 MB file), by train and score alike', () => {
      writeFileSync(join(folder, 'huge.csv'), 'a,b\n');
      truncateSync(join(folder, 'huge.csv'), 33 * 1024 * 1024);
      expectOneLineError(
        weft(['train', 'huge.csv']),
        1,
        /^weft: huge\.csv: 33\.0 MB; weft reads data files of at most 32 MB \(a small model learns from a sample: cut the file, or keep the last rows\)$/,
      );
      expectOneLineError(weft(['score', 'notes.weft.json', 'huge.csv']), 1, /^weft: huge\.csv: 33\.0 MB; weft reads data files of at most 32 MB/);
    });

    it('a non-numeric value, with line and column', () => {
      const rows = Array.from({ length: 300 }, (_, i) => `${Math.sin(i)},${Math.cos(i)}`);
      rows[150] = '0.5,warm';
      writeFileSync(join(folder, 'sensor.csv'), `x,y\n${rows.join('\n')}\n`);
      expectOneLineError(
        weft(['train', 'sensor.csv', '--window', '8', '--streams', '2']),
        1,
        /^weft: Bad data at sensor\.csv:152:5: expected a decimal number in column "y", received "warm" \(299 of 300 cells there are; fix the cell, mark missing readings with --missing-marker, or choose the columns with --columns\)$/,
      );
    });

    it('bytes that are not UTF-8, at their line and column; a lookback longer than the window, naming both flags', () => {
      writeFileSync(join(folder, 'latin1.csv'), Buffer.concat([Buffer.from('x,y\n1,2\n3,'), Buffer.from([0xe9]), Buffer.from('t\n')]));
      expectOneLineError(weft(['train', 'latin1.csv']), 1, /^weft: latin1\.csv:3:3: expected UTF-8 text, received the byte 0xe9 \(save the file as UTF-8\)$/);
      expectOneLineError(
        weft(['train', 'notes.txt', '--lookback', '64', '--window', '8']),
        2,
        /^weft: --lookback 64 is longer than --window 8: it re-reads at most a window's steps before each window; lower it, or raise --window$/,
      );
    });
  });

  it('trains on 2 threads to the same weight file tensors as in one thread, and refuses --workers 0 in one line', () => {
    const common = [
      'train',
      'notes.txt',
      '--cell',
      'lstm',
      '--hidden',
      '16',
      '--window',
      '12',
      '--streams',
      '16',
      '--epochs',
      '1',
      '--dropout',
      '0.1',
      '--layers',
      '2',
      '--quiet',
      '--start-over',
    ];
    const two = weft([...common.filter((a) => a !== '--quiet'), '--workers', '2', '--out', 'two.weft.json']);
    const one = weft([...common, '--workers', '1', '--out', 'one.weft.json']);
    expect([two.code, one.code]).toEqual([0, 0]);
    expect(two.out).toMatch(/^training an LSTM text model .* webassembly backend, 2 threads$|^training an LSTM text model .* javascript backend, 2 threads$/m);
    const tensors = (name: string) => (JSON.parse(readFileSync(join(folder, name), 'utf8')) as { tensors: unknown }).tensors;
    expect(tensors('two.weft.json')).toEqual(tensors('one.weft.json'));
    expectOneLineError(weft([...common, '--workers', '0']), 2, /^weft: --workers must be a whole number from 1 to 256, got "0"$/);
  });
});
