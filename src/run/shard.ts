/**
 * Sharding: split the matrix × recipe list into N deterministic shares.
 *
 * Pairs are listed matrix-major (suite order of matrices, then recipes) and shard K of N takes the
 * contiguous run [⌊(K−1)·P/N⌋, ⌊K·P/N⌋). Contiguous shares keep a matrix's recipes together, so a shard
 * builds (and holds) only the matrices it needs; shares differ in size by at most one pair. Every pair
 * lands in exactly one shard, and the split depends only on P and N.
 */
import { optionError } from '../util/errors.js';

export interface ShardSpec {
  /** 1-based. */
  index: number;
  count: number;
}

export interface Pair {
  matrixIndex: number;
  recipeIndex: number;
}

/** Parse "K/N" with 1 ≤ K ≤ N ≤ 10000. */
export function parseShard(text: string, option = '--shard'): ShardSpec {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw optionError(option, `expected K/N such as 2/4 (shard K of N, K from 1), got "${text}"`);
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || count > 10000) throw optionError(option, `the shard count N must be from 1 to 10000, got ${count}`);
  if (index < 1 || index > count) throw optionError(option, `K must be from 1 to ${count} (K is 1-based), got ${index}`);
  return { index, count };
}

/** Index range [start, end) of shard `spec` among `total` items. */
export function shardRange(total: number, spec: ShardSpec): { start: number; end: number } {
  const start = Math.floor(((spec.index - 1) * total) / spec.count);
  const end = Math.floor((spec.index * total) / spec.count);
  return { start, end };
}

/** All pairs, matrix-major. */
export function allPairs(nMatrices: number, nRecipes: number): Pair[] {
  const out: Pair[] = [];
  for (let m = 0; m < nMatrices; m++) for (let r = 0; r < nRecipes; r++) out.push({ matrixIndex: m, recipeIndex: r });
  return out;
}

/** The pairs of one shard (all pairs when spec is undefined). */
export function shardPairs(nMatrices: number, nRecipes: number, spec?: ShardSpec): Pair[] {
  const pairs = allPairs(nMatrices, nRecipes);
  if (!spec) return pairs;
  const { start, end } = shardRange(pairs.length, spec);
  return pairs.slice(start, end);
}
