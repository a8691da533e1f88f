/**
 * Jacobi polynomials P_n^(α,β) on [−1, 1] (weight (1−ξ)^α (1+ξ)^β) and Gauss–Jacobi rules.
 *
 * Three-term recurrence: Abramowitz & Stegun (1964) 22.7.1; orthonormal recurrence
 * coefficients (the Jacobi matrix) and the Golub–Welsch construction of Gauss rules:
 * Golub & Welsch, Math. Comp. 23 (1969); Gautschi, Orthogonal Polynomials (2004) Table 1.1.
 */

/**
 * Value of P_n^(α,β)(ξ) (A&S 22.7.1). Allocation-free; used by the basis tests and by Newton
 * polishing of Gauss nodes.
 */
export function jacobiP(n: number, alpha: number, beta: number, xi: number): number {
  if (n === 0) return 1;
  let p0 = 1;
  let p1 = ((alpha + beta + 2) * xi + (alpha - beta)) / 2;
  for (let k = 1; k < n; k++) {
    const s = 2 * k + alpha + beta;
    const a1 = 2 * (k + 1) * (k + alpha + beta + 1) * s;
    const a2 = (s + 1) * (alpha * alpha - beta * beta);
    const a3 = s * (s + 1) * (s + 2);
    const a4 = 2 * (k + alpha) * (k + beta) * (s + 2);
    const p2 = ((a2 + a3 * xi) * p1 - a4 * p0) / a1;
    p0 = p1;
    p1 = p2;
  }
  return p1;
}

/**
 * Recurrence coefficients of the ORTHONORMAL Jacobi polynomials:
 * ξ p_k = b_{k+1} p_{k+1} + a_k p_k + b_k p_{k−1}; a has n entries, b has n entries with b[0] unused.
 * μ0 = ∫(1−ξ)^α(1+ξ)^β dξ = 2^{α+β+1} Γ(α+1)Γ(β+1)/Γ(α+β+2). (Gautschi 2004, Table 1.1.)
 */
export function jacobiMatrix(n: number, alpha: number, beta: number): { a: Float64Array; b: Float64Array; mu0: number } {
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  const ab = alpha + beta;
  for (let k = 0; k < n; k++) {
    const s = 2 * k + ab;
    a[k] = k === 0 ? (beta - alpha) / (ab + 2) : (beta * beta - alpha * alpha) / (s * (s + 2));
    if (k >= 1) {
      const num = 4 * k * (k + alpha) * (k + beta) * (k + ab);
      const den = s * s * (s + 1) * (s - 1);
      // k = 1 with α + β = −1: the general formula has 0/0 in (k+ab)/(s−1), whose limit is 1.
      b[k] = k === 1 && ab === -1 ? Math.sqrt((4 * (1 + alpha) * (1 + beta)) / ((2 + ab) * (2 + ab) * (3 + ab))) : Math.sqrt(num / den);
    }
  }
  const mu0 = Math.pow(2, ab + 1) * Math.exp(logGamma(alpha + 1) + logGamma(beta + 1) - logGamma(ab + 2));
  return { a, b, mu0 };
}

/** ln Γ(x) for x > 0; exact factorials for integer arguments (the only ones used here), Lanczos otherwise. */
function logGamma(x: number): number {
  if (Number.isInteger(x) && x >= 1 && x <= 171) {
    let s = 0;
    for (let k = 2; k < x; k++) s += Math.log(k);
    return s;
  }
  // Lanczos approximation, g = 7, n = 9 (Numerical Recipes 3rd ed. §6.1 coefficients; common practice).
  const c = [0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313,
    -176.61502916214059, 12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  const xm = x - 1;
  let s = c[0];
  for (let i = 1; i < 9; i++) s += c[i] / (xm + i);
  const t = xm + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (xm + 0.5) * Math.log(t) - t + Math.log(s);
}

/**
 * Eigenvalues of the symmetric tridiagonal matrix with diagonal d (length n) and off-diagonal e
 * (e[k] couples k−1 and k, e[0] unused), by the implicit QL method with Wilkinson shifts
 * (Bowdler, Martin, Reinsch & Wilkinson, Numer. Math. 11, 1968, "tql1"; Numerical Recipes §11.4).
 * Returns the eigenvalues sorted ascending; the inputs are not modified.
 */
export function symmetricTridiagonalEigenvalues(d: Float64Array, e: Float64Array): Float64Array {
  const n = d.length;
  const w = Float64Array.from(d);
  const off = new Float64Array(n);
  for (let i = 1; i < n; i++) off[i - 1] = e[i];
  for (let l = 0; l < n; l++) {
    let iter = 0;
    for (;;) {
      let m = l;
      for (; m < n - 1; m++) {
        const dd = Math.abs(w[m]) + Math.abs(w[m + 1]);
        if (Math.abs(off[m]) <= Number.EPSILON * dd) break;
      }
      if (m === l) break;
      if (++iter > 60) throw new Error('symmetricTridiagonalEigenvalues: no convergence');
      let g = (w[l + 1] - w[l]) / (2 * off[l]);
      let r = Math.hypot(g, 1);
      g = w[m] - w[l] + off[l] / (g + (g >= 0 ? Math.abs(r) : -Math.abs(r)));
      let s = 1;
      let c = 1;
      let p = 0;
      let i = m - 1;
      let underflow = false;
      for (; i >= l; i--) {
        const f = s * off[i];
        const b = c * off[i];
        r = Math.hypot(f, g);
        off[i + 1] = r;
        if (r === 0) {
          w[i + 1] -= p;
          off[m] = 0;
          underflow = true;
          break;
        }
        s = f / r;
        c = g / r;
        g = w[i + 1] - p;
        r = (w[i] - g) * s + 2 * c * b;
        p = s * r;
        w[i + 1] = g + p;
        g = c * r - b;
      }
      if (underflow) continue;
      w[l] -= p;
      off[l] = g;
      off[m] = 0;
    }
  }
  return w.sort();
}

/**
 * Gauss–Jacobi rule with n points for ∫_{−1}^{1} f(ξ)(1−ξ)^α(1+ξ)^β dξ, exact for degree ≤ 2n − 1.
 * Nodes: eigenvalues of the Jacobi matrix (Golub & Welsch 1969), each polished by Newton steps on the
 * orthonormal polynomial p_n. Weights: Christoffel numbers w_i = 1 / Σ_{k<n} p_k(ξ_i)² (Gautschi 2004,
 * Thm 1.46), which are accurate without eigenvectors.
 */
export function gaussJacobi(n: number, alpha: number, beta: number): { nodes: Float64Array; weights: Float64Array } {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`gaussJacobi: n must be a positive integer, got ${n}`);
  if (!(alpha > -1) || !(beta > -1)) throw new RangeError(`gaussJacobi: need α, β > −1, got ${alpha}, ${beta}`);
  const { a, b, mu0 } = jacobiMatrix(n + 1, alpha, beta);
  const nodes = symmetricTridiagonalEigenvalues(a.subarray(0, n), b.subarray(0, n));
  const weights = new Float64Array(n);
  const p0 = 1 / Math.sqrt(mu0);
  for (let i = 0; i < n; i++) {
    let x = nodes[i];
    for (let it = 0; it < 3; it++) {
      // p_n and p_n' by the orthonormal recurrence.
      let pm = 0; let p = p0; let dpm = 0; let dp = 0;
      for (let k = 0; k < n; k++) {
        const bk = k === 0 ? 0 : b[k];
        const pn = ((x - a[k]) * p - bk * pm) / b[k + 1];
        const dpn = (p + (x - a[k]) * dp - bk * dpm) / b[k + 1];
        pm = p; p = pn; dpm = dp; dp = dpn;
      }
      if (dp === 0) break;
      const step = p / dp;
      x -= step;
      if (Math.abs(step) <= 2 * Number.EPSILON * Math.max(1, Math.abs(x))) break;
    }
    nodes[i] = x;
    let sum = p0 * p0;
    let pm = 0; let p = p0;
    for (let k = 0; k < n - 1; k++) {
      const bk = k === 0 ? 0 : b[k];
      const pn = ((x - a[k]) * p - bk * pm) / b[k + 1];
      pm = p; p = pn;
      sum += p * p;
    }
    weights[i] = 1 / sum;
  }
  return { nodes, weights };
}
