/**
 * Setup pieces of the AIR preconditioner (air.ts), as free functions on one level's BSR matrix:
 * strength of connection on the block graph, the C/F splitting, the ℓAIR restriction Z, the
 * one-point prolongation W and the Galerkin coarse operator R·A·P. Every rule is stated in
 * README ("AIR: reduction-based algebraic multigrid"); the sources are
 *   Manteuffel, Ruge & Southworth, "Nonsymmetric algebraic multigrid based on local approximate
 *   ideal restriction (ℓAIR)", SIAM J. Sci. Comput. 40(6), 2018;
 *   Manteuffel, Münzenmaier, Ruge & Southworth, "Nonsymmetric reduction-based algebraic multigrid",
 *   SIAM J. Sci. Comput. 41(5), 2019;
 *   Ruge & Stüben, "Algebraic multigrid", in Multigrid Methods (SIAM Frontiers), 1987 (first-pass
 *   coarsening).
 */
import type { Bsr } from '../sparse/types.js';
import { bsrMultiply } from '../sparse/bsr-product.js';
import type { WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, zeroWork } from '../solvers/work.js';
import { blockFrobenius, blockGemm, luFactor, luSolve, PIVOT_RTOL, blockMaxAbs, allFinite } from './dense.js';
import { kernelF64, kernelI32 } from '../kernels-host/arena.js';

/** Strong connections of each block row (diagonal excluded), CSR-like on the block graph. */
export interface StrengthGraph {
  rowPtr: Int32Array;
  colInd: Int32Array;
}

/**
 * Block row i strongly depends on block column j ≠ i when ‖A_ij‖_F > 0 and
 * ‖A_ij‖_F ≥ θ · max_{k≠i} ‖A_ik‖_F (the classical row-wise rule of Ruge & Stüben 1987 with the
 * Frobenius norm of the block in place of |a_ij|; block norms as in the block AIR of
 * Manteuffel et al. 2019, which norm is our choice). θ = 0: every nonzero off-diagonal block.
 */
export function strengthGraph(a: Bsr, theta: number): StrengthGraph {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const norms = new Float64Array(rowPtr[nb]);
  const sPtr = new Int32Array(nb + 1);
  for (let i = 0; i < nb; i++) {
    let mx = 0;
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
      if (colInd[p] === i) continue;
      const v = blockFrobenius(values, p * bb, bs);
      norms[p] = v;
      if (v > mx) mx = v;
    }
    let c = 0;
    const cut = theta * mx;
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) if (colInd[p] !== i && norms[p] > 0 && norms[p] >= cut) c++;
    sPtr[i + 1] = sPtr[i] + c;
  }
  const sCol = new Int32Array(sPtr[nb]);
  for (let i = 0; i < nb; i++) {
    let mx = 0;
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) if (colInd[p] !== i && norms[p] > mx) mx = norms[p];
    let w = sPtr[i];
    const cut = theta * mx;
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) if (colInd[p] !== i && norms[p] > 0 && norms[p] >= cut) sCol[w++] = colInd[p];
  }
  return { rowPtr: sPtr, colInd: sCol };
}

/** Transpose of a strength graph: j → the rows i that strongly depend on j. */
export function transposeGraph(g: StrengthGraph, n: number): StrengthGraph {
  const rowPtr = new Int32Array(n + 1);
  for (let p = 0; p < g.colInd.length; p++) rowPtr[g.colInd[p] + 1]++;
  for (let j = 0; j < n; j++) rowPtr[j + 1] += rowPtr[j];
  const next = rowPtr.slice(0, n);
  const colInd = new Int32Array(g.colInd.length);
  for (let i = 0; i < n; i++) for (let p = g.rowPtr[i]; p < g.rowPtr[i + 1]; p++) colInd[next[g.colInd[p]]++] = i;
  return { rowPtr, colInd };
}

/** Point types of a splitting. */
export const F_POINT = 0;
export const C_POINT = 1;

/**
 * First pass of Ruge–Stüben coarsening on the strength graph S (row i → the j it strongly
 * depends on), without the second pass. λ_j = number of undecided points that strongly depend
 * on j (|Sᵀ_j ∩ U|, plus 1 for each of those that became F). Repeat: the undecided point of
 * largest λ (ties: lowest block row) becomes C; every undecided point that strongly depends on it
 * becomes F, and each undecided point such an F point strongly depends on gets λ += 1; each
 * undecided point the new C point strongly depends on gets λ −= 1. Points with no strong
 * connection in either direction are F from the start (F-relaxation solves them on its own).
 * Returns the point type per block row (C_POINT / F_POINT).
 */
export function rugeStubenSplitting(s: StrengthGraph, st: StrengthGraph, n: number): Uint8Array {
  const UNDECIDED = 2;
  const type = new Uint8Array(n).fill(UNDECIDED);
  const lambda = new Int32Array(n);
  const heap = new LazyMaxHeap(n);
  for (let i = 0; i < n; i++) {
    lambda[i] = st.rowPtr[i + 1] - st.rowPtr[i];
    if (lambda[i] === 0 && s.rowPtr[i + 1] === s.rowPtr[i]) type[i] = F_POINT;
    else heap.push(lambda[i], i);
  }
  while (heap.size > 0) {
    const [lam, i] = heap.pop();
    if (type[i] !== UNDECIDED || lam !== lambda[i]) continue; // stale entry
    type[i] = C_POINT;
    for (let p = st.rowPtr[i]; p < st.rowPtr[i + 1]; p++) {
      const j = st.colInd[p];
      if (type[j] !== UNDECIDED) continue;
      type[j] = F_POINT;
      for (let q = s.rowPtr[j]; q < s.rowPtr[j + 1]; q++) {
        const k = s.colInd[q];
        if (type[k] === UNDECIDED) { lambda[k]++; heap.push(lambda[k], k); }
      }
    }
    for (let p = s.rowPtr[i]; p < s.rowPtr[i + 1]; p++) {
      const j = s.colInd[p];
      if (type[j] === UNDECIDED) { lambda[j]--; heap.push(lambda[j], j); }
    }
  }
  return type;
}

/** Binary max-heap of (key, index) pairs, larger key first, then smaller index; stale entries are the caller's business. */
class LazyMaxHeap {
  private keys: Int32Array;
  private ids: Int32Array;
  size = 0;
  constructor(capacity: number) {
    this.keys = new Int32Array(Math.max(16, capacity));
    this.ids = new Int32Array(Math.max(16, capacity));
  }
  private before(a: number, b: number): boolean {
    return this.keys[a] > this.keys[b] || (this.keys[a] === this.keys[b] && this.ids[a] < this.ids[b]);
  }
  private swap(a: number, b: number): void {
    const k = this.keys[a]; this.keys[a] = this.keys[b]; this.keys[b] = k;
    const d = this.ids[a]; this.ids[a] = this.ids[b]; this.ids[b] = d;
  }
  push(key: number, id: number): void {
    if (this.size === this.keys.length) {
      const k = new Int32Array(this.size * 2); k.set(this.keys); this.keys = k;
      const d = new Int32Array(this.size * 2); d.set(this.ids); this.ids = d;
    }
    let c = this.size++;
    this.keys[c] = key; this.ids[c] = id;
    while (c > 0) {
      const p = (c - 1) >> 1;
      if (!this.before(c, p)) break;
      this.swap(c, p); c = p;
    }
  }
  pop(): [number, number] {
    const out: [number, number] = [this.keys[0], this.ids[0]];
    this.size--;
    if (this.size > 0) {
      this.keys[0] = this.keys[this.size]; this.ids[0] = this.ids[this.size];
      let p = 0;
      for (;;) {
        const l = 2 * p + 1, r = l + 1;
        let m = p;
        if (l < this.size && this.before(l, m)) m = l;
        if (r < this.size && this.before(r, m)) m = r;
        if (m === p) break;
        this.swap(p, m); p = m;
      }
    }
    return out;
  }
}

/** The ℓAIR restriction of one level: R = [Z I] row by row, Z in CSR-like block storage (fine F columns). */
export interface Restriction {
  rowPtr: Int32Array;
  colInd: Int32Array;
  values: Float64Array;
  /** C points whose local system was singular and took the diagonal rule Z_ik = −A_ik A_kk⁻¹ instead. */
  fallbacks: number;
  /** Largest local system (scalar rows). */
  largestSystem: number;
  /** Work of the local solves (dense LU of each local system, bs solves), work.ts formulas. */
  work: WorkCounts;
}

/**
 * ℓAIR restriction (Manteuffel, Ruge & Southworth 2018, §3; block form as in Manteuffel et al.
 * 2019). For C point i, the neighbourhood N_i = the F points reachable from i by at most
 * `distance` strong connections (following S rows) through F points only, in ascending order.
 * Z_i (one block per k ∈ N_i) solves Σ_{k∈N_i} Z_ik A_kj = −A_ij for every j ∈ N_i, i.e.
 * (R A)_{i,j} = 0 on N_i: the transposed system A_FF[N_i,N_i]ᵀ Z_iᵀ = −A_{i,N_i}ᵀ, one dense LU
 * (partial pivoting) with bs right-hand sides. A singular local system (pivot rule of dense.ts)
 * falls back to Z_ik = −A_ik A_kk⁻¹ for k ∈ N_i that are row-i neighbours (counted).
 */
export function airRestriction(
  a: Bsr, s: StrengthGraph, type: Uint8Array, cPoints: Int32Array, distance: number, diagIdx: Int32Array,
): Restriction {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const nc = cPoints.length;
  const zPtr = new Int32Array(nc + 1);
  let zCol = new Int32Array(Math.max(16, nc * 4));
  let zVal = new Float64Array(zCol.length * bb);
  const local = new Int32Array(nb).fill(-1); // fine index → position in N_i
  const seen = new Int32Array(nb).fill(-1);  // BFS marker (C point index)
  let frontier: number[] = [], nextFrontier: number[] = [];
  const hood: number[] = [];
  let mat: Float64Array = new Float64Array(0), rhs: Float64Array = new Float64Array(0), piv: Int32Array = new Int32Array(0);
  let fallbacks = 0, largest = 0;
  const work = zeroWork();
  // dense operands in kernel memory when the solve has one (the dense kernels then run in WebAssembly)
  const tmp = kernelF64(bb), tmpPiv = kernelI32(bs), inv = kernelF64(bb), col = kernelF64(bs);
  for (let c = 0; c < nc; c++) {
    const i = cPoints[c];
    // neighbourhood: BFS over strong connections through F points
    hood.length = 0;
    frontier.length = 0;
    frontier.push(i);
    seen[i] = c;
    for (let d = 0; d < distance && frontier.length > 0; d++) {
      nextFrontier.length = 0;
      for (const u of frontier) {
        for (let p = s.rowPtr[u]; p < s.rowPtr[u + 1]; p++) {
          const v = s.colInd[p];
          if (seen[v] === c || type[v] !== F_POINT) continue;
          seen[v] = c;
          hood.push(v);
          nextFrontier.push(v);
        }
      }
      const t = frontier; frontier = nextFrontier; nextFrontier = t;
    }
    hood.sort((x, y) => x - y);
    const h = hood.length;
    // grow storage
    const need = zPtr[c] + h;
    if (need > zCol.length) {
      const cap = Math.max(need, zCol.length * 2);
      const nc2 = new Int32Array(cap); nc2.set(zCol); zCol = nc2;
      const nv = new Float64Array(cap * bb); nv.set(zVal); zVal = nv;
    }
    zPtr[c + 1] = need;
    if (h === 0) continue;
    for (let t = 0; t < h; t++) { zCol[zPtr[c] + t] = hood[t]; local[hood[t]] = t; }
    const m = h * bs;
    if (m > largest) largest = m;
    if (mat.length < m * m) { mat = kernelF64(2 * m * m); piv = kernelI32(2 * m); }
    if (rhs.length < m * bs) rhs = kernelF64(2 * m * bs);
    // M = A_FF[N,N]ᵀ: M[(j,q),(k,p)] = (A_kj)[p][q]
    mat.fill(0, 0, m * m);
    for (let t = 0; t < h; t++) {
      const k = hood[t];
      for (let p = rowPtr[k]; p < rowPtr[k + 1]; p++) {
        const u = local[colInd[p]];
        if (u < 0) continue;
        const o = p * bb;
        // block (row u, col t) of M is A_kjᵀ with j = colInd[p]
        for (let pp = 0; pp < bs; pp++) {
          for (let q = 0; q < bs; q++) mat[(u * bs + q) * m + t * bs + pp] = values[o + pp * bs + q];
        }
      }
    }
    // rhs column r (Z row r): rhs[(j,q)] = −(A_ij)[r][q]; stored as bs vectors of length m
    rhs.fill(0, 0, m * bs);
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
      const u = local[colInd[p]];
      if (u < 0) continue;
      const o = p * bb;
      for (let r = 0; r < bs; r++) for (let q = 0; q < bs; q++) rhs[r * m + u * bs + q] = -values[o + r * bs + q];
    }
    const norm = blockMaxAbs(mat, 0, m);
    const bad = luFactor(mat, 0, m, piv, 0, PIVOT_RTOL * norm) >= 0 || !allFinite(mat, 0, m * m);
    addWork(work, denseWork.lu(m));
    addWork(work, denseWork.luSolve(m), bs);
    const zo = zPtr[c] * bb;
    if (!bad) {
      for (let r = 0; r < bs; r++) {
        luSolve(mat, 0, piv, 0, m, rhs, r * m);
        for (let t = 0; t < h; t++) for (let pp = 0; pp < bs; pp++) zVal[zo + t * bb + r * bs + pp] = rhs[r * m + t * bs + pp];
      }
    } else {
      // diagonal rule: Z_ik = −A_ik A_kk⁻¹ where A_ik is stored, 0 elsewhere
      fallbacks++;
      zVal.fill(0, zo, zo + h * bb);
      for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) {
        const u = local[colInd[p]];
        if (u < 0) continue;
        const k = colInd[p];
        const dk = diagIdx[k];
        if (dk < 0) continue;
        tmp.set(values.subarray(dk * bb, dk * bb + bb));
        if (luFactor(tmp, 0, bs, tmpPiv, 0, PIVOT_RTOL * blockMaxAbs(tmp, 0, bs)) >= 0) continue;
        invertInto(tmp, tmpPiv, bs, inv, col);
        // Z_ik = −A_ik · inv
        const o = p * bb, d = zo + u * bb;
        for (let r = 0; r < bs; r++) {
          for (let q = 0; q < bs; q++) {
            let sum = 0;
            for (let t = 0; t < bs; t++) sum += values[o + r * bs + t] * inv[t * bs + q];
            zVal[d + r * bs + q] = -sum;
          }
        }
      }
    }
    for (let t = 0; t < h; t++) local[hood[t]] = -1;
  }
  const nz = zPtr[nc];
  return {
    rowPtr: zPtr, colInd: zCol.slice(0, nz), values: zVal.slice(0, nz * bb),
    fallbacks, largestSystem: largest, work,
  };
}

function invertInto(lu: Float64Array, piv: Int32Array, bs: number, out: Float64Array, col: Float64Array): void {
  for (let j = 0; j < bs; j++) {
    col.fill(0); col[j] = 1;
    luSolve(lu, 0, piv, 0, bs, col, 0);
    for (let i = 0; i < bs; i++) out[i * bs + j] = col[i];
  }
}

/** One-point prolongation: per F point, the coarse index of its strongest C neighbour (or −1) and W_f = −A_ff⁻¹ A_fc. */
export interface OnePoint {
  /** Per fine block row: coarse column of W (F points with a strong C neighbour), −1 otherwise (C points: −1). */
  col: Int32Array;
  /** bs×bs block of W per fine block row (zero where col is −1). */
  values: Float64Array;
}

/**
 * W_f = −D_ff⁻¹ A_fc* with c* the strong C neighbour of f of largest ‖A_fc‖_F (ties: the first
 * in column order). `dinv` holds D⁻¹ blocks per fine block row (F points filled).
 */
export function onePointProlongation(
  a: Bsr, s: StrengthGraph, type: Uint8Array, coarseOf: Int32Array, dinv: Float64Array,
): OnePoint {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const col = kernelI32(nb).fill(-1);
  const w = kernelF64(nb * bb);
  for (let f = 0; f < nb; f++) {
    if (type[f] !== F_POINT) continue;
    let best = -1, bestNorm = -1;
    let sp = s.rowPtr[f];
    for (let p = rowPtr[f]; p < rowPtr[f + 1]; p++) {
      const j = colInd[p];
      // strong columns are a subsequence of the row's columns (same order)
      while (sp < s.rowPtr[f + 1] && s.colInd[sp] < j) sp++;
      if (sp >= s.rowPtr[f + 1] || s.colInd[sp] !== j || type[j] !== C_POINT) continue;
      const v = blockFrobenius(values, p * bb, bs);
      if (v > bestNorm) { bestNorm = v; best = p; }
    }
    if (best < 0) continue;
    col[f] = coarseOf[colInd[best]];
    blockGemm(w, f * bb, dinv, f * bb, values, best * bb, bs);
    for (let p = f * bb; p < f * bb + bb; p++) w[p] = -w[p];
  }
  return { col, values: w };
}

/** R = [Z I] as a BSR matrix (nc × nb blocks), identity block at each C point's own column. */
export function restrictionMatrix(z: Restriction, cPoints: Int32Array, nb: number, bs: number): Bsr {
  const nc = cPoints.length;
  const bb = bs * bs;
  const rowPtr = new Int32Array(nc + 1);
  for (let c = 0; c < nc; c++) rowPtr[c + 1] = rowPtr[c] + (z.rowPtr[c + 1] - z.rowPtr[c]) + 1;
  const colInd = new Int32Array(rowPtr[nc]);
  const values = new Float64Array(rowPtr[nc] * bb);
  for (let c = 0; c < nc; c++) {
    let w = rowPtr[c];
    const i = cPoints[c];
    let placed = false;
    for (let p = z.rowPtr[c]; p < z.rowPtr[c + 1]; p++) {
      const k = z.colInd[p];
      if (!placed && k > i) { colInd[w] = i; identity(values, w * bb, bs); w++; placed = true; }
      colInd[w] = k; values.set(z.values.subarray(p * bb, p * bb + bb), w * bb); w++;
    }
    if (!placed) { colInd[w] = i; identity(values, w * bb, bs); }
  }
  return { nBlockRows: nc, nBlockCols: nb, bs, rowPtr, colInd, values };
}

function identity(v: Float64Array, o: number, bs: number): void {
  for (let r = 0; r < bs; r++) v[o + r * bs + r] = 1;
}

/** P = [W; I] as a BSR matrix (nb × nc blocks). */
export function prolongationMatrix(w: OnePoint, coarseOf: Int32Array, nb: number, nc: number, bs: number): Bsr {
  const bb = bs * bs;
  const rowPtr = new Int32Array(nb + 1);
  for (let i = 0; i < nb; i++) rowPtr[i + 1] = rowPtr[i] + (coarseOf[i] >= 0 || w.col[i] >= 0 ? 1 : 0);
  const colInd = new Int32Array(rowPtr[nb]);
  const values = new Float64Array(rowPtr[nb] * bb);
  for (let i = 0; i < nb; i++) {
    const o = rowPtr[i];
    if (coarseOf[i] >= 0) { colInd[o] = coarseOf[i]; identity(values, o * bb, bs); }
    else if (w.col[i] >= 0) { colInd[o] = w.col[i]; values.set(w.values.subarray(i * bb, i * bb + bb), o * bb); }
  }
  return { nBlockRows: nb, nBlockCols: nc, bs, rowPtr, colInd, values };
}

/**
 * Galerkin coarse operator A_c = R A P. Injection (P = [0; I]): A_c = (R A) restricted to the C
 * columns, formed in one product with a column selection. One-point: (R A) P with both products.
 */
export function galerkin(r: Bsr, a: Bsr, coarseOf: Int32Array, nc: number, p: Bsr | null): { ac: Bsr; blockProducts: number } {
  if (!p) return { ac: bsrMultiply(r, a, coarseOf, nc), blockProducts: productCount(r, a, coarseOf) };
  const ra = bsrMultiply(r, a);
  return { ac: bsrMultiply(ra, p), blockProducts: productCount(r, a) + productCount(ra, p) };
}

/** Number of bs×bs block products bsrMultiply(a, b, colMap) performs. */
export function productCount(a: Bsr, b: Bsr, colMap?: Int32Array): number {
  let n = 0;
  for (let p = 0; p < a.rowPtr[a.nBlockRows]; p++) {
    const k = a.colInd[p];
    if (!colMap) { n += b.rowPtr[k + 1] - b.rowPtr[k]; continue; }
    for (let q = b.rowPtr[k]; q < b.rowPtr[k + 1]; q++) if (colMap[b.colInd[q]] >= 0) n++;
  }
  return n;
}

/** Sorted ascending list of indices with the given type. */
export function pointsOfType(type: Uint8Array, t: number): Int32Array {
  let n = 0;
  for (let i = 0; i < type.length; i++) if (type[i] === t) n++;
  const out = new Int32Array(n);
  let w = 0;
  for (let i = 0; i < type.length; i++) if (type[i] === t) out[w++] = i;
  return out;
}
