// Identifiers: ULIDs (time-ordered, 80 random bits) for rows and request ids. The ulid package asks
// the system for one random byte per character; drawing from a pooled buffer of crypto-grade random
// numbers instead keeps the randomness and takes a hot path (one id per request) off the profile.
import { randomFillSync } from 'node:crypto';
import { ulid } from 'ulid';

const pool = new Uint32Array(1024);
let next = pool.length;

/** A uniform number in [0, 1) from the pooled crypto random numbers. */
function pooledRandom(): number {
  if (next === pool.length) {
    randomFillSync(pool);
    next = 0;
  }
  return pool[next++] / 0x1_0000_0000;
}

/** A new ULID. */
export function newId(): string {
  return ulid(undefined, pooledRandom);
}
