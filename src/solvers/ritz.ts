import { EigenvalueDecomposition, Matrix } from 'ml-matrix';

/**
 * Ritz values: eigenvalues of the square k×k upper Hessenberg matrix H_k of the first GMRES cycle,
 * which estimate the spectrum of the preconditioned operator (Saad 2003, §6.3 Arnoldi; common
 * practice for GMRES spectrum estimates). H is stored column by column with leading dimension ldh:
 * entry (i, j) at h[j*ldh + i]. Returned sorted by real part, then imaginary part.
 */
export function ritzValues(h: Float64Array, ldh: number, k: number): { re: number[]; im: number[] } {
  if (k === 0) return { re: [], im: [] };
  const a = Matrix.zeros(k, k);
  for (let j = 0; j < k; j++) {
    for (let i = 0; i <= Math.min(j + 1, k - 1); i++) a.set(i, j, h[j * ldh + i]);
  }
  for (let j = 0; j < k; j++) for (let i = 0; i < k; i++) if (!Number.isFinite(a.get(i, j))) return { re: [], im: [] };
  const evd = new EigenvalueDecomposition(a);
  const pairs = evd.realEigenvalues.map((re, i) => [re, evd.imaginaryEigenvalues[i]] as const);
  pairs.sort((p, q) => p[0] - q[0] || p[1] - q[1]);
  return { re: pairs.map((p) => p[0]), im: pairs.map((p) => p[1]) };
}
