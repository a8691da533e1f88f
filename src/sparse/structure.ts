import type { Bsr, Csr } from './types.js';
import { csrTranspose } from './csr.js';
import { diagonalBlockIndex } from './blocks.js';
import { sortInt32Range } from './sort-range.js';

// ---------------------------------------------------------------------------------------------
// Block size detection
// ---------------------------------------------------------------------------------------------

export interface BlockSizeDetection {
  /** Largest candidate whose pattern is made only of aligned, fully stored bs×bs blocks (1 if none). */
  bs: number;
  /** Scalar nonzeros / (stored blocks · bs²) at bs; 1 by construction unless the matrix is empty. */
  fillRatio: number;
  /**
   * Best partially filled coarser candidate (a multiple of bs; highest fill ratio below 1, at
   * least 0.5; ties go to the larger size), e.g. a DG matrix written by a code that dropped exact
   * zeros shows up as bs 1 with a best partial fill of 0.98 at its element block size. Absent when
   * no candidate reaches 0.5 (only the 12 smallest candidates are counted).
   */
  bestPartial?: { bs: number; fillRatio: number };
}

/** Block counts spent on partial fills (each O(nnz)). */
const PARTIAL_PASSES = 12;

function gcd(a: number, b: number): number {
  while (b !== 0) [a, b] = [b, a % b];
  return a;
}

/** Divisors d of n with 1 < d ≤ limit, ascending. */
function divisorsUpTo(n: number, limit: number): number[] {
  const small: number[] = [];
  const large: number[] = [];
  for (let d = 1; d * d <= n; d++) {
    if (n % d !== 0) continue;
    small.push(d);
    if (d * d !== n) large.push(n / d);
  }
  return [...small, ...large.reverse()].filter((d) => d > 1 && d <= limit);
}

/**
 * Stored blocks for block size bs, or −1 as soon as the count exceeds maxBlocks (then the fill
 * ratio is below nnz / (maxBlocks·bs²) and the caller is not interested in the exact value).
 */
function countBlocks(a: Csr, bs: number, marker: Int32Array, maxBlocks: number): number {
  const nBlockRows = a.nRows / bs;
  const { rowPtr, colInd } = a;
  marker.fill(-1, 0, a.nCols / bs);
  let count = 0;
  for (let I = 0; I < nBlockRows; I++) {
    const end = rowPtr[(I + 1) * bs];
    for (let k = rowPtr[I * bs]; k < end; k++) {
      const J = (colInd[k] / bs) | 0;
      if (marker[J] !== I) {
        marker[J] = I;
        if (++count > maxBlocks) return -1;
      }
    }
  }
  return count;
}

/**
 * Necessary condition for dense aligned blocks, O(nRows): all rows of a block row have the same
 * length and that length is a multiple of bs.
 */
function rowLengthsFit(a: Csr, bs: number): boolean {
  const { rowPtr } = a;
  for (let I = 0; I < a.nRows / bs; I++) {
    const len = rowPtr[I * bs + 1] - rowPtr[I * bs];
    if (len % bs !== 0) return false;
    for (let i = I * bs + 1; i < (I + 1) * bs; i++) if (rowPtr[i + 1] - rowPtr[i] !== len) return false;
  }
  return true;
}

/**
 * Detect the block size from the pattern: the largest divisor bs of the size (≤ maxBlockSize,
 * default 1024) such that the pattern is exactly a union of aligned dense bs×bs blocks, i.e.
 * fill ratio nnz / (blocks·bs²) = 1. Explicit zeros count as pattern entries. Column indices
 * must be unique within a row (as in every Csr).
 */
export function detectBlockSize(a: Csr, opts: { maxBlockSize?: number } = {}): BlockSizeDetection {
  const maxBs = opts.maxBlockSize ?? 1024;
  const nnz = a.rowPtr[a.nRows];
  if (nnz === 0 || a.nRows === 0 || a.nCols === 0) return { bs: 1, fillRatio: 1 };
  const candidates = divisorsUpTo(gcd(a.nRows, a.nCols), maxBs);
  const marker = new Int32Array(a.nCols);
  // Largest first: the first candidate that passes is the answer. The O(nRows) row-length test
  // rejects most candidates before the O(nnz) block count, which stops as soon as it exceeds
  // nnz / bs² blocks (then some block is not full).
  let bs = 1;
  for (let c = candidates.length - 1; c >= 0; c--) {
    const d = candidates[c];
    if (!rowLengthsFit(a, d)) continue;
    const count = countBlocks(a, d, marker, nnz / (d * d));
    if (count >= 0 && count * d * d === nnz) { bs = d; break; }
  }
  // Partial fills: coarser multiples of bs only (aligned with the blocks found), smallest first,
  // at most PARTIAL_PASSES block counts, each abandoned once its fill drops below the best so far.
  let bestPartial: { bs: number; fillRatio: number } | undefined;
  let passes = 0;
  for (const d of candidates) {
    if (d <= bs || d % bs !== 0) continue;
    if (++passes > PARTIAL_PASSES) break;
    const floor = Math.max(0.5, bestPartial?.fillRatio ?? 0);
    const count = countBlocks(a, d, marker, Math.floor(nnz / (floor * d * d)));
    if (count <= 0) continue;
    const fill = nnz / (count * d * d);
    if (fill < 1 && fill >= floor) bestPartial = { bs: d, fillRatio: fill };
  }
  return bestPartial ? { bs, fillRatio: 1, bestPartial } : { bs, fillRatio: 1 };
}

/** Scalar nonzeros of the CSR pattern / (stored blocks · bs²) of its BSR form. */
export function fillRatio(a: Csr, b: Bsr): number {
  const stored = b.rowPtr[b.nBlockRows] * b.bs * b.bs;
  return stored === 0 ? 1 : a.rowPtr[a.nRows] / stored;
}

// ---------------------------------------------------------------------------------------------
// Symmetry
// ---------------------------------------------------------------------------------------------

export interface SymmetryInfo {
  square: boolean;
  /** Pattern of A equals pattern of Aᵀ (explicit zeros count as entries). */
  patternSymmetric: boolean;
  /** max |a_ij − a_ji| / max |a_ij| (missing entries count as 0); 0 for a zero matrix, NaN if not square. */
  maxAsymmetry: number;
}

/** Compare A with Aᵀ row by row (both sorted); O(nnz) time and one transposed copy. */
export function symmetryInfo(a: Csr): SymmetryInfo {
  if (a.nRows !== a.nCols) return { square: false, patternSymmetric: false, maxAsymmetry: Number.NaN };
  const t = csrTranspose(a);
  let pattern = true;
  let maxDiff = 0;
  let maxAbs = 0;
  for (let i = 0; i < a.nRows; i++) {
    let p = a.rowPtr[i];
    const pEnd = a.rowPtr[i + 1];
    let q = t.rowPtr[i];
    const qEnd = t.rowPtr[i + 1];
    while (p < pEnd || q < qEnd) {
      const ca = p < pEnd ? a.colInd[p] : Number.MAX_SAFE_INTEGER;
      const ct = q < qEnd ? t.colInd[q] : Number.MAX_SAFE_INTEGER;
      let va = 0, vt = 0;
      if (ca === ct) { va = a.values[p++]; vt = t.values[q++]; } else if (ca < ct) { va = a.values[p++]; pattern = false; } else { vt = t.values[q++]; pattern = false; }
      const d = Math.abs(va - vt);
      if (d > maxDiff || Number.isNaN(d)) maxDiff = Number.isNaN(d) ? Number.POSITIVE_INFINITY : d;
      if (Math.abs(va) > maxAbs) maxAbs = Math.abs(va);
    }
  }
  return { square: true, patternSymmetric: pattern, maxAsymmetry: maxAbs === 0 ? (maxDiff === 0 ? 0 : Infinity) : maxDiff / maxAbs };
}

/**
 * Numerical symmetry: |a_ij − a_ji| ≤ rtol · max|a| for all i, j (missing entries count as 0).
 * rtol = 0 asks for exact symmetry.
 */
export function isSymmetric(a: Csr, rtol = 0): boolean {
  const s = symmetryInfo(a);
  return s.square && s.maxAsymmetry <= rtol;
}

// ---------------------------------------------------------------------------------------------
// Strongly connected components of the block graph (slab structure)
// ---------------------------------------------------------------------------------------------

export interface BlockComponents {
  nComponents: number;
  /** Component c holds order[componentOffsets[c] .. componentOffsets[c+1]-1]. */
  componentOffsets: Int32Array;
  /**
   * Block rows grouped by component, components in topological order (a component only couples
   * to itself and to earlier ones), members ascending within a component. As a permutation
   * (new → old) it makes the matrix block lower triangular with the components as diagonal blocks.
   */
  order: Int32Array;
  /** Component of each block row (index into componentOffsets). */
  componentOf: Int32Array;
  /**
   * The given order is already block lower triangular: every component is a contiguous range of
   * block rows and no stored block lies above the diagonal of that partition.
   */
  isBlockLowerTriangular: boolean;
  /** Size (in block rows) of the largest component. */
  largestComponent: number;
}

/**
 * Tarjan's strongly connected components (Tarjan, "Depth-first search and linear graph
 * algorithms", SIAM J. Comput. 1(2), 1972), iterative with an explicit call stack so 10⁶ block
 * rows cannot overflow the JS stack. Edge I → J for every stored block (I, J): block row I needs
 * x_J. Tarjan emits a component only after every component reachable from it, i.e. after all
 * it depends on, which is the block lower triangular order (Duff & Reid, "An implementation of
 * Tarjan's algorithm for the block triangularization of a matrix", ACM TOMS 4(2), 1978).
 * Roots are taken in ascending order, so a matrix that is already block lower triangular keeps
 * its order (order is then the identity). Diagonal blocks (self loops) are ignored.
 */
export function stronglyConnectedBlocks(a: Bsr): BlockComponents {
  const n = a.nBlockRows;
  if (a.nBlockCols !== n) throw new RangeError(`stronglyConnectedBlocks: needs a square block matrix, got ${n}×${a.nBlockCols} blocks`);
  const { rowPtr, colInd } = a;
  const index = new Int32Array(n).fill(-1);
  const low = new Int32Array(n);
  const onStack = new Uint8Array(n);
  const stack = new Int32Array(n);
  const callNode = new Int32Array(n);
  const callEdge = new Int32Array(n);
  const componentOf = new Int32Array(n);
  const order = new Int32Array(n);
  const offsets = new Int32Array(n + 1);
  let sp = 0, csp = 0, counter = 0, nComp = 0, filled = 0, largest = 0;

  for (let root = 0; root < n; root++) {
    if (index[root] !== -1) continue;
    index[root] = low[root] = counter++;
    stack[sp++] = root; onStack[root] = 1;
    callNode[csp] = root; callEdge[csp] = rowPtr[root]; csp++;
    while (csp > 0) {
      const v = callNode[csp - 1];
      const e = callEdge[csp - 1];
      if (e < rowPtr[v + 1]) {
        callEdge[csp - 1] = e + 1;
        const w = colInd[e];
        if (index[w] === -1) {
          index[w] = low[w] = counter++;
          stack[sp++] = w; onStack[w] = 1;
          callNode[csp] = w; callEdge[csp] = rowPtr[w]; csp++;
        } else if (onStack[w] === 1 && index[w] < low[v]) {
          low[v] = index[w];
        }
        continue;
      }
      // v is finished
      if (low[v] === index[v]) {
        let top = sp;
        do { top--; } while (stack[top] !== v);
        const size = sp - top;
        for (let t = top; t < sp; t++) {
          const w = stack[t];
          onStack[w] = 0;
          componentOf[w] = nComp;
          order[filled + t - top] = w;
        }
        sortInt32Range(order, filled, filled + size);
        filled += size;
        sp = top;
        offsets[++nComp] = filled;
        if (size > largest) largest = size;
      }
      csp--;
      if (csp > 0) {
        const u = callNode[csp - 1];
        if (low[v] < low[u]) low[u] = low[v];
      }
    }
  }

  // Block lower triangular as given: components are contiguous and every block above the
  // diagonal stays inside its component.
  let blt = true;
  for (let c = 0; c < nComp && blt; c++) {
    const first = order[offsets[c]], last = order[offsets[c + 1] - 1];
    if (last - first !== offsets[c + 1] - offsets[c] - 1) blt = false;
  }
  for (let I = 0; I < n && blt; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      const J = colInd[k];
      if (J > I && componentOf[J] !== componentOf[I]) { blt = false; break; }
    }
  }
  return {
    nComponents: nComp,
    componentOffsets: offsets.slice(0, nComp + 1),
    order,
    componentOf,
    isBlockLowerTriangular: blt,
    largestComponent: largest,
  };
}

/**
 * Description of why slabOffsets cannot split nBlockRows block rows into slabs, or undefined:
 * integers, first 0, strictly increasing, last nBlockRows.
 */
export function slabOffsetsProblem(offsets: ArrayLike<number>, nBlockRows: number): string | undefined {
  if (offsets.length < 2) return `has ${offsets.length} entries, expected at least 2 (0 and the number of block rows)`;
  if (offsets[0] !== 0) return `starts at ${offsets[0]}, expected 0`;
  for (let s = 1; s < offsets.length; s++) {
    if (!Number.isInteger(offsets[s]) || offsets[s] <= offsets[s - 1]) {
      return `entry ${s} is ${offsets[s]}, expected an integer above ${offsets[s - 1]}`;
    }
  }
  const last = offsets[offsets.length - 1];
  if (last !== nBlockRows) return `ends at ${last}, expected the number of block rows ${nBlockRows}`;
  return undefined;
}

/**
 * Stored blocks (I, J) whose slab lies after the slab of I (above the slab diagonal).
 * Zero means the slab partition is block lower triangular: slabs can be solved in order.
 */
export function blocksAboveSlabDiagonal(a: Bsr, slabOffsets: ArrayLike<number>): number {
  const slabOf = new Int32Array(a.nBlockCols);
  for (let s = 0; s + 1 < slabOffsets.length; s++) slabOf.fill(s, slabOffsets[s], slabOffsets[s + 1]);
  let count = 0;
  for (let I = 0; I < a.nBlockRows; I++) {
    const sI = slabOf[I];
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) if (slabOf[a.colInd[k]] > sI) count++;
  }
  return count;
}

// ---------------------------------------------------------------------------------------------
// Block diagonal dominance and counts
// ---------------------------------------------------------------------------------------------

export interface BlockDominance {
  /**
   * Per block row ρ_I = ‖A_II⁻¹‖∞ · Σ_{J≠I} ‖A_IJ‖∞; block row I is block diagonally dominant
   * when ρ_I < 1 (Feingold & Varga, "Block diagonally dominant matrices and generalizations of
   * the Gerschgorin circle theorem", Pacific J. Math. 12, 1962 — definition from memory). For
   * bs = 1 it is the classic row ratio Σ_{j≠i}|a_ij| / |a_ii|.
   */
  max: number;
  /** Mean of ρ_I over block rows with an invertible diagonal block (NaN if there are none). */
  mean: number;
  /** Block rows with ρ_I < 1. */
  nDominant: number;
  /** Block rows whose diagonal block is missing or singular (ρ_I = ∞). */
  nSingular: number;
  /** Block row attaining max (−1 for an empty matrix). */
  worstBlockRow: number;
}

/** ∞-norm of a bs×bs row-major block at offset o. */
function blockNormInf(values: Float64Array, o: number, bs: number): number {
  let m = 0;
  for (let i = 0; i < bs; i++) {
    let s = 0;
    for (let j = 0; j < bs; j++) s += Math.abs(values[o + i * bs + j]);
    if (s > m) m = s;
  }
  return m;
}

/**
 * ‖D⁻¹‖∞ by Gauss–Jordan elimination with partial pivoting (common practice) on a scratch copy;
 * Infinity when a pivot is exactly zero or the inverse is not finite.
 */
function inverseNormInf(values: Float64Array, o: number, bs: number, work: Float64Array, inv: Float64Array): number {
  const bb = bs * bs;
  for (let t = 0; t < bb; t++) work[t] = values[o + t];
  inv.fill(0, 0, bb);
  for (let i = 0; i < bs; i++) inv[i * bs + i] = 1;
  for (let c = 0; c < bs; c++) {
    let p = c, best = Math.abs(work[c * bs + c]);
    for (let r = c + 1; r < bs; r++) {
      const v = Math.abs(work[r * bs + c]);
      if (v > best) { best = v; p = r; }
    }
    if (!(best > 0)) return Number.POSITIVE_INFINITY;
    if (p !== c) {
      for (let j = 0; j < bs; j++) {
        let t = work[c * bs + j]; work[c * bs + j] = work[p * bs + j]; work[p * bs + j] = t;
        t = inv[c * bs + j]; inv[c * bs + j] = inv[p * bs + j]; inv[p * bs + j] = t;
      }
    }
    const d = 1 / work[c * bs + c];
    for (let j = 0; j < bs; j++) { work[c * bs + j] *= d; inv[c * bs + j] *= d; }
    for (let r = 0; r < bs; r++) {
      if (r === c) continue;
      const f = work[r * bs + c];
      if (f === 0) continue;
      for (let j = 0; j < bs; j++) { work[r * bs + j] -= f * work[c * bs + j]; inv[r * bs + j] -= f * inv[c * bs + j]; }
    }
  }
  const norm = blockNormInf(inv, 0, bs);
  return Number.isFinite(norm) ? norm : Number.POSITIVE_INFINITY;
}

/** Block diagonal dominance ρ_I per block row, summarised (see BlockDominance). */
export function blockDiagonalDominance(a: Bsr): BlockDominance {
  const { nBlockRows, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const diag = diagonalBlockIndex(a);
  const work = new Float64Array(bb);
  const inv = new Float64Array(bb);
  let max = nBlockRows === 0 ? 0 : -1, worst = -1, sum = 0, nFinite = 0, nDominant = 0, nSingular = 0;
  for (let I = 0; I < nBlockRows; I++) {
    let off = 0;
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) if (colInd[k] !== I) off += blockNormInf(values, k * bb, bs);
    const invNorm = diag[I] < 0 ? Number.POSITIVE_INFINITY : inverseNormInf(values, diag[I] * bb, bs, work, inv);
    // a zero off-diagonal sum with a singular diagonal block still cannot be inverted: ρ = ∞
    const rho = invNorm === Number.POSITIVE_INFINITY ? invNorm : invNorm * off;
    if (rho === Number.POSITIVE_INFINITY) nSingular++;
    else { sum += rho; nFinite++; if (rho < 1) nDominant++; }
    if (rho > max) { max = rho; worst = I; }
  }
  return { max, mean: nFinite === 0 ? Number.NaN : sum / nFinite, nDominant, nSingular, worstBlockRow: worst };
}

/** Stored blocks per block row. */
export function blocksPerRow(a: Bsr): { min: number; mean: number; max: number } {
  const n = a.nBlockRows;
  if (n === 0) return { min: 0, mean: 0, max: 0 };
  let min = Number.POSITIVE_INFINITY, max = 0;
  for (let I = 0; I < n; I++) {
    const c = a.rowPtr[I + 1] - a.rowPtr[I];
    if (c < min) min = c;
    if (c > max) max = c;
  }
  return { min, mean: a.rowPtr[n] / n, max };
}

// ---------------------------------------------------------------------------------------------
// The numerically nonzero block pattern
// ---------------------------------------------------------------------------------------------

export interface ZeroBlocks {
  /** Stored blocks whose every entry is exactly 0. */
  zeroBlocks: number;
  /** Of those, blocks on the block diagonal (such a block row has no usable pivot block). */
  zeroDiagonalBlocks: number;
}

/** Count the stored blocks that hold only zeros (common in upwind DG: the outflow neighbour's block). */
export function zeroBlocks(a: Bsr): ZeroBlocks {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  let zero = 0, zeroDiag = 0;
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      let allZero = true;
      for (let q = k * bb, end = q + bb; q < end; q++) if (values[q] !== 0) { allZero = false; break; }
      if (allZero) { zero++; if (colInd[k] === I) zeroDiag++; }
    }
  }
  return { zeroBlocks: zero, zeroDiagonalBlocks: zeroDiag };
}

/**
 * The block pattern without the blocks that hold only zeros: a Bsr with the same block rows whose
 * `values` is EMPTY (pattern only, for graph algorithms such as stronglyConnectedBlocks). A NaN
 * entry counts as nonzero.
 */
export function nonzeroBlockPattern(a: Bsr): Bsr {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const newPtr = new Int32Array(nb + 1);
  const keep: number[] = [];
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      for (let q = k * bb, end = q + bb; q < end; q++) if (values[q] !== 0) { keep.push(colInd[k]); break; }
    }
    newPtr[I + 1] = keep.length;
  }
  return { nBlockRows: nb, nBlockCols: a.nBlockCols, bs, rowPtr: newPtr, colInd: Int32Array.from(keep), values: new Float64Array(0) };
}

export interface TriangularStructure {
  nComponents: number;
  largestComponent: number;
  /** The given order is already block lower triangular (by components). */
  givenOrderBlockLowerTriangular: boolean;
  /**
   * Every strongly connected component is a single block row: a symmetric permutation of the
   * block rows (the component order) makes the matrix block lower triangular with single blocks
   * on the diagonal, so one block forward sweep (block Gauss–Seidel) in that order solves it.
   */
  triangularUnderPermutation: boolean;
}

/** Triangular structure of a block pattern from Tarjan's components (stronglyConnectedBlocks). */
export function triangularStructure(a: Bsr): TriangularStructure {
  const c = stronglyConnectedBlocks(a);
  return {
    nComponents: c.nComponents,
    largestComponent: c.largestComponent,
    givenOrderBlockLowerTriangular: c.isBlockLowerTriangular,
    triangularUnderPermutation: a.nBlockRows === 0 || c.largestComponent === 1,
  };
}
