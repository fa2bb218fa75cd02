/**
 * Where a runtime's weight file comes from, in the forms an integrator has it: its text, its bytes (an `ArrayBuffer`
 * or a typed array, UTF-8), a `Response` (from `fetch`), a `URL` (fetched), the parsed JSON object, or a file already
 * read by `readWeightFile`. Every form but the last goes through the same reader and its checks; anything else is a
 * one-line error naming what was given. Text is read here; the other forms are turned into text by a module loaded
 * only when one is given (source-forms.ts).
 */
import { fail } from '@weft/core/base';
import type { ReadOptions, WeightFile } from '../weight-file.js';
import { readWeightFile } from '../weight-file.js';

/** A weight file in any of the forms `createRuntime` takes. */
export type WeightSource = string | ArrayBuffer | ArrayBufferView | Response | URL | WeightFile | Readonly<Record<string, unknown>>;

/** The weight file a source holds, read and checked (a file already read is taken as it is). */
export async function weightFileFrom(source: WeightSource, options: ReadOptions = {}): Promise<WeightFile> {
  if (typeof source === 'string') return readWeightFile(source, options);
  const read = await (await import('./source-forms.js')).sourceText(source, fail);
  return typeof read === 'string' ? readWeightFile(read, options) : read;
}
