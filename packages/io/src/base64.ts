/**
 * Base64 with the standard alphabet and '=' padding (RFC 4648, §4), strict on decoding: any character outside
 * the alphabet, a wrong length or misplaced padding is refused (the caller names where). Written here rather than
 * borrowed from the platform so that Node and browsers decode exactly alike and errors can say what was wrong.
 */

const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
const lookup = new Int16Array(128).fill(-1);
for (let i = 0; i < alphabet.length; i++) lookup[alphabet.charCodeAt(i)] = i;

export function encodeBase64(bytes: Uint8Array): string {
  const parts: string[] = [];
  let chunk = '';
  for (let i = 0; i < bytes.length; i += 3) {
    const a = bytes[i];
    const b = i + 1 < bytes.length ? bytes[i + 1] : 0;
    const c = i + 2 < bytes.length ? bytes[i + 2] : 0;
    const n = (a << 16) | (b << 8) | c;
    chunk += alphabet[(n >> 18) & 63] + alphabet[(n >> 12) & 63];
    chunk += i + 1 < bytes.length ? alphabet[(n >> 6) & 63] : '=';
    chunk += i + 2 < bytes.length ? alphabet[n & 63] : '=';
    if (chunk.length >= 8192) {
      parts.push(chunk);
      chunk = '';
    }
  }
  parts.push(chunk);
  return parts.join('');
}

/** The decoded length of a well-formed base64 text, or −1 if its length or padding is impossible. */
export function decodedLength(text: string): number {
  if (text.length % 4 !== 0) return -1;
  if (text.length === 0) return 0;
  const padding = text.endsWith('==') ? 2 : text.endsWith('=') ? 1 : 0;
  return (text.length / 4) * 3 - padding;
}

/**
 * Decodes into `out` (which must have `decodedLength(text)` bytes). Returns −1 on success, else the index of the
 * first offending character.
 */
export function decodeBase64Into(text: string, out: Uint8Array): number {
  const length = decodedLength(text);
  if (length < 0) return text.length;
  let o = 0;
  for (let i = 0; i < text.length; i += 4) {
    let n = 0;
    for (let k = 0; k < 4; k++) {
      const code = text.charCodeAt(i + k);
      let value: number;
      if (code === 61 /* '=' */ && i + 4 === text.length && k >= 2 && (k === 3 || text.charCodeAt(i + 3) === 61)) {
        value = 0;
      } else {
        value = code < 128 ? lookup[code] : -1;
        if (value < 0) return i + k;
      }
      n = (n << 6) | value;
    }
    if (o < length) out[o++] = (n >> 16) & 255;
    if (o < length) out[o++] = (n >> 8) & 255;
    if (o < length) out[o++] = n & 255;
  }
  return -1;
}
