import type { Bsr } from '../sparse/types.js';
import { bsrToCsr } from '../sparse/bsr.js';
import { blockOrdering } from '../sparse/orderings.js';
import { DEFAULT_RECIPE, type Recipe } from '../solvers/recipe.js';
import { solveSystem } from '../solvers/run-recipe.js';

/**
 * Solve of a generated space-time system for the refinement study, slab by slab: the matrix is
 * block lower triangular by slabs, so slab s solves its diagonal block A_ss x_s = b_s − Σ_{t<s} A_st x_t
 * with the inflow from the solution of the earlier slabs. Each slab's system is solved by
 * - block forward substitution when its blocks are lower triangular in the element order
 *   (downstream order without cycles; one forward block Gauss–Seidel sweep: Natvig & Lie, ECMOR XI 2008);
 * - dense LU with partial pivoting when it has at most `maxDenseUnknowns` unknowns;
 * - banded LU with partial pivoting (the LINPACK dgbfa/dgbsl scheme: row interchanges widen the
 *   upper band by the lower bandwidth) when the band, in the element order or after reverse
 *   Cuthill–McKee within the slab, is small enough (`maxBandValues` stored values and
 *   `maxBandFlops` factorization flops);
 * - otherwise GMRES + block ILU(0) on the slab (`recipe`, relative residual 1e-12 of the slab's
 *   right-hand side by default).
 * A slab whose iterative solve stops without converging ends the solve: the outcome says which slab
 * and why, and x is left incomplete.
 */
export type SlabMethod = 'block-forward-substitution' | 'slab-dense-lu' | 'slab-banded-lu' | 'slab-gmres';

export interface SlabSolveOutcome {
  x: Float64Array;
  /** The slab methods used, in the order above, joined by '+'. */
  method: string;
  /** Slabs solved by each method. */
  slabMethods: Partial<Record<SlabMethod, number>>;
  /** GMRES iterations summed over the slabs solved iteratively (absent when none was). */
  iterations?: number;
  /** Largest relative residual of an iteratively solved slab. */
  relativeResidual?: number;
  /** False when a slab's iterative solve stopped without converging (see failure). */
  converged: boolean;
  failure?: { slab: number; message: string };
}

export const REFINE_RECIPE: Recipe = {
  ...DEFAULT_RECIPE, name: 'refine-slab-gmres-block-ilu0', krylov: 'gmres', preconditioner: 'block-ilu0',
  restart: 60, rtol: 1e-12, maxIterations: 5000,
};

const METHOD_ORDER: SlabMethod[] = ['block-forward-substitution', 'slab-dense-lu', 'slab-banded-lu', 'slab-gmres'];

export interface SlabSolveOptions {
  /** Largest slab (unknowns) solved by dense LU (1000). */
  maxDenseUnknowns?: number;
  /** Largest band storage (values) of a banded LU (2e7, 160 MB). */
  maxBandValues?: number;
  /** Largest banded factorization (flops, 2e9). */
  maxBandFlops?: number;
  /** Iterative recipe for the remaining slabs (REFINE_RECIPE). */
  recipe?: Recipe;
}

export function solveBySlabs(
  bsr: Bsr, rhs: Float64Array, slabOffsets: ArrayLike<number>, opts: SlabSolveOptions = {},
): SlabSolveOutcome {
  const maxDense = opts.maxDenseUnknowns ?? 1000;
  const maxBandValues = opts.maxBandValues ?? 2e7;
  const maxBandFlops = opts.maxBandFlops ?? 2e9;
  const recipe = opts.recipe ?? REFINE_RECIPE;
  const { bs, rowPtr, colInd, values, nBlockRows } = bsr;
  const bb = bs * bs;
  const nSlabs = slabOffsets.length - 1;
  let largest = 0;
  for (let s = 0; s < nSlabs; s++) largest = Math.max(largest, (slabOffsets[s + 1] - slabOffsets[s]) * bs);
  const x = new Float64Array(nBlockRows * bs);
  const r = new Float64Array(largest);
  const counts: Partial<Record<SlabMethod, number>> = {};
  let iterations: number | undefined;
  let worstResidual: number | undefined;
  for (let s = 0; s < nSlabs; s++) {
    const lo = slabOffsets[s], hi = slabOffsets[s + 1];
    const n = (hi - lo) * bs;
    // Slab right-hand side minus the couplings to earlier slabs (the inflow through the slab's bottom).
    for (let I = lo; I < hi; I++) {
      for (let i = 0; i < bs; i++) {
        let v = rhs[I * bs + i];
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J >= lo) continue;
          const o = k * bb + i * bs;
          for (let j = 0; j < bs; j++) v -= values[o + j] * x[J * bs + j];
        }
        r[(I - lo) * bs + i] = v;
      }
    }
    const rs = r.subarray(0, n);
    let method: SlabMethod;
    if (slabIsTriangular(bsr, lo, hi)) {
      forwardSubstitution(bsr, lo, hi, rs, x);
      method = 'block-forward-substitution';
    } else if (n <= maxDense) {
      const A = new Float64Array(n * n);
      for (let I = lo; I < hi; I++) {
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J < lo || J >= hi) continue;
          for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
            A[((I - lo) * bs + i) * n + (J - lo) * bs + j] = values[k * bb + i * bs + j];
          }
        }
      }
      const piv = new Int32Array(n);
      luInPlace(A, n, piv);
      luSolveInPlace(A, n, piv, rs);
      x.set(rs, lo * bs);
      method = 'slab-dense-lu';
    } else {
      const slab = slabMatrix(bsr, lo, hi);
      const band = bestBand(slab);
      const w = 2 * band.kl + band.ku + 1;
      if (n * w <= maxBandValues && n * band.kl * (band.kl + band.ku + 1) * 2 <= maxBandFlops) {
        const perm = band.perm;
        const ab = bandStorage(slab, perm, band.kl, band.ku);
        const piv = new Int32Array(n);
        bandLuInPlace(ab, n, band.kl, band.ku, piv);
        const b = new Float64Array(n);
        for (let I = 0; I < slab.nBlockRows; I++) for (let i = 0; i < bs; i++) b[I * bs + i] = rs[perm[I] * bs + i];
        bandLuSolveInPlace(ab, n, band.kl, band.ku, piv, b);
        for (let I = 0; I < slab.nBlockRows; I++) for (let i = 0; i < bs; i++) x[(lo + perm[I]) * bs + i] = b[I * bs + i];
        method = 'slab-banded-lu';
      } else {
        const system = { bsr: slab, get csr() { return bsrToCsr(slab); } };
        const { result, x: xs } = solveSystem(system, Float64Array.from(rs), recipe);
        iterations = (iterations ?? 0) + result.iterations;
        worstResidual = Math.max(worstResidual ?? 0, result.trueRelativeResidual);
        if (!result.converged) {
          counts['slab-gmres'] = (counts['slab-gmres'] ?? 0) + 1;
          return {
            x, method: methodName(counts), slabMethods: counts, iterations, relativeResidual: worstResidual, converged: false,
            failure: {
              slab: s,
              message: `slab ${s + 1} of ${nSlabs} (${n} unknowns): ${recipe.krylov} + ${recipe.preconditioner} stopped (${result.cause}) ` +
                `after ${result.iterations} iterations at relative residual ${result.trueRelativeResidual.toExponential(2)} (target ${recipe.rtol})`,
            },
          };
        }
        x.set(xs, lo * bs);
        method = 'slab-gmres';
      }
    }
    counts[method] = (counts[method] ?? 0) + 1;
  }
  const out: SlabSolveOutcome = { x, method: methodName(counts), slabMethods: counts, converged: true };
  if (iterations !== undefined) out.iterations = iterations;
  if (worstResidual !== undefined) out.relativeResidual = worstResidual;
  return out;
}

function methodName(counts: Partial<Record<SlabMethod, number>>): string {
  return METHOD_ORDER.filter((m) => (counts[m] ?? 0) > 0).join('+');
}

/** True when every block of slab [lo, hi) above its diagonal is exactly zero. */
function slabIsTriangular(a: Bsr, lo: number, hi: number): boolean {
  const bb = a.bs * a.bs;
  for (let I = lo; I < hi; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      if (a.colInd[k] <= I) continue;
      for (let q = 0; q < bb; q++) if (a.values[k * bb + q] !== 0) return false;
    }
  }
  return true;
}

/** Block forward substitution over slab [lo, hi): r holds the slab right-hand side (overwritten). */
function forwardSubstitution(a: Bsr, lo: number, hi: number, r: Float64Array, x: Float64Array): void {
  const { bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const block = new Float64Array(bb);
  const piv = new Int32Array(bs);
  for (let I = lo; I < hi; I++) {
    const ro = (I - lo) * bs;
    let diag = -1;
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      const J = colInd[k];
      if (J === I) diag = k;
      if (J < lo || J >= I) continue;
      for (let i = 0; i < bs; i++) {
        let v = 0;
        for (let j = 0; j < bs; j++) v += values[k * bb + i * bs + j] * x[J * bs + j];
        r[ro + i] -= v;
      }
    }
    if (diag < 0) throw new Error(`block row ${I} has no diagonal block`);
    block.set(values.subarray(diag * bb, diag * bb + bb));
    luInPlace(block, bs, piv);
    const seg = r.subarray(ro, ro + bs);
    luSolveInPlace(block, bs, piv, seg);
    x.set(seg, I * bs);
  }
}

/** The diagonal block of slab [lo, hi) as its own BSR (block columns renumbered from 0). */
export function slabMatrix(a: Bsr, lo: number, hi: number): Bsr {
  const { bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const nb = hi - lo;
  const ptr = new Int32Array(nb + 1);
  for (let I = lo; I < hi; I++) {
    let c = 0;
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) if (colInd[k] >= lo && colInd[k] < hi) c++;
    ptr[I - lo + 1] = ptr[I - lo] + c;
  }
  const col = new Int32Array(ptr[nb]);
  const val = new Float64Array(ptr[nb] * bb);
  let p = 0;
  for (let I = lo; I < hi; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      const J = colInd[k];
      if (J < lo || J >= hi) continue;
      col[p] = J - lo;
      val.set(values.subarray(k * bb, (k + 1) * bb), p * bb);
      p++;
    }
  }
  return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr: ptr, colInd: col, values: val };
}

/** Scalar lower and upper bandwidth of a BSR under a block permutation (perm new → old). */
export function bandwidth(a: Bsr, perm: Int32Array): { kl: number; ku: number } {
  const nb = a.nBlockRows, bs = a.bs;
  const inv = new Int32Array(nb);
  for (let i = 0; i < nb; i++) inv[perm[i]] = i;
  let kl = 0, ku = 0;
  for (let I = 0; I < nb; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const d = inv[I] - inv[a.colInd[k]];
      kl = Math.max(kl, d * bs + bs - 1);
      ku = Math.max(ku, -d * bs + bs - 1);
    }
  }
  return { kl, ku };
}

/** The smaller band of the element order and reverse Cuthill–McKee (by stored band width). */
function bestBand(a: Bsr): { perm: Int32Array; kl: number; ku: number } {
  const natural = new Int32Array(a.nBlockRows);
  for (let i = 0; i < natural.length; i++) natural[i] = i;
  const nb0 = bandwidth(a, natural);
  const rcm = blockOrdering(a, 'rcm');
  const nb1 = bandwidth(a, rcm);
  return 2 * nb1.kl + nb1.ku <= 2 * nb0.kl + nb0.ku ? { perm: rcm, ...nb1 } : { perm: natural, ...nb0 };
}

/**
 * Band storage, row-major: row i holds columns i − kl … i + kl + ku at ab[i·w + (j − i + kl)],
 * w = 2·kl + ku + 1 (kl extra columns on the right for the fill of row interchanges).
 */
function bandStorage(a: Bsr, perm: Int32Array, kl: number, ku: number): Float64Array {
  const nb = a.nBlockRows, bs = a.bs, bb = bs * bs;
  const n = nb * bs, w = 2 * kl + ku + 1;
  const inv = new Int32Array(nb);
  for (let i = 0; i < nb; i++) inv[perm[i]] = i;
  const ab = new Float64Array(n * w);
  for (let I = 0; I < nb; I++) {
    const In = inv[I];
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const Jn = inv[a.colInd[k]];
      for (let i = 0; i < bs; i++) {
        const row = In * bs + i;
        for (let j = 0; j < bs; j++) ab[row * w + (Jn * bs + j - row + kl)] = a.values[k * bb + i * bs + j];
      }
    }
  }
  return ab;
}

/**
 * Banded LU with partial pivoting in place (LINPACK dgbfa's scheme in row storage; common
 * practice): at column c the pivot is the largest |a_rc| for r = c … c + kl; rows c and the pivot
 * row exchange their columns c … c + kl + ku; the multipliers stay where they were computed, so the
 * solve applies each interchange just before its elimination step (dgbsl).
 */
export function bandLuInPlace(ab: Float64Array, n: number, kl: number, ku: number, piv: Int32Array): void {
  const w = 2 * kl + ku + 1;
  const at = (r: number, c: number): number => r * w + (c - r + kl);
  for (let c = 0; c < n; c++) {
    const rEnd = Math.min(n - 1, c + kl);
    let p = c, best = Math.abs(ab[at(c, c)]);
    for (let r = c + 1; r <= rEnd; r++) {
      const v = Math.abs(ab[at(r, c)]);
      if (v > best) { best = v; p = r; }
    }
    piv[c] = p;
    if (best === 0) throw new Error(`singular band matrix at column ${c}`);
    const cEnd = Math.min(n - 1, c + kl + ku);
    if (p !== c) {
      for (let j = c; j <= cEnd; j++) { const i1 = at(c, j), i2 = at(p, j); const t = ab[i1]; ab[i1] = ab[i2]; ab[i2] = t; }
    }
    const d = ab[at(c, c)];
    for (let r = c + 1; r <= rEnd; r++) {
      const ir = at(r, c);
      const f = ab[ir] / d;
      ab[ir] = f;
      if (f === 0) continue;
      const rowC = at(c, 0), rowR = at(r, 0);
      for (let j = c + 1; j <= cEnd; j++) ab[rowR + j] -= f * ab[rowC + j];
    }
  }
}

export function bandLuSolveInPlace(ab: Float64Array, n: number, kl: number, ku: number, piv: Int32Array, b: Float64Array): void {
  const w = 2 * kl + ku + 1;
  const at = (r: number, c: number): number => r * w + (c - r + kl);
  for (let c = 0; c < n; c++) {
    const p = piv[c];
    if (p !== c) { const t = b[c]; b[c] = b[p]; b[p] = t; }
    const bc = b[c];
    if (bc === 0) continue;
    const rEnd = Math.min(n - 1, c + kl);
    for (let r = c + 1; r <= rEnd; r++) b[r] -= ab[at(r, c)] * bc;
  }
  for (let c = n - 1; c >= 0; c--) {
    const cEnd = Math.min(n - 1, c + kl + ku);
    let s = b[c];
    const row = at(c, 0);
    for (let j = c + 1; j <= cEnd; j++) s -= ab[row + j] * b[j];
    b[c] = s / ab[at(c, c)];
  }
}

/** Dense LU with partial pivoting, row-major n×n, in place (common practice). */
export function luInPlace(a: Float64Array, n: number, piv: Int32Array): void {
  for (let c = 0; c < n; c++) {
    let p = c;
    let best = Math.abs(a[c * n + c]);
    for (let r = c + 1; r < n; r++) {
      const v = Math.abs(a[r * n + c]);
      if (v > best) { best = v; p = r; }
    }
    piv[c] = p;
    if (best === 0) throw new Error(`singular matrix at column ${c}`);
    if (p !== c) {
      for (let k = 0; k < n; k++) { const t = a[c * n + k]; a[c * n + k] = a[p * n + k]; a[p * n + k] = t; }
    }
    const d = a[c * n + c];
    for (let r = c + 1; r < n; r++) {
      const f = a[r * n + c] / d;
      if (f === 0) continue;
      a[r * n + c] = f;
      for (let k = c + 1; k < n; k++) a[r * n + k] -= f * a[c * n + k];
    }
  }
}

export function luSolveInPlace(a: Float64Array, n: number, piv: Int32Array, b: Float64Array): void {
  for (let c = 0; c < n; c++) {
    const p = piv[c];
    if (p !== c) { const t = b[c]; b[c] = b[p]; b[p] = t; }
  }
  for (let r = 1; r < n; r++) {
    let s = b[r];
    for (let k = 0; k < r; k++) s -= a[r * n + k] * b[k];
    b[r] = s;
  }
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r];
    for (let k = r + 1; k < n; k++) s -= a[r * n + k] * b[k];
    b[r] = s / a[r * n + r];
  }
}
