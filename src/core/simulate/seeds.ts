/**
 * Independent random streams derived from (scenario seed, stream, subject, epoch …), so each
 * subject and each epoch can be generated alone and in any order with the same numbers.
 */
import { Random } from '../stats/random.ts';

/** Stream numbers: one per kind of random draw. */
export const STREAM = {
  subject: 1,
  hypnogram: 2,
  block: 3,
  events: 4,
  movement: 5,
  covariates: 6,
  artifacts: 7,
} as const;

/** murmur3 fmix32 finaliser (Appleby 2011, MurmurHash3), an avalanche over 32 bits. */
function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** A 32-bit seed from the parts, each mixed in turn (order matters). */
export function deriveSeed(...parts: number[]): number {
  let h = 0x2545f491;
  for (const p of parts) h = fmix32((h ^ fmix32((p | 0) + 0x9e3779b9)) + 0x6a09e667);
  return h;
}

export function streamRandom(...parts: number[]): Random {
  return new Random(deriveSeed(...parts));
}
