import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Sha256, sha256Hex } from '../../../shared/records/sha256.js';
import { utf8Encode } from '../../../shared/records/utf8.js';

const ascii = (s: string): Uint8Array => Uint8Array.from(s, (c) => c.charCodeAt(0));

describe('sha256 (pure TypeScript)', () => {
  // FIPS 180-4 / NIST CSRC "Examples with intermediate values", SHA-256: one-block message "abc".
  it('matches the FIPS 180-4 example for "abc"', () => {
    expect(sha256Hex(ascii('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  // FIPS 180-4 / NIST CSRC example, SHA-256: two-block 448-bit message.
  it('matches the FIPS 180-4 example for the 448-bit message', () => {
    expect(sha256Hex(ascii('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'))).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
  });

  // NIST CAVS / FIPS 180-2 appendix B.3: one million repetitions of 'a', fed in uneven chunks.
  it('matches the one-million-a vector, fed in uneven chunks', () => {
    const h = new Sha256();
    const chunk = new Uint8Array(9973).fill(0x61);
    let left = 1_000_000;
    while (left > 0) {
      const n = Math.min(left, chunk.length);
      h.update(chunk.subarray(0, n));
      left -= n;
    }
    expect(Buffer.from(h.digest()).toString('hex')).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
  });

  // NIST CAVS SHA256ShortMsg.rsp, Len = 0: the empty message.
  it('matches the empty-message vector', () => {
    expect(sha256Hex(new Uint8Array(0))).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });

  // Reference: Node's crypto (OpenSSL) on random byte strings of every length around the 55/56/64-byte padding edges.
  it('agrees with node:crypto on random inputs and chunkings', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.nat(300), (bytes, cut) => {
        const c = Math.min(cut, bytes.length);
        const ours = Buffer.from(new Sha256().update(bytes.subarray(0, c)).update(bytes.subarray(c)).digest()).toString('hex');
        const ref = createHash('sha256').update(bytes).digest('hex');
        expect(ours).toBe(ref);
      }),
      { numRuns: 400 },
    );
  });

  // Reference: Node's crypto on one long update after an odd-sized one.
  it('agrees with node:crypto on a long input', () => {
    const bytes = new Uint8Array(300_007);
    for (let i = 0; i < bytes.length; i++) bytes[i] = (i * 2654435761) >>> 24;
    const ours = Buffer.from(new Sha256().update(bytes.subarray(0, 37)).update(bytes.subarray(37)).digest()).toString('hex');
    expect(ours).toBe(createHash('sha256').update(bytes).digest('hex'));
  });

  // Reference: Node's Buffer.from(s, 'utf8') (the WHATWG UTF-8 encoder), including astral and lone surrogates.
  it('encodes UTF-8 as Node does', () => {
    for (const s of ['', 'plain', 'Ñandú €', '𝛼-fund ✓', 'lone \ud800 surrogate', '\udc00x']) {
      expect(Buffer.from(utf8Encode(s)).toString('hex')).toBe(Buffer.from(s, 'utf8').toString('hex'));
    }
    fc.assert(
      fc.property(fc.string({ unit: 'binary' }), (s) => {
        expect(Buffer.from(utf8Encode(s)).equals(Buffer.from(s, 'utf8'))).toBe(true);
      }),
    );
  });
});
