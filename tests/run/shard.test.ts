import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { allPairs, parseShard, shardPairs, shardRange } from '../../src/run/shard.js';

describe('shards', () => {
  it('partition the matrix × recipe list exactly: every pair in exactly one shard, in order', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 12 }), fc.integer({ min: 1, max: 9 }), fc.integer({ min: 1, max: 40 }), (nm, nr, n) => {
      const all = allPairs(nm, nr).map((p) => `${p.matrixIndex}/${p.recipeIndex}`);
      const seen: string[] = [];
      const sizes: number[] = [];
      for (let k = 1; k <= n; k++) {
        const share = shardPairs(nm, nr, { index: k, count: n }).map((p) => `${p.matrixIndex}/${p.recipeIndex}`);
        sizes.push(share.length);
        seen.push(...share);
      }
      // Concatenating the shards in order gives the full list: each pair once, none missing.
      expect(seen).toEqual(all);
      // Balanced: sizes differ by at most one.
      expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
    }), { numRuns: 300 });
  });

  it('is deterministic and independent of anything but the counts', () => {
    expect(shardRange(10, { index: 1, count: 3 })).toEqual({ start: 0, end: 3 });
    expect(shardRange(10, { index: 2, count: 3 })).toEqual({ start: 3, end: 6 });
    expect(shardRange(10, { index: 3, count: 3 })).toEqual({ start: 6, end: 10 });
    expect(shardPairs(2, 2)).toHaveLength(4);
    // More shards than pairs: some shards are empty (and still valid).
    expect(shardPairs(1, 1, { index: 1, count: 2 })).toEqual([]);
    expect(shardPairs(1, 1, { index: 2, count: 2 })).toEqual([{ matrixIndex: 0, recipeIndex: 0 }]);
  });

  it('parses K/N and names the option on bad input', () => {
    expect(parseShard('2/4')).toEqual({ index: 2, count: 4 });
    expect(parseShard(' 1 / 1 ')).toEqual({ index: 1, count: 1 });
    expect(() => parseShard('0/4')).toThrow('option --shard: K must be from 1 to 4 (K is 1-based), got 0');
    expect(() => parseShard('5/4')).toThrow('option --shard: K must be from 1 to 4');
    expect(() => parseShard('1/0')).toThrow('option --shard: the shard count N must be from 1 to 10000, got 0');
    expect(() => parseShard('2of4')).toThrow('option --shard: expected K/N such as 2/4');
    expect(() => parseShard('-1/4')).toThrow('option --shard: expected K/N');
  });
});
