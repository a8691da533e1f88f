import { EigenvalueDecomposition, Matrix, QrDecomposition } from 'ml-matrix';

/**
 * Harmonic Ritz vectors of a Krylov projection, the deflation space of GMRES-DR and GCRO-DR.
 *
 * Given A Ŵ = V̂ Ḡ (Ŵ n×m the search space, V̂ n×(m+1) orthonormal, Ḡ (m+1)×m), the harmonic Ritz
 * pairs (θ, Ŵ z) of A with respect to range(Ŵ) satisfy (A Ŵ z − θ Ŵ z) ⊥ A range(Ŵ), i.e. the
 * generalized eigenproblem Ḡᵀ Ḡ z = θ Ḡᵀ T z with T = V̂ᵀ Ŵ (Parks, de Sturler, Mackey, Johnson &
 * Maiti, "Recycling Krylov subspaces for sequences of linear systems", SIAM J. Sci. Comput. 28(5),
 * 2006, §2.4 and Algorithm 2). For GMRES (Ŵ = V_m, T = [I; 0]) it is the standard eigenproblem
 * (H_m + h²_{m+1,m} H_m⁻ᵀ e_m e_mᵀ) g = θ g of Morgan, "GMRES with deflated restarting", SIAM J.
 * Sci. Comput. 24(1), 2002, §2.
 *
 * Computed stably without forming ḠᵀḠ: with Ḡ = Q R (thin QR), μ = 1/θ are the eigenvalues of
 * R⁻¹ Qᵀ T, and the k harmonic Ritz values of smallest modulus are the k eigenvalues μ of largest
 * modulus. A complex conjugate pair contributes its real and imaginary parts as two real vectors
 * (the same span; Morgan 2002 §2), so a pair is never split: k moves down by one when it would be.
 * These small dense computations (size m) do not depend on n and are not counted in the work model.
 */
export interface HarmonicRitz {
  /** Number of vectors chosen (kMax, or kMax − 1 to keep a complex pair whole; 0 when the problem is singular). */
  k: number;
  /** The chosen eigenvectors z, m×k column by column (entry (i, j) at p[j*m + i]), real form. */
  p: Float64Array;
  /** The chosen harmonic Ritz values θ, by increasing modulus. */
  re: number[];
  im: number[];
}

/**
 * G: (rows)×m matrix column by column with leading dimension ldg (rows = m + 1 normally).
 * T: same shape and leading dimension, or undefined for T = [I; 0].
 * kMax: the most vectors wanted (≤ m − 1 keeps room for a new Krylov vector; the caller decides).
 */
export function harmonicRitz(G: Float64Array, ldg: number, rows: number, m: number, T: Float64Array | undefined, kMax: number): HarmonicRitz {
  const none: HarmonicRitz = { k: 0, p: new Float64Array(0), re: [], im: [] };
  if (kMax <= 0 || m === 0) return none;
  const g = Matrix.zeros(rows, m);
  const t = Matrix.zeros(rows, m);
  for (let j = 0; j < m; j++) {
    for (let i = 0; i < rows; i++) {
      const v = G[j * ldg + i];
      if (!Number.isFinite(v)) return none;
      g.set(i, j, v);
      if (T) t.set(i, j, T[j * ldg + i]);
    }
    if (!T && j < rows) t.set(j, j, 1);
  }
  const qr = new QrDecomposition(g);
  if (!qr.isFullRank()) return none;
  const Q = qr.orthogonalMatrix; // rows×m
  const R = qr.upperTriangularMatrix; // m×m
  // S = R⁻¹ (Qᵀ T), by back substitution column by column
  const QtT = Q.transpose().mmul(t);
  const S = Matrix.zeros(m, m);
  for (let c = 0; c < m; c++) {
    for (let i = m - 1; i >= 0; i--) {
      let s = QtT.get(i, c);
      for (let l = i + 1; l < m; l++) s -= R.get(i, l) * S.get(l, c);
      const rii = R.get(i, i);
      if (!(Math.abs(rii) > 0)) return none;
      S.set(i, c, s / rii);
    }
  }
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) if (!Number.isFinite(S.get(i, j))) return none;
  const evd = new EigenvalueDecomposition(S);
  const mre = evd.realEigenvalues, mim = evd.imaginaryEigenvalues;
  const Z = evd.eigenvectorMatrix;
  // order by |μ| descending; a pair (im ≠ 0) occupies columns i, i+1 (real and imaginary parts)
  const order = Array.from({ length: m }, (_, i) => i).sort((a, b) => Math.hypot(mre[b], mim[b]) - Math.hypot(mre[a], mim[a]) || a - b);
  const chosen: number[] = [];
  const taken = new Set<number>();
  for (const i of order) {
    if (chosen.length >= kMax) break;
    if (taken.has(i)) continue;
    if (mim[i] !== 0) {
      const mate = mim[i] > 0 ? i + 1 : i - 1; // EVD stores a conjugate pair in adjacent columns
      if (mate < 0 || mate >= m) return none;
      if (chosen.length + 2 > kMax) break;
      const [a, b] = mate > i ? [i, mate] : [mate, i];
      chosen.push(a, b); taken.add(a); taken.add(b);
    } else {
      if (Math.hypot(mre[i], mim[i]) === 0) break; // θ = ∞: no information
      chosen.push(i); taken.add(i);
    }
  }
  const k = chosen.length;
  const p = new Float64Array(m * k);
  const re: number[] = [], im: number[] = [];
  chosen.forEach((col, j) => {
    for (let i = 0; i < m; i++) p[j * m + i] = Z.get(i, col);
    const d = mre[col] * mre[col] + mim[col] * mim[col];
    re.push(mre[col] / d);
    im.push(-mim[col] / d);
  });
  return { k, p, re, im };
}
