/** Test systems for the deflated GMRES variants (not a test file). */
import type { Csr } from '../../src/sparse/types.js';
import { csrFromTriplets } from '../sparse/model-matrices.js';
import { randomCsr, rng } from '../sparse/random-sparse.js';

/**
 * Morgan's bidiagonal test matrix, from memory (not verified against the paper's text): diagonal
 * 1, 2, …, n, superdiagonal 0.1 (Morgan, "GMRES with deflated restarting", SIAM J. Sci. Comput.
 * 24(1), 2002, Example 1, n = 1000, right-hand side all ones). Its small eigenvalues 1, 2, 3, …
 * are the ones restarted GMRES keeps losing and deflation keeps.
 */
export function morganBidiagonal(n: number, shift = 0): Csr {
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < n; i++) {
    t.push([i, i, i + 1 + shift]);
    if (i + 1 < n) t.push([i, i + 1, 0.1]);
  }
  return csrFromTriplets(n, t);
}

/** Seeded random non-symmetric sparse matrix with `shift` added to the diagonal (nonsingular in practice). */
export function randomShifted(seed: number, n: number, perRow: number, shift: number): Csr {
  const a = randomCsr(rng(seed), n, n, perRow);
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < n; i++) {
    t.push([i, i, shift]);
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) t.push([i, a.colInd[k], a.values[k]]);
  }
  return csrFromTriplets(n, t);
}

/** history[i+1] ≤ history[i] up to rounding (restarts continue from the recomputed residual). */
export function isMonotone(h: readonly number[]): boolean {
  for (let i = 1; i < h.length; i++) if (!(h[i] <= h[i - 1] * (1 + 1e-9))) return false;
  return true;
}
