/**
 * Refused inputs cost little, whatever their size: a 200 MB data file for `weft train`, a 200 MB ONNX file for
 * `weft convert`, a 200 MB line streamed into `weft run -`, and a grid of 10⁸ combinations for `weft sweep --merge`
 * are each refused in one line while the process's peak resident memory (Node's resourceUsage().maxRSS, read at
 * exit) stays under 300 MB. Sparse files stand in for the large ones (their size is real to every reader).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, truncateSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { binary, fixtures } from './command.js';

const folder = mkdtempSync(join(tmpdir(), 'weft-limits-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));
const MB = 1024 * 1024;

/** Runs weft with its peak memory printed last on stderr; the error line and the peak. */
function measured(args: string[]): { code: number | null; error: string; peak: number } {
  const result = spawnSync(process.execPath, ['--require', join(fixtures, 'max-rss.cjs'), binary, ...args], {
    cwd: folder,
    stdio: ['ignore', 'pipe', 'pipe'],
    timeout: 120_000,
    maxBuffer: 16 * MB,
  });
  return outcome(result.status, result.stderr.toString('utf8'));
}

function outcome(code: number | null, stderr: string): { code: number | null; error: string; peak: number } {
  const err = stderr.trim().split('\n');
  const peak = Number(/^maxRSS (\d+)$/.exec(err.at(-1) ?? '')?.[1]);
  return { code, error: err.filter((l) => l.startsWith('weft:')).join('\n'), peak };
}

describe('refused inputs of any size', () => {
  it('are refused in one line with a peak resident memory under 300 MB', () => {
    writeFileSync(join(folder, 'huge.csv'), 'a,b\n1,2\n');
    truncateSync(join(folder, 'huge.csv'), 200 * MB);
    writeFileSync(join(folder, 'huge.onnx'), Uint8Array.of(8, 10));
    truncateSync(join(folder, 'huge.onnx'), 200 * MB);
    const hundred = Array.from({ length: 100 }, (_, i) => i + 1);
    writeFileSync(
      join(folder, 'grid.json'),
      JSON.stringify({ data: 'huge.csv', flags: { hidden: hundred, window: hundred, streams: hundred, epochs: hundred } }),
    );
    const runs = [
      { args: ['train', 'huge.csv'], error: /^weft: huge\.csv: 200\.0 MB; weft reads data files of at most 32 MB/ },
      { args: ['convert', 'huge.onnx'], error: /^weft: huge\.onnx: 200\.0 MB; weft reads ONNX files of at most 64 MB$/ },
      { args: ['sweep', 'grid.json', '--merge'], error: /^weft: grid\.json: 100,000,000 combinations/ },
    ];
    for (const run of runs) {
      const result = measured(run.args);
      console.log(`weft ${run.args.join(' ')}: exit ${result.code}, peak ${(result.peak / MB).toFixed(0)} MB`);
      expect(result.code).toBe(1);
      expect(result.error).toMatch(run.error);
      expect(result.peak).toBeGreaterThan(0);
      expect(result.peak).toBeLessThan(300 * MB);
    }
  });

  it.skipIf(process.platform === 'win32')(
    'stops reading a 200 MB line from standard input at the line limit, under 300 MB',
    () => {
      // A small forecaster to run (its columns a, b), trained here on an invented series.
      writeFileSync(
        join(folder, 'ab.csv'),
        `a,b\n${Array.from({ length: 120 }, (_, t) => `${Math.sin(t / 4).toFixed(3)},${Math.cos(t / 4).toFixed(3)}`).join('\n')}\n`,
      );
      const trained = spawnSync(
        process.execPath,
        [binary, 'train', 'ab.csv', '--hidden', '4', '--epochs', '3', '--hybrid', 'no', '--quiet', '--out', 'ab.weft.json'],
        { cwd: folder, encoding: 'utf8' },
      );
      expect(trained.status).toBe(0);
      // Through a pipe, as `producer | weft run MODEL -` gives it: a header, then 200 MB of one line.
      const pipeline = `{ printf 'a,b\\n'; head -c ${200 * MB} /dev/zero | tr '\\000' '1'; } | "${process.execPath}" --require "${join(fixtures, 'max-rss.cjs')}" "${binary}" run ab.weft.json -`;
      const shell = spawnSync('sh', ['-c', pipeline], { cwd: folder, timeout: 120_000, maxBuffer: 16 * MB });
      const result = outcome(shell.status, shell.stderr.toString('utf8'));
      console.log(`weft run with a 200 MB line: exit ${result.code}, peak ${(result.peak / MB).toFixed(0)} MB`);
      expect(result.error).toBe('weft: <stdin>:2: a line longer than 1,000,000 characters; weft run reads at most that much per line');
      expect(result.peak).toBeLessThan(300 * MB);
    },
    60_000,
  );
});
