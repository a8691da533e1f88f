/**
 * Block permutations for `slabbench convert`: read from a file, reversed, or shuffled with a
 * seed; and the effect of a permutation on slab offsets. All permutations map NEW block row →
 * OLD block row (perm[i] = old index of new block row i), as in src/sparse/permute.ts.
 */
import { readFileSync } from 'node:fs';
import { fileError, optionError } from '../util/errors.js';
import { permutationProblem } from '../sparse/permute.js';
import { mulberry32 } from '../util/random.js';

/**
 * Permutation file: one 0-based OLD block-row index per line, line i (not counting blank lines
 * and `#` comments) naming the block row that becomes block row i.
 */
export function readPermutationFile(path: string, nBlockRows: number): Int32Array {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(path, undefined, code === 'ENOENT' ? 'no such file' : `cannot read (${code ?? String(e)})`);
  }
  const values: number[] = [];
  const lines = text.split(/\r\n|\r|\n/);
  for (let l = 0; l < lines.length; l++) {
    const t = lines[l].trim();
    if (t === '' || t.startsWith('#')) continue;
    if (!/^\d+$/.test(t)) throw fileError(path, l + 1, `expected one 0-based block row index per line, found "${t.length > 24 ? `${t.slice(0, 21)}...` : t}"`);
    values.push(Number(t));
  }
  if (values.length !== nBlockRows) {
    throw fileError(path, undefined, `has ${values.length} indices, expected ${nBlockRows} (one per block row)`);
  }
  const problem = permutationProblem(values, nBlockRows);
  if (problem !== undefined) {
    const oneBased = values.length > 0 && Math.min(...values) === 1 && Math.max(...values) === nBlockRows;
    throw fileError(path, undefined, `not a permutation of 0..${nBlockRows - 1}: ${problem}${oneBased ? ' (the indices look 1-based; this file is 0-based)' : ''}`);
  }
  return Int32Array.from(values);
}

/** new block row i = old block row n-1-i. */
export function reversePermutation(n: number): Int32Array {
  const p = new Int32Array(n);
  for (let i = 0; i < n; i++) p[i] = n - 1 - i;
  return p;
}

const rng = mulberry32;

/**
 * Random block order from a seed (Fisher–Yates). With slab offsets, block rows are shuffled
 * only within their slab, so the slab (time) order survives.
 */
export function shufflePermutation(n: number, seed: number, slabOffsets?: readonly number[]): Int32Array {
  const p = new Int32Array(n);
  for (let i = 0; i < n; i++) p[i] = i;
  const r = rng(seed);
  const bounds = slabOffsets ?? [0, n];
  for (let s = 0; s + 1 < bounds.length; s++) {
    const lo = bounds[s];
    for (let i = bounds[s + 1] - 1; i > lo; i--) {
      const j = lo + Math.floor(r() * (i - lo + 1));
      const t = p[i]; p[i] = p[j]; p[j] = t;
    }
  }
  return p;
}

/**
 * Slab offsets after a block permutation, when every slab still occupies consecutive block
 * rows (possibly in another slab order); undefined when the permutation mixes slabs.
 */
export function permuteSlabOffsets(offsets: readonly number[], perm: Int32Array): number[] | undefined {
  const n = perm.length;
  const slabOf = new Int32Array(n);
  for (let s = 0; s + 1 < offsets.length; s++) for (let i = offsets[s]; i < offsets[s + 1]; i++) slabOf[i] = s;
  const seen = new Uint8Array(offsets.length);
  const out = [0];
  for (let i = 0; i < n; i++) {
    const s = slabOf[perm[i]];
    if (i > 0 && s === slabOf[perm[i - 1]]) continue;
    if (seen[s]) return undefined;
    seen[s] = 1;
    if (i > 0) out.push(i);
  }
  out.push(n);
  return out;
}

/** Parse `--shuffle-blocks SEED`. */
export function parseSeed(v: string): number {
  if (!/^\d+$/.test(v.trim()) || Number(v) > 2 ** 32 - 1) throw optionError('--shuffle-blocks', `expected a seed 0..4294967295, got "${v}"`);
  return Number(v);
}
