/**
 * The forms of a weight file other than its text (source.ts reads text itself and loads this module only when
 * another form is given, so a bundle that never sees one carries none of it): bytes (an `ArrayBuffer` or a typed
 * array, UTF-8), a `Response`, a `URL` (fetched), the parsed JSON object, or a file already read. It imports nothing
 * at run time (errors come through `refuse`), so a bundler puts it in a chunk of its own.
 */
import type { WeightFile } from '../weight-file.js';
import type { WeightSource } from './source.js';

/** Makes a one-line error (the caller's `fail`). */
export type Refuse = (code: 'bad_weight_file' | 'invalid_argument', path: string, expected: string, received: string) => never;

/** A file already read: its tensors carry their values as typed arrays. */
function isRead(source: object): source is WeightFile {
  const tensors = (source as { tensors?: unknown }).tensors;
  return (
    Array.isArray(tensors) &&
    tensors.length > 0 &&
    tensors.every((t) => typeof t === 'object' && t !== null && ArrayBuffer.isView((t as { values?: unknown }).values))
  );
}

/** The text of a fetched weight file, or an error naming the address and the status. */
async function responseText(response: Response, where: string, refuse: Refuse): Promise<string> {
  if (!response.ok) refuse('bad_weight_file', where, 'a response with status 200–299', `status ${response.status}`);
  return response.text();
}

/** The text a source holds (for the reader to read and check), or the file when it was already read. */
export async function sourceText(source: Exclude<WeightSource, string>, refuse: Refuse): Promise<string | WeightFile> {
  const where = 'createRuntime.source';
  if (typeof source !== 'object' || source === null)
    refuse(
      'invalid_argument',
      where,
      'weight-file text, bytes, a Response, a URL, a parsed weight file or one read by readWeightFile',
      source === null ? 'null' : typeof source,
    );
  if (source instanceof ArrayBuffer || ArrayBuffer.isView(source)) {
    const bytes = source instanceof ArrayBuffer ? new Uint8Array(source) : new Uint8Array(source.buffer, source.byteOffset, source.byteLength);
    try {
      return new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    } catch {
      return refuse('bad_weight_file', where, 'the UTF-8 bytes of a weight file', `${bytes.length} bytes that are not UTF-8`);
    }
  }
  if (typeof URL !== 'undefined' && source instanceof URL) {
    if (typeof fetch !== 'function') refuse('invalid_argument', where, 'a URL where fetch exists', source.href);
    return responseText(await fetch(source), source.href, refuse);
  }
  if (typeof Response !== 'undefined' && source instanceof Response) return responseText(source, source.url === '' ? where : source.url, refuse);
  if (isRead(source)) return source;
  // A parsed weight file: its JSON again, so that it meets every check a file's text does.
  return JSON.stringify(source);
}
