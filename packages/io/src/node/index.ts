/**
 * Node-only entry (`@weft/io/node`): files on disk. Writing is atomic: the text goes to a temporary file in the
 * same folder, is flushed to the disk, and is renamed over the target, so a reader sees either the old file or
 * the new one, never a half-written one. Nothing else in weft touches the file system.
 */
import { randomBytes } from 'node:crypto';
import { closeSync, fsyncSync, openSync, readFileSync, readdirSync, renameSync, rmSync, writeSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { WeftError, fail } from '@weft/core';
import type { SequenceModel } from '@weft/cells';
import type { SavedModel } from '../model-file.js';
import { checkMetadata, loadModel, modelTensors, readCheckpoint, readWeightFile, writeCheckpoint, writeWeightFile } from '@weft/io';
import type { Checkpoint, ReadOptions, TrainingStateSource, WeightFile, WeightMetadata, WriteOptions } from '@weft/io';

/** `.<name>.<pid>.<random>.tmp`: the temporary files of saves of `name`, by process. */
function temporaryPattern(name: string): RegExp {
  const escaped = name.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`^\\.${escaped}\\.(\\d+)\\.[0-9a-f]{16}\\.tmp$`);
}

function alive(pid: number): boolean {
  if (pid === process.pid) return true;
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Removes what earlier saves of `path` left behind when they were killed between writing and renaming: their
 * temporary files, unless the process that made one is still running (it may be saving now).
 */
function removeLeftovers(path: string): void {
  const folder = dirname(path);
  const pattern = temporaryPattern(basename(path));
  let names: string[];
  try {
    names = readdirSync(folder);
  } catch {
    return;
  }
  for (const name of names) {
    const match = pattern.exec(name);
    if (match !== null && !alive(Number(match[1]))) rmSync(join(folder, name), { force: true });
  }
}

/** The operating system's words for a failed write, by error code. */
function writeProblem(error: unknown): string {
  const code = (error as NodeJS.ErrnoException).code;
  if (code === 'ENOSPC') return 'no space left on the device';
  if (code === 'EDQUOT') return 'the disk quota is used up';
  if (code === 'ENOENT') return 'the folder does not exist';
  if (code === 'EACCES' || code === 'EPERM') return 'no permission to write there';
  if (code === 'EROFS') return 'a read-only file system';
  if (code === 'EISDIR') return 'a folder of that name';
  return (error as Error).message ?? String(error);
}

/**
 * Writes `text` (or bytes) to `path` atomically: a temporary file in the same folder, every byte written (a short
 * write goes on where it stopped; a write that makes no progress is a failure), flushed to the disk, renamed over
 * the target, and the folder flushed so the rename survives a crash. On any failure the target is as it was, the
 * temporary file is removed, and the error names `path` and the reason (no space left, no permission, …). The
 * temporary name holds the process id and a random part, so two saves never share one; leftovers of killed saves
 * are removed first. `write` stands in for the system's write in tests (it returns the bytes written).
 */
export function writeFileAtomic(
  path: string,
  text: string | Uint8Array,
  write: (descriptor: number, bytes: Uint8Array, offset: number, length: number) => number = writeSync,
): void {
  removeLeftovers(path);
  const folder = dirname(path);
  const temporary = join(folder, `.${basename(path)}.${process.pid}.${randomBytes(8).toString('hex')}.tmp`);
  const bytes = typeof text === 'string' ? new TextEncoder().encode(text) : text;
  let descriptor: number | null = null;
  try {
    descriptor = openSync(temporary, 'w');
    for (let done = 0; done < bytes.length; ) {
      const written = write(descriptor, bytes, done, bytes.length - done);
      if (!(written > 0)) fail('write_failed', path, `all ${bytes.length} bytes written`, `${done} (the disk took no more: is it full?)`);
      done += written;
    }
    fsyncSync(descriptor);
    closeSync(descriptor);
    descriptor = null;
    renameSync(temporary, path);
  } catch (error) {
    if (descriptor !== null) closeSync(descriptor);
    rmSync(temporary, { force: true });
    if (error instanceof WeftError) throw error;
    fail('write_failed', path, `a file written in full (${bytes.length} bytes)`, writeProblem(error));
  }
  // The rename is durable once the folder's entry is on the disk (not every platform can flush a folder).
  try {
    const handle = openSync(folder, 'r');
    try {
      fsyncSync(handle);
    } finally {
      closeSync(handle);
    }
  } catch {
    // Windows and some file systems refuse to open or flush a folder; the file itself is flushed.
  }
}

/**
 * Checks before a long run that `path` can be saved: its folder exists and takes a file (a small probe written and
 * removed). Throws the error a save would (Could not save at PATH: …), before any work is lost.
 */
export function checkWritable(path: string): void {
  const probe = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(8).toString('hex')}.probe`);
  try {
    const handle = openSync(probe, 'wx');
    closeSync(handle);
  } catch (error) {
    fail('write_failed', path, 'a folder that exists and takes files', writeProblem(error));
  } finally {
    rmSync(probe, { force: true });
  }
}

/** Reads a text file, turning "no such file" into the library's error with the path. */
export function readText(path: string): string {
  try {
    return readFileSync(path, 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    fail('bad_data', path, 'a readable file', code === 'ENOENT' ? 'no such file' : String((error as Error).message));
  }
}

/** Writes a model's weight file to `path` atomically (a temporary file, then a rename). */
export async function saveWeightFile(path: string, model: SavedModel, options: WriteOptions = {}): Promise<void> {
  writeFileAtomic(path, await writeWeightFile(model.description, modelTensors(model), options));
}

/** Reads a weight file and checks its metadata against its model (checkMetadata). */
export async function loadWeightFile(path: string, options: ReadOptions = {}): Promise<WeightFile> {
  return prefixed(path, async () => checkMetadata(await readWeightFile(readText(path), options)));
}

/** Reads a weight file from `path` and builds its model. */
export async function loadModelFile(path: string, options: ReadOptions = {}): Promise<SequenceModel> {
  return loadModel(await loadWeightFile(path, options));
}

/** Writes a trainer's checkpoint to `path` atomically. */
export async function saveCheckpoint(path: string, trainer: TrainingStateSource, model: SavedModel, metadata: WeightMetadata = {}): Promise<void> {
  writeFileAtomic(path, await writeCheckpoint(trainer, model, metadata));
}

/** Reads and checks a checkpoint from `path`; errors name the file. */
export async function loadCheckpoint(path: string, options: ReadOptions = {}): Promise<Checkpoint> {
  return prefixed(path, async () => {
    const checkpoint = await readCheckpoint(readText(path), options);
    checkMetadata(checkpoint.file);
    return checkpoint;
  });
}

/** Re-throws a weight-file error with the file's path in front of each problem's path. */
async function prefixed<T>(path: string, run: () => Promise<T>): Promise<T> {
  try {
    return await run();
  } catch (error) {
    if (error instanceof WeftError && error.problems[0]?.path !== path) {
      throw new WeftError(error.problems.map((p) => ({ ...p, path: `${path}: ${p.path}` })));
    }
    throw error;
  }
}
