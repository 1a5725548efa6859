/**
 * SHA-256 hashers from Node's crypto module, loaded on first use. Loading node:crypto costs
 * a command about 6 ms, and a fit on a store whose subjects are packed hashes nothing (the
 * record takes the stored digests; the panel cache's key is its text, not hashed), so a fit
 * does not load it at all; imports, exports and fingerprints of unpacked data load it when
 * they first hash.
 */
import type { Hash } from 'node:crypto';
import { createRequire } from 'node:module';

let crypto: typeof import('node:crypto') | undefined;

/** A new SHA-256 hasher (node:crypto). */
export function sha256Hasher(): Hash {
  crypto ??= createRequire(import.meta.url)('node:crypto') as typeof import('node:crypto');
  return crypto.createHash('sha256');
}

/** SHA-256 (hex) by node:crypto, for shared/records' fingerprints (the same digest as its own code, faster). */
export const nodeSha256 = (bytes: Uint8Array): string => sha256Hasher().update(bytes).digest('hex');
