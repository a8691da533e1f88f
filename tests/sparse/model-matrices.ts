// Small deterministic model matrices and reference helpers shared by the solver and preconditioner
// tests (not a test file itself).
import type { Csr } from '../../src/sparse/types.js';

/** CSR from (row, col, value) triplets in any order; sorted here, duplicates summed. */
export function csrFromTriplets(n: number, entries: Array<[number, number, number]>): Csr {
  const sorted = [...entries].sort((a, b) => a[0] - b[0] || a[1] - b[1]);
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [], vals: number[] = [];
  let last = -1, lastRow = -1;
  for (const [i, j, v] of sorted) {
    if (i === lastRow && j === last) { vals[vals.length - 1] += v; continue; }
    cols.push(j); vals.push(v); rowPtr[i + 1]++;
    last = j; lastRow = i;
  }
  for (let i = 0; i < n; i++) rowPtr[i + 1] += rowPtr[i];
  return { nRows: n, nCols: n, rowPtr, colInd: Int32Array.from(cols), values: Float64Array.from(vals) };
}

/** tridiag(lower, diag, upper) of size n. */
export function tridiag(n: number, lower: number, diag: number, upper: number): Csr {
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < n; i++) {
    if (i > 0) t.push([i, i - 1, lower]);
    t.push([i, i, diag]);
    if (i < n - 1) t.push([i, i + 1, upper]);
  }
  return csrFromTriplets(n, t);
}

/** 1D Laplacian tridiag(−1, 2, −1), n × n. */
export function poisson1d(n: number): Csr {
  return tridiag(n, -1, 2, -1);
}

/**
 * Convection–diffusion 5-point matrix on an m×m grid (Matrix Market NEP collection, "MVMMCD"):
 * A = blocktridiag(−(1+β)I, T, (β−1)I), T = tridiag(−(1+γ), 4−σ, γ−1). Non-symmetric for β, γ ≠ 0.
 */
export function convectionDiffusion(m: number, beta: number, gamma: number, sigma: number): Csr {
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const p = i * m + j;
      if (i > 0) t.push([p, p - m, -(1 + beta)]);
      if (j > 0) t.push([p, p - 1, -(1 + gamma)]);
      t.push([p, p, 4 - sigma]);
      if (j < m - 1) t.push([p, p + 1, gamma - 1]);
      if (i < m - 1) t.push([p, p + m, beta - 1]);
    }
  }
  return csrFromTriplets(m * m, t);
}

/** 2D 5-point Laplacian on an m×m interior grid, natural (row-by-row) numbering: A = I⊗T_m + T_m⊗I. */
export function poisson2d(m: number): Csr {
  return convectionDiffusion(m, 0, 0, 0);
}

/** y = A x by a plain row loop (a reference independent of the library's kernels). */
export function csrMatVec(a: Csr, x: Float64Array): Float64Array {
  const y = new Float64Array(a.nRows);
  for (let i = 0; i < a.nRows; i++) {
    let s = 0;
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) s += a.values[k] * x[a.colInd[k]];
    y[i] = s;
  }
  return y;
}
