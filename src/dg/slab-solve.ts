import type { Bsr } from '../sparse/types.js';
import { bsrToCsr } from '../sparse/bsr.js';
import { DEFAULT_RECIPE, type Recipe } from '../solvers/recipe.js';
import { solveSystem } from '../solvers/run-recipe.js';

/**
 * Direct solve of a generated space-time system for the refinement study, slab by slab (the matrix
 * is block lower triangular by slabs, so slab s only needs the solution of earlier slabs):
 * - a slab whose blocks are lower triangular in the element order (downstream order without cycles)
 *   is solved by block forward substitution (one forward block Gauss–Seidel sweep: Natvig & Lie,
 *   ECMOR XI 2008);
 * - otherwise a slab of at most `maxDenseUnknowns` unknowns by dense LU with partial pivoting;
 * - otherwise the whole system goes to the iterative `recipe` (tight GMRES by default).
 */
export interface SlabSolveOutcome {
  x: Float64Array;
  method: 'block-forward-substitution' | 'slab-dense-lu' | 'iterative';
  iterations?: number;
  relativeResidual?: number;
  /** False when the iterative fallback stopped without converging. */
  converged?: boolean;
}

export const REFINE_RECIPE: Recipe = {
  ...DEFAULT_RECIPE, name: 'refine-gmres-block-ilu0', krylov: 'gmres', preconditioner: 'block-ilu0',
  restart: 60, rtol: 1e-12, maxIterations: 5000,
};

export function solveBySlabs(
  bsr: Bsr, rhs: Float64Array, slabOffsets: ArrayLike<number>,
  opts: { maxDenseUnknowns?: number; recipe?: Recipe } = {},
): SlabSolveOutcome {
  const maxDense = opts.maxDenseUnknowns ?? 1000;
  const { bs, rowPtr, colInd, values, nBlockRows } = bsr;
  const bb = bs * bs;
  const nSlabs = slabOffsets.length - 1;
  let triangular = true;
  let largest = 0;
  for (let s = 0; s < nSlabs; s++) {
    largest = Math.max(largest, (slabOffsets[s + 1] - slabOffsets[s]) * bs);
    for (let I = slabOffsets[s]; I < slabOffsets[s + 1] && triangular; I++) {
      for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
        if (colInd[k] <= I) continue;
        for (let q = 0; q < bb; q++) if (values[k * bb + q] !== 0) { triangular = false; break; }
        if (!triangular) break;
      }
    }
  }
  if (!triangular && largest > maxDense) {
    const { result, x } = solveSystem({ csr: bsrToCsr(bsr), bsr, slabOffsets: Int32Array.from(slabOffsets) }, rhs, opts.recipe ?? REFINE_RECIPE);
    return { x, method: 'iterative', iterations: result.iterations, relativeResidual: result.trueRelativeResidual, converged: result.converged };
  }
  const x = new Float64Array(nBlockRows * bs);
  const r = new Float64Array(largest);
  for (let s = 0; s < nSlabs; s++) {
    const lo = slabOffsets[s], hi = slabOffsets[s + 1];
    const n = (hi - lo) * bs;
    // Slab right-hand side minus the couplings to earlier slabs.
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
    if (triangular) {
      const block = new Float64Array(bb);
      const piv = new Int32Array(bs);
      for (let I = lo; I < hi; I++) {
        const ro = (I - lo) * bs;
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J < lo || J >= I) continue;
          for (let i = 0; i < bs; i++) {
            let v = 0;
            for (let j = 0; j < bs; j++) v += values[k * bb + i * bs + j] * x[J * bs + j];
            r[ro + i] -= v;
          }
        }
        let diag = -1;
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) if (colInd[k] === I) diag = k;
        if (diag < 0) throw new Error(`block row ${I} has no diagonal block`);
        block.set(values.subarray(diag * bb, diag * bb + bb));
        luInPlace(block, bs, piv);
        const seg = r.subarray(ro, ro + bs);
        luSolveInPlace(block, bs, piv, seg);
        x.set(seg, I * bs);
      }
    } else {
      const A = new Float64Array(n * n);
      for (let I = lo; I < hi; I++) {
        for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
          const J = colInd[k];
          if (J < lo) continue;
          for (let i = 0; i < bs; i++) for (let j = 0; j < bs; j++) {
            A[((I - lo) * bs + i) * n + (J - lo) * bs + j] = values[k * bb + i * bs + j];
          }
        }
      }
      const piv = new Int32Array(n);
      luInPlace(A, n, piv);
      const seg = r.subarray(0, n);
      luSolveInPlace(A, n, piv, seg);
      x.set(seg, lo * bs);
    }
  }
  return { x, method: triangular ? 'block-forward-substitution' : 'slab-dense-lu' };
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
