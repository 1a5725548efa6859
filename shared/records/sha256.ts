/**
 * SHA-256 (FIPS 180-4, section 6.2) in plain TypeScript, so the domain core can
 * fingerprint a returns panel in any process (worker, renderer, CLI) without Node's
 * crypto module. Checked against the FIPS 180-4 / NIST CAVS example vectors and
 * against node:crypto in test/shared/records/sha256.test.ts.
 */
import { utf8Encode } from './utf8.js';

const K = new Uint32Array([
  0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5,
  0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174,
  0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da,
  0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967,
  0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85,
  0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070,
  0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3,
  0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2,
]);

const H0 = [0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a, 0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19];

/** Incremental hasher: feed bytes with update(), read the digest once with digest(). */
export class Sha256 {
  private readonly h = new Uint32Array(H0);
  private readonly block = new Uint8Array(64);
  private readonly w = new Uint32Array(64);
  private fill = 0;
  /** Message length in bytes (a double holds up to 2^53 exactly: ample). */
  private length = 0;
  private done = false;

  update(data: Uint8Array): this {
    if (this.done) throw new Error('Sha256.update after digest');
    let i = 0;
    this.length += data.length;
    if (this.fill > 0) {
      const take = Math.min(64 - this.fill, data.length);
      this.block.set(data.subarray(0, take), this.fill);
      this.fill += take;
      i = take;
      if (this.fill < 64) return this;
      this.compress(this.block, 0);
      this.fill = 0;
    }
    for (; i + 64 <= data.length; i += 64) this.compress(data, i);
    if (i < data.length) {
      this.block.set(data.subarray(i), 0);
      this.fill = data.length - i;
    }
    return this;
  }

  digest(): Uint8Array {
    if (this.done) throw new Error('Sha256.digest called twice');
    this.done = true;
    const bitsHi = Math.floor(this.length / 0x20000000);
    const bitsLo = (this.length * 8) >>> 0;
    const b = this.block;
    b[this.fill++] = 0x80;
    if (this.fill > 56) {
      b.fill(0, this.fill);
      this.compress(b, 0);
      this.fill = 0;
    }
    b.fill(0, this.fill, 56);
    b[56] = bitsHi >>> 24;
    b[57] = bitsHi >>> 16;
    b[58] = bitsHi >>> 8;
    b[59] = bitsHi;
    b[60] = bitsLo >>> 24;
    b[61] = bitsLo >>> 16;
    b[62] = bitsLo >>> 8;
    b[63] = bitsLo;
    this.compress(b, 0);
    const out = new Uint8Array(32);
    for (let j = 0; j < 8; j++) {
      out[4 * j] = this.h[j] >>> 24;
      out[4 * j + 1] = this.h[j] >>> 16;
      out[4 * j + 2] = this.h[j] >>> 8;
      out[4 * j + 3] = this.h[j];
    }
    return out;
  }

  private compress(data: Uint8Array, off: number): void {
    const w = this.w;
    for (let t = 0; t < 16; t++) {
      const p = off + 4 * t;
      w[t] = (data[p] << 24) | (data[p + 1] << 16) | (data[p + 2] << 8) | data[p + 3];
    }
    for (let t = 16; t < 64; t++) {
      const x = w[t - 15];
      const y = w[t - 2];
      const s0 = ((x >>> 7) | (x << 25)) ^ ((x >>> 18) | (x << 14)) ^ (x >>> 3);
      const s1 = ((y >>> 17) | (y << 15)) ^ ((y >>> 19) | (y << 13)) ^ (y >>> 10);
      w[t] = (w[t - 16] + s0 + w[t - 7] + s1) | 0;
    }
    const h = this.h;
    let a = h[0], b = h[1], c = h[2], d = h[3], e = h[4], f = h[5], g = h[6], k = h[7];
    for (let t = 0; t < 64; t++) {
      const S1 = ((e >>> 6) | (e << 26)) ^ ((e >>> 11) | (e << 21)) ^ ((e >>> 25) | (e << 7));
      const ch = (e & f) ^ (~e & g);
      const t1 = (k + S1 + ch + K[t] + w[t]) | 0;
      const S0 = ((a >>> 2) | (a << 30)) ^ ((a >>> 13) | (a << 19)) ^ ((a >>> 22) | (a << 10));
      const maj = (a & b) ^ (a & c) ^ (b & c);
      const t2 = (S0 + maj) | 0;
      k = g;
      g = f;
      f = e;
      e = (d + t1) | 0;
      d = c;
      c = b;
      b = a;
      a = (t1 + t2) | 0;
    }
    h[0] += a; h[1] += b; h[2] += c; h[3] += d; h[4] += e; h[5] += f; h[6] += g; h[7] += k;
  }
}

/** Lower-case hex of bytes. */
export function toHex(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i++) s += bytes[i].toString(16).padStart(2, '0');
  return s;
}

/** SHA-256 of bytes (or of a string's UTF-8 encoding), as 64 lower-case hex digits. */
export function sha256Hex(data: Uint8Array | string): string {
  const bytes = typeof data === 'string' ? utf8Encode(data) : data;
  return toHex(new Sha256().update(bytes).digest());
}
