/**
 * SHA-256 in plain TypeScript (FIPS 180-4, §4.1.2 functions, §4.2.2 constants, §5.1.1 padding, §6.2.2
 * computation), for places without Web Crypto: pages served over plain http from anywhere but localhost (a LAN
 * device, a kiosk) are not secure contexts, and browsers give them no `crypto.subtle`. `digest.ts` loads this
 * module only there, so the runtime bundle does not carry it. Checked against the NIST example vectors.
 */

// FIPS 180-4 §4.2.2: the first 32 bits of the fractional parts of the cube roots of the first 64 primes.
const roundConstants = new Uint32Array([
  0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5, 0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74,
  0x80deb1fe, 0x9bdc06a7, 0xc19bf174, 0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da, 0x983e5152, 0xa831c66d,
  0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967, 0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e,
  0x92722c85, 0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070, 0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5,
  0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3, 0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2,
]);

// FIPS 180-4 §5.3.3: the initial hash value.
const initialHash = [0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a, 0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19];

/** The SHA-256 digest of `bytes` as 64 lower-case hex digits. */
export function sha256HexSync(bytes: Uint8Array): string {
  // §5.1.1: append 1 bit, zeros to 448 mod 512 bits, then the message length in bits as a 64-bit big-endian number.
  const blocks = Math.ceil((bytes.length + 9) / 64);
  const padded = new Uint8Array(blocks * 64);
  padded.set(bytes);
  padded[bytes.length] = 0x80;
  const view = new DataView(padded.buffer);
  const bitLength = bytes.length * 8;
  view.setUint32(padded.length - 8, Math.floor(bitLength / 0x1_0000_0000));
  view.setUint32(padded.length - 4, bitLength >>> 0);

  const hash = new Uint32Array(initialHash);
  const schedule = new Uint32Array(64);
  for (let block = 0; block < blocks; block++) {
    // §6.2.2 step 1: the message schedule.
    for (let t = 0; t < 16; t++) schedule[t] = view.getUint32(block * 64 + t * 4);
    for (let t = 16; t < 64; t++) {
      const w15 = schedule[t - 15];
      const w2 = schedule[t - 2];
      const sigma0 = ((w15 >>> 7) | (w15 << 25)) ^ ((w15 >>> 18) | (w15 << 14)) ^ (w15 >>> 3);
      const sigma1 = ((w2 >>> 17) | (w2 << 15)) ^ ((w2 >>> 19) | (w2 << 13)) ^ (w2 >>> 10);
      schedule[t] = (sigma1 + schedule[t - 7] + sigma0 + schedule[t - 16]) | 0;
    }
    // Steps 2–4: eight working variables through 64 rounds, then added into the hash.
    let a = hash[0],
      b = hash[1],
      c = hash[2],
      d = hash[3],
      e = hash[4],
      f = hash[5],
      g = hash[6],
      h = hash[7];
    for (let t = 0; t < 64; t++) {
      const bigSigma1 = ((e >>> 6) | (e << 26)) ^ ((e >>> 11) | (e << 21)) ^ ((e >>> 25) | (e << 7));
      const choose = (e & f) ^ (~e & g);
      const t1 = (h + bigSigma1 + choose + roundConstants[t] + schedule[t]) | 0;
      const bigSigma0 = ((a >>> 2) | (a << 30)) ^ ((a >>> 13) | (a << 19)) ^ ((a >>> 22) | (a << 10));
      const majority = (a & b) ^ (a & c) ^ (b & c);
      const t2 = (bigSigma0 + majority) | 0;
      h = g;
      g = f;
      f = e;
      e = (d + t1) | 0;
      d = c;
      c = b;
      b = a;
      a = (t1 + t2) | 0;
    }
    hash[0] += a;
    hash[1] += b;
    hash[2] += c;
    hash[3] += d;
    hash[4] += e;
    hash[5] += f;
    hash[6] += g;
    hash[7] += h;
  }
  let hex = '';
  for (let i = 0; i < 8; i++) hex += hash[i].toString(16).padStart(8, '0');
  return hex;
}
