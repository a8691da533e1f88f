/**
 * Kernels of p-multigrid (polynomial coarsening) on a modal, hierarchical basis: which unknowns of a
 * block survive truncation to degree ≤ q, the coarse blocks by extraction (the Galerkin operator
 * R A Rᵀ when R is that truncation), restriction (gather) and prolongation (scatter-add, the
 * transpose). Free functions on typed arrays; p-multigrid.ts wraps them.
 *
 * With an orthonormal hierarchical basis the L² projection onto degree ≤ q is the truncation of the
 * coefficient vector, so R = truncation, P = Rᵀ and R A P is the leading sub-block of every block
 * (common practice; Rønquist & Patera 1987 for spectral p-multigrid, Helenbrook, Mavriplis & Atkins,
 * AIAA 2003-3989 for DG).
 */
import type { ModalLayout } from '../sparse/types.js';

/** Highest total degree of a modal layout. */
export function maxDegree(m: ModalLayout): number {
  let p = 0;
  for (const d of m.degrees) if (d > p) p = d;
  return p;
}

/** The modal layout of the truncation to degree ≤ q (same equations and arrangement, a prefix of the degrees). */
export function truncatedModes(m: ModalLayout, q: number): ModalLayout {
  return { nEquations: m.nEquations, arrangement: m.arrangement, degrees: m.degrees.filter((d) => d <= q) };
}

/**
 * Local indices (inside one block of layout m) of the unknowns kept by truncation to degree ≤ q,
 * listed in the order they take in the truncated block: sel[c] = fine local index of coarse local
 * index c. Equation-major keeps (i, a) at i·nModes + a → i·nModes_q + a; mode-major keeps the first
 * nModes_q·nEquations unknowns.
 */
export function truncationSelection(m: ModalLayout, q: number): Int32Array {
  const nm = m.degrees.length;
  const ne = m.nEquations;
  let nq = 0;
  for (const d of m.degrees) if (d <= q) nq++;
  const sel = new Int32Array(nq * ne);
  let c = 0;
  if (m.arrangement === 'equation-major') {
    for (let i = 0; i < ne; i++) for (let a = 0; a < nm; a++) if (m.degrees[a] <= q) sel[c++] = i * nm + a;
  } else {
    for (let a = 0; a < nm; a++) if (m.degrees[a] <= q) for (let i = 0; i < ne; i++) sel[c++] = a * ne + i;
  }
  return sel;
}

/**
 * Coarse block values by extraction: for each of nBlocks blocks,
 * coarse[k][i][j] = fine[k][sel[i]][sel[j]] (row-major blocks, bsF → bsC = sel.length).
 */
export function extractBlocksKernel(
  nBlocks: number, bsF: number, fine: Float64Array, sel: Int32Array, coarse: Float64Array,
): void {
  const bsC = sel.length;
  const bbF = bsF * bsF, bbC = bsC * bsC;
  for (let k = 0; k < nBlocks; k++) {
    const fo = k * bbF, co = k * bbC;
    for (let i = 0; i < bsC; i++) {
      const ro = fo + sel[i] * bsF;
      const wo = co + i * bsC;
      for (let j = 0; j < bsC; j++) coarse[wo + j] = fine[ro + sel[j]];
    }
  }
}

/** Restriction (truncation): xC[I·bsC + c] = xF[I·bsF + sel[c]] for nBlockRows block rows. */
export function restrictKernel(nBlockRows: number, bsF: number, sel: Int32Array, xF: Float64Array, xC: Float64Array): void {
  const bsC = sel.length;
  for (let I = 0; I < nBlockRows; I++) {
    const fo = I * bsF, co = I * bsC;
    for (let c = 0; c < bsC; c++) xC[co + c] = xF[fo + sel[c]];
  }
}

/** Prolongation (the transpose of restriction), added: xF[I·bsF + sel[c]] += xC[I·bsC + c]. */
export function prolongAddKernel(nBlockRows: number, bsF: number, sel: Int32Array, xC: Float64Array, xF: Float64Array): void {
  const bsC = sel.length;
  for (let I = 0; I < nBlockRows; I++) {
    const fo = I * bsF, co = I * bsC;
    for (let c = 0; c < bsC; c++) xF[fo + sel[c]] += xC[co + c];
  }
}
