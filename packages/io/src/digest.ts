/**
 * SHA-256 (FIPS 180-4) as lower-case hex: through the platform's Web Crypto (`crypto.subtle`) where there is one,
 * otherwise through the plain-TypeScript implementation in `sha256.ts`, loaded only then (browsers give pages
 * that are not secure contexts no `crypto.subtle`). Both give the same digest; a failure is a `WeftError`.
 */
import { fail } from '@weft/core/base';

/** The SHA-256 digest of `bytes` as 64 lower-case hex digits (Web Crypto where present, else plain TypeScript). */
export async function sha256Hex(bytes: Uint8Array): Promise<string> {
  const subtle = globalThis.crypto?.subtle;
  if (subtle === undefined) {
    const { sha256HexSync } = await import('./sha256.js');
    return sha256HexSync(bytes);
  }
  let digest: Uint8Array;
  try {
    digest = new Uint8Array(await subtle.digest('SHA-256', bytes as Uint8Array<ArrayBuffer>));
  } catch (error) {
    fail('digest_failed', 'sha256Hex', 'a SHA-256 digest from Web Crypto', error instanceof Error ? error.message : String(error));
  }
  let hex = '';
  for (const byte of digest) hex += byte.toString(16).padStart(2, '0');
  return hex;
}
