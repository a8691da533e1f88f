// Preconditioner sweeps: twins of the apply() loops in src/precond/*.ts, same order of operations.
import { f64At, setF64, i32At, f64Ptr } from './common';
import { matVecInto, luSolve } from './dense';

/** Block ILU(0) apply on the sweep-ordered factors (see src/precond/block-ilu0.ts); y in place. */
export function blockIluSweeps(
  nb: i32, bs: i32, lowerPtr: usize, lowerCol: usize, lower: usize,
  upperPtr: usize, upperCol: usize, upper: usize, y: usize, t: usize,
): void {
  const bb = bs * bs;
  for (let I = 0; I < nb; I++) {
    const yo = f64Ptr(y, I * bs);
    const end = i32At(lowerPtr, I + 1);
    for (let q = i32At(lowerPtr, I); q < end; q++) {
      matVecInto(f64Ptr(lower, q * bb), bs, f64Ptr(y, i32At(lowerCol, q) * bs), yo, true);
    }
  }
  const rowBytes = <usize>bs << 3;
  for (let s = 0; s < nb; s++) {
    const I = nb - 1 - s;
    const yo = f64Ptr(y, I * bs);
    const dI = i32At(upperPtr, s + 1) - 1;
    for (let q = i32At(upperPtr, s); q < dI; q++) {
      matVecInto(f64Ptr(upper, q * bb), bs, f64Ptr(y, i32At(upperCol, q) * bs), yo, true);
    }
    memory.copy(t, yo, rowBytes);
    matVecInto(f64Ptr(upper, dI * bb), bs, t, yo, false);
  }
}

/** Block-diagonal apply with explicit inverses: z_I = F_I r_I. */
export function blockDiagonalApply(nb: i32, bs: i32, f: usize, r: usize, z: usize): void {
  const bb = bs * bs;
  for (let I = 0; I < nb; I++) matVecInto(f64Ptr(f, I * bb), bs, f64Ptr(r, I * bs), f64Ptr(z, I * bs), false);
}

/** Block-diagonal apply with LU factors: z_I ← LU_I⁻¹ z_I in place (z holds r on entry). */
export function blockDiagonalLuSolve(nb: i32, bs: i32, f: usize, piv: usize, z: usize): void {
  const bb = bs * bs;
  for (let I = 0; I < nb; I++) luSolve(f64Ptr(f, I * bb), piv + (<usize>(I * bs) << 2), bs, f64Ptr(z, I * bs));
}

/**
 * One block Gauss–Seidel / SOR sweep (sweepOnce in src/precond/block-gs.ts). perm/inv = 0 for the
 * natural order; lu: diagonal factors are LU (with pivots) rather than inverses; t workspace of
 * bs (lu) or 2·bs values. prefixMode 1 (forward, natural order): store each row's partial sum after
 * its blocks left of the diagonal in prefix; 2 (the backward sweep after it): start from it.
 */
export function blockGsSweep(
  nb: i32, bs: i32, rowPtr: usize, colInd: usize, values: usize, perm: usize, inv: usize,
  f: usize, piv: usize, lu: bool, rhs: usize, x: usize, t: usize, forward: bool, first: bool, omega: f64,
  prefix: usize, prefixMode: i32,
): void {
  const bb = bs * bs;
  const tIn: usize = lu ? t : f64Ptr(t, bs);
  for (let i = 0; i < nb; i++) {
    const step = forward ? i : nb - 1 - i;
    const I = perm != 0 ? i32At(perm, step) : step;
    const xo = f64Ptr(x, I * bs);
    const end = i32At(rowPtr, I + 1);
    let k = i32At(rowPtr, I);
    if (prefixMode == 2) {
      memory.copy(tIn, f64Ptr(prefix, I * bs), <usize>bs << 3);
      while (k < end && i32At(colInd, k) <= I) k++;
    } else {
      memory.copy(tIn, f64Ptr(rhs, I * bs), <usize>bs << 3);
      if (prefixMode == 1) {
        for (; k < end && i32At(colInd, k) < I; k++) {
          matVecInto(f64Ptr(values, k * bb), bs, f64Ptr(x, i32At(colInd, k) * bs), tIn, true);
        }
        memory.copy(f64Ptr(prefix, I * bs), tIn, <usize>bs << 3);
      }
    }
    for (; k < end; k++) {
      const J = i32At(colInd, k);
      if (J == I) continue;
      if (first) {
        const sJ = inv != 0 ? i32At(inv, J) : J;
        if (forward ? sJ > step : sJ < step) continue;
      }
      matVecInto(f64Ptr(values, k * bb), bs, f64Ptr(x, J * bs), tIn, true);
    }
    if (lu) luSolve(f64Ptr(f, step * bb), piv + (<usize>(step * bs) << 2), bs, t);
    else matVecInto(f64Ptr(f, step * bb), bs, tIn, t, false);
    if (omega == 1) memory.copy(xo, t, <usize>bs << 3);
    else for (let q = 0; q < bs; q++) setF64(xo, q, (1 - omega) * f64At(xo, q) + omega * f64At(t, q));
  }
}

/** Point ILU(0) apply on the CSR pattern with diagonal positions (src/precond/ilu0.ts). */
export function iluPointSweeps(n: i32, rowPtr: usize, colInd: usize, lu: usize, diag: usize, r: usize, z: usize): void {
  for (let i = 0; i < n; i++) {
    let s = f64At(r, i);
    const d = i32At(diag, i);
    for (let k = i32At(rowPtr, i); k < d; k++) s -= f64At(lu, k) * f64At(z, i32At(colInd, k));
    setF64(z, i, s);
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = f64At(z, i);
    const d = i32At(diag, i);
    const end = i32At(rowPtr, i + 1);
    for (let k = d + 1; k < end; k++) s -= f64At(lu, k) * f64At(z, i32At(colInd, k));
    setF64(z, i, s / f64At(lu, d));
  }
}

/** out[i-th block] = x[perm[i]-th block]. */
export function gatherBlocks(n: i32, x: usize, perm: usize, bs: i32, out: usize): void {
  const bytes = <usize>bs << 3;
  for (let i = 0; i < n; i++) memory.copy(f64Ptr(out, i * bs), f64Ptr(x, i32At(perm, i) * bs), bytes);
}

/** out[perm[i]-th block] = x[i-th block]. */
export function scatterBlocks(n: i32, x: usize, perm: usize, bs: i32, out: usize): void {
  const bytes = <usize>bs << 3;
  for (let i = 0; i < n; i++) memory.copy(f64Ptr(out, i32At(perm, i) * bs), f64Ptr(x, i * bs), bytes);
}
