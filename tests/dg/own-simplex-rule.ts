/**
 * The tests' own quadrature and simplex geometry, independent of src/dg (quadrature, basis) and
 * src/mesh/geometry: Gauss–Legendre nodes by Newton's method on the three-term recurrence, a
 * collapsed (Duffy) conical product rule on the unit k-simplex (Stroud, Approximate Calculation of
 * Multiple Integrals, 1971), and face measures and normals from vertex coordinates. Shared by
 * the checks of the assembly and burgers-residual.test.ts.
 */

/** n-point Gauss–Legendre nodes and weights on [0, 1] (Newton on P_n; common practice). */
export function gaussLegendre01(n: number): { x: number[]; w: number[] } {
  const x: number[] = [], w: number[] = [];
  for (let i = 1; i <= n; i++) {
    let z = Math.cos((Math.PI * (i - 0.25)) / (n + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1, p1 = z;
      for (let k = 2; k <= n; k++) { const p2 = ((2 * k - 1) * z * p1 - (k - 1) * p0) / k; p0 = p1; p1 = p2; }
      dp = (n * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    x.push((1 - z) / 2);
    w.push(1 / ((1 - z * z) * dp * dp)); // 2/((1−z²)P'²) on [−1, 1], halved for [0, 1]
  }
  return { x, w };
}

/**
 * Points (barycentric-free reference coordinates ξ ∈ unit k-simplex) and weights (summing to 1/k!)
 * of the collapsed rule ξ_1 = a_1, ξ_2 = (1 − a_1) a_2, …, Jacobian Π_j (1 − a_j)^{k−j}.
 */
export function unitSimplexRule(k: number, n = 8): { points: number[][]; weights: number[] } {
  const { x: gx, w: gw } = gaussLegendre01(n);
  const points: number[][] = [], weights: number[] = [];
  if (k === 0) return { points: [[]], weights: [1] };
  const idx = new Array(k).fill(0);
  for (;;) {
    let rest = 1, wt = 1, jac = 1;
    const xi: number[] = [];
    for (let j = 0; j < k; j++) {
      const a = gx[idx[j]];
      xi.push(rest * a);
      wt *= gw[idx[j]];
      rest *= 1 - a;
    }
    for (let j = 0; j < k - 1; j++) jac *= (1 - gx[idx[j]]) ** (k - 1 - j);
    points.push(xi);
    weights.push(wt * jac);
    let j = 0;
    while (j < k && ++idx[j] === n) { idx[j] = 0; j++; }
    if (j === k) break;
  }
  return { points, weights };
}

function factorial(k: number): number {
  let f = 1;
  for (let i = 2; i <= k; i++) f *= i;
  return f;
}

/** |det| of a square matrix (rows), by Gaussian elimination with partial pivoting. */
function absDet(rows: number[][]): number {
  const M = rows.map((r) => r.slice());
  const n = M.length;
  let det = 1;
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(M[r][c]) > Math.abs(M[piv][c])) piv = r;
    if (piv !== c) [M[piv], M[c]] = [M[c], M[piv]];
    det *= M[c][c];
    if (M[c][c] === 0) return 0;
    for (let r = c + 1; r < n; r++) { const m = M[r][c] / M[c][c]; for (let q = c; q < n; q++) M[r][q] -= m * M[c][q]; }
  }
  return Math.abs(det);
}

/** Gram determinant √det(EᵀE) of the edge vectors E (rows): the k-volume factor of a k-simplex in ℝ^D. */
function gramFactor(E: number[][]): number {
  const k = E.length;
  if (k === 0) return 1;
  const G = E.map((a) => E.map((b) => a.reduce((s, v, i) => s + v * b[i], 0)));
  return Math.sqrt(absDet(G));
}

/** Measure of the k-simplex with vertices V (k + 1 points in ℝ^D, k ≤ D). */
export function simplexMeasure(V: number[][]): number {
  const E = V.slice(1).map((v) => v.map((c, i) => c - V[0][i]));
  return gramFactor(E) / factorial(E.length);
}

/** ∫ f over the k-simplex with vertices V (k + 1 points in ℝ^D), by the collapsed rule. */
export function simplexIntegral(V: number[][], f: (X: number[]) => number, n = 8): number {
  const k = V.length - 1;
  const E = V.slice(1).map((v) => v.map((c, i) => c - V[0][i]));
  const scale = gramFactor(E); // reference weights sum to 1/k!, the measure is scale/k!
  const { points, weights } = unitSimplexRule(k, n);
  let total = 0;
  for (let q = 0; q < weights.length; q++) {
    const X = V[0].slice();
    for (let j = 0; j < k; j++) for (let i = 0; i < X.length; i++) X[i] += E[j][i] * points[q][j];
    total += weights[q] * f(X);
  }
  return total * scale;
}

/**
 * Unit normal of the face F (D points in ℝ^D) of a D-simplex, pointing away from the simplex's
 * remaining vertex `opposite`: the unit vector orthogonal to F's edges (Gram–Schmidt of the
 * vector to `opposite` against them, reversed).
 */
export function faceNormal(F: number[][], opposite: number[]): number[] {
  const E = F.slice(1).map((v) => v.map((c, i) => c - F[0][i]));
  // orthonormalize the edges
  const Q: number[][] = [];
  for (const e of E) {
    const v = e.slice();
    for (const q of Q) { const s = v.reduce((a, c, i) => a + c * q[i], 0); for (let i = 0; i < v.length; i++) v[i] -= s * q[i]; }
    const nv = Math.hypot(...v);
    Q.push(v.map((c) => c / nv));
  }
  const w = opposite.map((c, i) => c - F[0][i]);
  for (const q of Q) { const s = w.reduce((a, c, i) => a + c * q[i], 0); for (let i = 0; i < w.length; i++) w[i] -= s * q[i]; }
  const nw = Math.hypot(...w);
  return w.map((c) => -c / nw);
}

/** Vertices (coordinates) of element e of a space-time mesh. */
export function elementVertices(mesh: { dim: number; coords: Float64Array; elements: Int32Array }, e: number): number[][] {
  const D = mesh.dim + 1;
  return Array.from({ length: D + 1 }, (_, j) => {
    const v = mesh.elements[e * (D + 1) + j];
    return Array.from(mesh.coords.subarray(v * D, v * D + D));
  });
}
