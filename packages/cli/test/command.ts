/**
 * Running the built `weft` binary as a subprocess in a folder of temporary files (the test command builds it first),
 * for the command's tests.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, expect } from 'vitest';

/** The built command's entry. */
export const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
/** Cells of a user's own for `weft check --module`. */
export const fixtures = fileURLToPath(new URL('./fixtures/', import.meta.url));

/** What one run of the command printed and how it ended. */
export interface CommandResult {
  readonly code: number | null;
  readonly out: string;
  readonly err: string;
}

/** A temporary folder (removed after the file's tests) and a way to run `weft` in it. */
export function commandFolder(prefix: string): { folder: string; weft: (args: string[], input?: string, env?: NodeJS.ProcessEnv) => CommandResult } {
  const folder = mkdtempSync(join(tmpdir(), prefix));
  afterAll(() => rmSync(folder, { recursive: true, force: true }));
  const weft = (args: string[], input?: string, env?: NodeJS.ProcessEnv): CommandResult => {
    const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', input, timeout: 120_000, env: env ?? process.env });
    return { code: result.status, out: result.stdout, err: result.stderr };
  };
  return { folder, weft };
}

/** Expect one line on stderr, matching `pattern`, no stack trace, and the exit code. */
export function expectOneLineError(result: CommandResult, code: number, pattern: RegExp): void {
  expect(result.code).toBe(code);
  const lines = result.err.trimEnd().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(pattern);
  expect(result.err).not.toMatch(/\n\s+at /);
}

/** Writes an invented text (notes from a weaving workshop, repeated with variations) as notes.txt in `folder`. */
export function writeNotes(folder: string): void {
  const notes = Array.from(
    { length: 60 },
    (_, i) =>
      `day ${i % 7}: the warp was ${['wool', 'linen', 'silk'][i % 3]} and the weft was ${['red', 'blue', 'gold', 'grey'][i % 4]}; we wove ${10 + (i % 9)} rows before tea.\n`,
  ).join('');
  writeFileSync(join(folder, 'notes.txt'), notes);
}
