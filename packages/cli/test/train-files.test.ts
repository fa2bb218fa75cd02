/**
 * The files a training run leaves: a fresh run does not silently replace the checkpoint of an earlier one (it says
 * how to resume or start over), and SIGKILLs at random moments of a checkpointing run leave, after the next save,
 * no temporary file and always a complete checkpoint (the old one or the new one).
 */
import { spawn, spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { readCheckpoint } from '@weft/io';

const binary = fileURLToPath(new URL('../dist/main.js', import.meta.url));
const demo = fileURLToPath(new URL('../demo/greenhouse.csv', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-train-files-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

// Streams: the first checkpoint comes at once (sliding windows would first try the plain model and the hybrid).
const small = [demo, '--target', 'air_temperature_c', '--horizon', '4', '--hidden', '8', '--examples', 'streams', '--quiet'];

function weft(args: string[]) {
  const result = spawnSync(process.execPath, [binary, ...args], { cwd: folder, encoding: 'utf8', timeout: 120_000 });
  return { code: result.status, out: result.stdout, err: result.stderr };
}

describe('the files of a training run', () => {
  it("refuses to replace an earlier run's checkpoint unless told to start over", () => {
    expect(weft(['train', ...small, '--epochs', '1', '--out', 'first.weft.json']).code).toBe(0);
    const again = weft(['train', ...small, '--epochs', '1', '--out', 'first.weft.json']);
    expect(again.code).toBe(2);
    expect(again.err.trim()).toBe(
      `weft: ${join(folder, 'first.weft.checkpoint.json')} holds the checkpoint of an earlier run: continue it with --resume ${join(folder, 'first.weft.checkpoint.json')}, or pass --start-over to replace it`,
    );
    expect(weft(['train', ...small, '--epochs', '1', '--out', 'first.weft.json', '--start-over']).code).toBe(0);
  });

  it('refuses an output folder that is missing or read-only before training, naming the path', () => {
    const missing = weft(['train', ...small, '--epochs', '50', '--out', join('missing', 'x.weft.json')]);
    expect(missing.code).toBe(1);
    expect(missing.err.trim()).toBe(
      `weft: Could not save at ${join(folder, 'missing', 'x.weft.json')}: expected a folder that exists and takes files, received the folder does not exist`,
    );
    mkdirSync(join(folder, 'locked'));
    chmodSync(join(folder, 'locked'), 0o500);
    const locked = weft(['train', ...small, '--epochs', '50', '--out', join('locked', 'x.weft.json')]);
    chmodSync(join(folder, 'locked'), 0o700);
    // As root a folder's mode does not stop a write; the check then passes and the run trains (not asserted here).
    if (process.getuid?.() !== 0) {
      expect(locked.code).toBe(1);
      expect(locked.err.trim()).toBe(
        `weft: Could not save at ${join(folder, 'locked', 'x.weft.json')}: expected a folder that exists and takes files, received no permission to write there`,
      );
    }
    // Nothing was written beside the data either: no checkpoint, no loss curve.
    expect(readdirSync(folder).filter((name) => name.startsWith('x.'))).toEqual([]);
  });

  it('leaves a complete checkpoint and no temporary file after 20 SIGKILLs at random moments and one more save', async () => {
    const random = new Random('kill loop');
    const checkpoint = join(folder, 'killed.weft.checkpoint.json');
    const args = [binary, 'train', ...small, '--epochs', '400', '--checkpoint-every', '1', '--out', 'killed.weft.json', '--start-over'];
    const started = Date.now();
    let kills = 0;
    while (kills < 20 && Date.now() - started < 90_000) {
      const child = spawn(process.execPath, args, { cwd: folder, stdio: 'ignore' });
      // Wait until the run writes checkpoints, then kill it at a random moment of its saving.
      const firstSeen = Date.now();
      while (!existsSync(checkpoint) && Date.now() - firstSeen < 30_000) await new Promise((r) => setTimeout(r, 10));
      await new Promise((r) => setTimeout(r, 150 + Math.floor(random.uniform() * 250)));
      child.kill('SIGKILL');
      await new Promise((r) => child.on('exit', r));
      kills++;
      // Whatever the moment, the checkpoint on disk is complete: the old one or the new one.
      await expect(readCheckpoint(readFileSync(checkpoint, 'utf8'))).resolves.toBeDefined();
    }
    expect(kills).toBe(20);
    // One more save of the same file clears what the killed saves left behind.
    expect(weft(['train', ...small, '--epochs', '1', '--checkpoint-every', '1', '--out', 'killed.weft.json', '--start-over']).code).toBe(0);
    expect(readdirSync(folder).filter((name) => name.endsWith('.tmp'))).toEqual([]);
  }, 120_000);
});
