/**
 * A data file's bytes as text, strictly: UTF-8 as RFC 3629 defines it (no overlong forms, no surrogates, nothing past
 * U+10FFFF), a byte-order mark kept for the readers that skip it. A byte that breaks it is an error at the file's
 * line and column (characters counted from 1), never a U+FFFD quietly put in its place, where it would become a
 * token, a label or a cell that the file never held.
 */
import { CommandError } from './errors.js';

const strict = new TextDecoder('utf-8', { fatal: true });

/** The offset of the first byte that breaks UTF-8 (RFC 3629, §4's syntax), or −1 when every byte is in place. */
export function firstInvalidUtf8(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length) {
    const b = bytes[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    // The sequence's length, and the range its second byte must fall in (which rules out overlong forms,
    // surrogates and code points past U+10FFFF).
    let length: number;
    let low = 0x80;
    let high = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) length = 2;
    else if (b >= 0xe0 && b <= 0xef) {
      length = 3;
      if (b === 0xe0) low = 0xa0;
      if (b === 0xed) high = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      length = 4;
      if (b === 0xf0) low = 0x90;
      if (b === 0xf4) high = 0x8f;
    } else return i;
    for (let k = 1; k < length; k++) {
      const c = bytes[i + k];
      if (c === undefined) return i;
      if (k === 1 ? c < low || c > high : c < 0x80 || c > 0xbf) return i;
    }
    i += length;
  }
  return -1;
}

/** The bytes as UTF-8 text, or a one-line error naming `name`, the line and column of the first bad byte, and the byte. */
export function utf8Text(bytes: Uint8Array, name: string): string {
  try {
    return strict.decode(bytes);
  } catch {
    const at = firstInvalidUtf8(bytes);
    let line = 1;
    let column = 1;
    for (let i = 0; i < at; i++) {
      if (bytes[i] === 0x0a) {
        line++;
        column = 1;
      } else if ((bytes[i] & 0xc0) !== 0x80) column++;
    }
    throw new CommandError(
      `${name}:${line}:${column}: expected UTF-8 text, received the byte 0x${bytes[at].toString(16).padStart(2, '0')} (save the file as UTF-8)`,
    );
  }
}
