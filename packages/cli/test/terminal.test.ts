/**
 * What reaches the terminal: values from files are escaped and cut (a tensor name cannot forge a `weft:` line or
 * send an escape sequence), and a closed pipe (`weft … | head -1`) ends a verb with exit 0 and no stack trace.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { writeWeightFile } from '@weft/io';
import { MAX_VALUE, csvCell, line, shown } from '../src/terminal.js';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const demo = fileURLToPath(new URL('../demo/greenhouse.csv', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-terminal-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

/** Runs the binary, reads its first line of standard output, then closes the pipe as `head -1` does. */
function firstLineThenClose(args: string[]): Promise<{ code: number | null; first: string; err: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [binary, ...args], { cwd: folder });
    let out = '';
    let err = '';
    let first = '';
    child.stdout.on('data', (chunk: Buffer) => {
      out += chunk.toString();
      if (first === '' && out.includes('\n')) {
        first = out.slice(0, out.indexOf('\n'));
        child.stdout.destroy();
      }
    });
    child.stderr.on('data', (chunk: Buffer) => (err += chunk.toString()));
    child.on('exit', (code) => resolve({ code, first, err }));
  });
}

describe('writing to the terminal', () => {
  it('cuts an error line that quotes a 50 MB value from a file to the stated maximum', async () => {
    const { WeftError } = await import('@weft/core');
    const { errorReport } = await import('../src/main.js');
    const { MAX_LINE } = await import('../src/terminal.js');
    const report = errorReport(
      new WeftError({ code: 'bad_weight_file', path: 'model.layers[0].cell', expected: 'a cell', received: 'x'.repeat(50_000_000) }),
      false,
    );
    expect(report.text.length).toBeLessThan(MAX_LINE + 100);
    expect(report.text).toMatch(/… \(\d+ more characters\)\n$/);
  });

  it('escapes control characters and cuts long values, saying how much was left out', () => {
    expect(shown('a\nweft: forged\u001b]0;title\u0007')).toBe('a\\nweft: forged\\u{1b}]0;title\\u{7}');
    expect(shown('x'.repeat(MAX_VALUE + 5))).toBe(`${'x'.repeat(MAX_VALUE)}… (5 more characters)`);
    expect(line('tab\there')).toBe('tab\\there');
  });

  it('writes data cells with control characters escaped and CSV quoting kept (RFC 4180: quotes doubled, line breaks inside quotes)', () => {
    expect(csvCell('ab\u001b[31mred\u0007\u0000')).toBe('ab\\u{1b}[31mred\\u{7}\\u{0}');
    expect(csvCell('two\nlines, "quoted"')).toBe('"two\nlines, ""quoted"""');
    expect(csvCell('a\tb')).toBe('a\tb');
    expect(csvCell(1.5)).toBe('1.5');
  });

  it('shows a hostile tensor name and metadata key as escaped text in weft inspect', async () => {
    const name = 'w\nweft: all good\u001b[31m';
    const text = await writeWeightFile(
      { input: { kind: 'values', width: 1 }, layers: [{ cell: 'plain', hidden: 1 }] },
      [
        { name: 'layers[0].forward.input', shape: [1, 1], values: Float32Array.of(0.5) },
        { name: 'layers[0].forward.recurrent', shape: [1, 1], values: Float32Array.of(0.5) },
        { name: 'layers[0].forward.bias', shape: [1], values: Float32Array.of(0) },
      ],
      { metadata: { [name]: 'x'.repeat(5000) } },
    );
    writeFileSync(join(folder, 'hostile.weft.json'), text);
    const result = await new Promise<{ out: string; code: number | null }>((resolve) => {
      const child = spawn(process.execPath, [binary, 'inspect', 'hostile.weft.json'], { cwd: folder });
      let out = '';
      child.stdout.on('data', (chunk: Buffer) => (out += chunk.toString()));
      child.on('exit', (code) => resolve({ out, code }));
    });
    expect(result.code).toBe(0);
    expect(result.out).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f]/);
    expect(result.out.split('\n').some((l) => l.startsWith('weft:'))).toBe(false);
    expect(result.out).toContain('w\\nweft: all good\\u{1b}[31m: ');
    expect(Math.max(...result.out.split('\n').map((l) => l.length))).toBeLessThan(2 * MAX_VALUE + 80);
  });

  it('makes the model files the pipe tests read: a forecaster and a text model', () => {
    const train = (args: string[]) => spawnSync(process.execPath, [binary, 'train', ...args, '--quiet', '--start-over'], { cwd: folder, encoding: 'utf8' });
    expect(train([demo, '--target', 'air_temperature_c', '--horizon', '8', '--hidden', '8', '--epochs', '1', '--out', 'pipe.weft.json']).status).toBe(0);
    writeFileSync(join(folder, 'story.txt'), 'the dyer stirs the vat; the shuttle flies; the cloth grows by the inch. '.repeat(40));
    expect(train(['story.txt', '--hidden', '8', '--epochs', '1', '--out', 'story.weft.json']).status).toBe(0);
  }, 60_000);

  for (const [label, args] of [
    ['train', ['train', demo, '--target', 'air_temperature_c', '--horizon', '8', '--hidden', '8', '--epochs', '3', '--out', 'pipe.weft.json', '--start-over']],
    ['run', ['run', 'pipe.weft.json', demo]],
    ['inspect', ['inspect', 'hostile.weft.json']],
    ['sample', ['sample', 'story.weft.json', '--length', '20000']],
    ['check', ['check']],
  ] as const) {
    it(`ends weft ${label} quietly when its reader closes the pipe (exit 0, no stack trace)`, async () => {
      const result = await firstLineThenClose([...args]);
      expect(result.first).not.toBe('');
      expect(result.code).toBe(0);
      // Standard error carries at most the progress lines of a training run: no error, no stack trace.
      const other = result.err.split('\n').filter((l) => l !== '' && !/^step \d+\/\d+ {2}epoch /.test(l));
      expect(other).toEqual([]);
    }, 60_000);
  }
});
