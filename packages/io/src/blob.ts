/** Weight files as Blobs, for pages that download or receive them (File is a Blob). */
import { fail } from '@weft/core/base';
import type { ReadOptions, WeightFile } from './weight-file.js';
import { readWeightFile } from './weight-file.js';

/** A weight file's text as a Blob (`application/json`), for a download link. */
export function weightFileBlob(text: string): Blob {
  return new Blob([text], { type: 'application/json' });
}

/** Reads a weight file from a Blob or File, refusing one over the size limit before reading it. */
export async function readWeightFileBlob(blob: Blob, options: ReadOptions = {}): Promise<WeightFile> {
  const limit = options.maxCharacters ?? 512 * 1024 * 1024;
  // Refuse before reading: a UTF-8 Blob has at least one byte per character.
  if (blob.size > limit * 4) {
    fail('bad_weight_file', '(file)', `at most ${limit} characters`, `${blob.size} bytes`);
  }
  return readWeightFile(await blob.text(), options);
}
