/** Test fixtures for the preconditioner tests: seeded random numbers and small model matrices. */
import type { Bsr, Csr } from '../../src/sparse/types.js';
import type { Preconditioner, SystemMatrix } from '../../src/precond/types.js';
import { gatherBlocks, scatterBlocks } from '../../src/precond/block-tools.js';
import type { Recipe } from '../../src/solvers/recipe.js';
import { DEFAULT_RECIPE } from '../../src/solvers/recipe.js';
import { bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { mulberry32 } from '../../src/util/random.js';

export { csrFromTriplets, csrMatVec, poisson1d, poisson2d } from '../sparse/model-matrices.js';
import { maxAbsDiff } from '../sparse/random-sparse.js';
export { maxAbsDiff };

export const rng = mulberry32;

export function randomVector(n: number, seed: number): Float64Array {
  const r = rng(seed);
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = 2 * r() - 1;
  return v;
}

export function recipe(over: Partial<Recipe> = {}): Recipe {
  return { ...DEFAULT_RECIPE, ...over };
}

export function systemOf(bsr: Bsr, slabOffsets?: Int32Array): SystemMatrix {
  return { bsr, csr: bsrToCsr(bsr), slabOffsets };
}

export function systemOfCsr(csr: Csr, bs = 1): SystemMatrix {
  return { csr, bsr: csrToBsr(csr, bs) };
}

/** CSR from a dense row-major array (zeros dropped). */
export function csrFromDense(n: number, dense: ArrayLike<number>): Csr {
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [], vals: number[] = [];
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const v = dense[i * n + j];
      if (v !== 0) { cols.push(j); vals.push(v); }
    }
    rowPtr[i + 1] = cols.length;
  }
  return { nRows: n, nCols: n, rowPtr, colInd: Int32Array.from(cols), values: Float64Array.from(vals) };
}

/**
 * Random BSR with NON-symmetric dense blocks on a given block pattern; diagonal blocks get
 * `diagBoost`·I added so block factorizations are well conditioned.
 */
export function randomBsr(
  nb: number, bs: number, pattern: Array<[number, number]>, seed: number, diagBoost = 4 * bs,
): Bsr {
  const r = rng(seed);
  const set = new Set<string>();
  const pairs: Array<[number, number]> = [];
  for (let i = 0; i < nb; i++) pairs.push([i, i]);
  for (const p of pattern) pairs.push(p);
  const uniq = pairs.filter(([i, j]) => { const k = `${i},${j}`; if (set.has(k)) return false; set.add(k); return true; })
    .sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  const bb = bs * bs;
  const rowPtr = new Int32Array(nb + 1);
  const colInd = new Int32Array(uniq.length);
  const values = new Float64Array(uniq.length * bb);
  uniq.forEach(([i, j], k) => {
    rowPtr[i + 1]++;
    colInd[k] = j;
    for (let p = 0; p < bb; p++) values[k * bb + p] = 2 * r() - 1;
    if (i === j) for (let d = 0; d < bs; d++) values[k * bb + d * bs + d] += diagBoost;
  });
  for (let i = 0; i < nb; i++) rowPtr[i + 1] += rowPtr[i];
  return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd, values };
}

/** Dense copy of a BSR matrix (row-major n×n). */
export function bsrToDense(a: Bsr): Float64Array {
  const n = a.nBlockRows * a.bs, bs = a.bs, bb = bs * bs;
  const d = new Float64Array(n * n);
  for (let I = 0; I < a.nBlockRows; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const J = a.colInd[k];
      for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) d[(I * bs + i) * n + J * bs + j] = a.values[k * bb + i * bs + j];
    }
  }
  return d;
}

/**
 * Max |z − z'| between M applied to r and the natural-order N (built on P A Pᵀ) conjugated back:
 * z' = scatter(N⁻¹ gather(r)), perm[new] = old. Zero to rounding when M is N's reordered twin.
 */
export function reorderedApplyDifference(
  M: Preconditioner, N: Preconditioner, perm: Int32Array, bs: number, seed: number,
): number {
  const n = perm.length * bs;
  const rhs = randomVector(n, seed);
  const z = new Float64Array(n), rp = new Float64Array(n), zp = new Float64Array(n), want = new Float64Array(n);
  M.apply(rhs, z);
  gatherBlocks(rhs, perm, bs, rp);
  N.apply(rp, zp);
  scatterBlocks(zp, perm, bs, want);
  return maxAbsDiff(z, want);
}
