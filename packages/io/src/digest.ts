/** SHA-256 (FIPS 180-4) through the platform's Web Crypto (`crypto.subtle`), as lower-case hex. */

export async function sha256Hex(bytes: Uint8Array): Promise<string> {
  const subtle = globalThis.crypto?.subtle;
  if (subtle === undefined) throw new Error('Web Crypto (crypto.subtle) is not available here; it is needed for the SHA-256 digest');
  const digest = new Uint8Array(await subtle.digest('SHA-256', bytes as Uint8Array<ArrayBuffer>));
  let hex = '';
  for (const byte of digest) hex += byte.toString(16).padStart(2, '0');
  return hex;
}
