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

/**
 * Writes `text` (or bytes) to `path` atomically (temporary file in the same folder, flush, rename). The temporary
 * name holds the process id and a random part, so two saves never share one; leftovers of killed saves are removed
 * first.
 */
export function writeFileAtomic(path: string, text: string | Uint8Array): void {
  removeLeftovers(path);
  const temporary = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(8).toString('hex')}.tmp`);
  let descriptor: number | null = null;
  try {
    descriptor = openSync(temporary, 'w');
    if (typeof text === 'string') writeSync(descriptor, text);
    else writeSync(descriptor, text, 0, text.length);
    fsyncSync(descriptor);
    closeSync(descriptor);
    descriptor = null;
    renameSync(temporary, path);
  } catch (error) {
    if (descriptor !== null) closeSync(descriptor);
    rmSync(temporary, { force: true });
    throw error;
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
