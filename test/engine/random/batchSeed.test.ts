import { describe, it, expect } from 'vitest';
import { batchSeed, fnv1a64, splitMix64 } from '../../../src/engine/random/batchSeed.ts';

const GAMMA = 0x9e3779b97f4a7c15n;

describe('batch seeds', () => {
  it('SplitMix64 reproduces the reference generator outputs', () => {
    // S. Vigna, splitmix64.c (prng.di.unimi.it): state += γ; output mix64(state). From state 0 the first output is
    // 0xE220A8397B1DCDAF (from memory); from state 1234567 the first two are 6457827717110365317 and
    // 3203168211198807973 (from memory; the test vector used by many ports).
    expect(splitMix64(GAMMA)).toBe(0xe220a8397b1dcdafn);
    const m = (1n << 64n) - 1n;
    expect(splitMix64((1234567n + GAMMA) & m)).toBe(6457827717110365317n);
    expect(splitMix64((1234567n + 2n * GAMMA) & m)).toBe(3203168211198807973n);
  });

  it('FNV-1a 64 matches its published test values', () => {
    // Fowler/Noll/Vo FNV test suite (isthe.com/chongo/tech/comp/fnv): FNV-1a 64 of "" = 0xcbf29ce484222325,
    // of "a" = 0xaf63dc4c8601ec8c (from memory).
    expect(fnv1a64('')).toBe(0xcbf29ce484222325n);
    expect(fnv1a64('a')).toBe(0xaf63dc4c8601ec8cn);
  });

  it('is a pure function of (run seed, batch) and differs between batches and seeds', () => {
    expect(batchSeed(42, 7)).toBe(batchSeed(42, 7));
    const seeds = new Set([0, 1, 2, 3, 4, 5].map((b) => batchSeed(42, b)));
    expect(seeds.size).toBe(6);
    expect(batchSeed(42, 0)).not.toBe(batchSeed(43, 0));
    expect(batchSeed('study-A', 0)).toMatch(/^[0-9a-f]{16}$/);
  });

  it('rejects a negative or fractional batch index and a bad seed', () => {
    expect(() => batchSeed(1, -1)).toThrow(/batch index/);
    expect(() => batchSeed(1, 1.5)).toThrow(/batch index/);
    expect(() => batchSeed(-3, 0)).toThrow(/seed/);
  });
});
