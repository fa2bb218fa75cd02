/** Base64 (RFC 4648 §4) to bytes, for the WebAssembly modules shipped inside the build output. */
export function decodeBase64Bytes(text: string): Uint8Array<ArrayBuffer> {
  const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
  const table = new Int16Array(128).fill(-1);
  for (let i = 0; i < alphabet.length; i++) table[alphabet.charCodeAt(i)] = i;
  let end = text.length;
  while (end > 0 && text[end - 1] === '=') end--;
  const out = new Uint8Array(Math.floor((end * 6) / 8));
  let bits = 0;
  let value = 0;
  let o = 0;
  for (let i = 0; i < end; i++) {
    value = (value << 6) | table[text.charCodeAt(i)];
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out[o++] = (value >> bits) & 0xff;
    }
  }
  return out;
}
