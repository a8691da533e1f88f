// AIR cycle kernels: twins of the free functions airRelax, airRestrict and airProlong in
// src/precond/air.ts, same order of operations (bit-identical results).
import { f64At, setF64, i32At, f64Ptr } from './common';
import { matVecInto } from './dense';

/** x_u += Σ_v a_uv t_v, one row sum at a time (addScaledBlock in src/precond/air.ts). */
@inline function addScaledBlock(a: usize, bs: i32, t: usize, x: usize): void {
  for (let u = 0; u < bs; u++) {
    let sum: f64 = 0;
    const ro = f64Ptr(a, u * bs);
    for (let v = 0; v < bs; v++) sum += f64At(ro, v) * f64At(t, v);
    setF64(x, u, f64At(x, u) + sum);
  }
}

/** One block Jacobi sweep on the points pts: t_i = b_i − Σ A_ij x_j (all from the old x), then x_i += D_i⁻¹ t_i. */
export function airRelax(
  nPts: i32, pts: usize, bs: i32, rowPtr: usize, colInd: usize, values: usize, dinv: usize,
  b: usize, x: usize, t: usize, zeroGuess: bool,
): void {
  const bb = bs * bs;
  const rowBytes = <usize>bs << 3;
  for (let q = 0; q < nPts; q++) {
    const i = i32At(pts, q);
    const to = f64Ptr(t, i * bs);
    memory.copy(to, f64Ptr(b, i * bs), rowBytes);
    if (zeroGuess) continue;
    const end = i32At(rowPtr, i + 1);
    for (let p = i32At(rowPtr, i); p < end; p++) matVecInto(f64Ptr(values, p * bb), bs, f64Ptr(x, i32At(colInd, p) * bs), to, true);
  }
  for (let q = 0; q < nPts; q++) {
    const i = i32At(pts, q);
    addScaledBlock(f64Ptr(dinv, i * bb), bs, f64Ptr(t, i * bs), f64Ptr(x, i * bs));
  }
}

/** b_c = r_C + Z r_F: per C point its residual block plus the products with its row of Z. */
export function airRestrict(nC: i32, cPoints: usize, bs: i32, zRowPtr: usize, zColInd: usize, zValues: usize, res: usize, bc: usize): void {
  const bb = bs * bs;
  for (let c = 0; c < nC; c++) {
    const bo = f64Ptr(bc, c * bs);
    memory.copy(bo, f64Ptr(res, i32At(cPoints, c) * bs), <usize>bs << 3);
    const end = i32At(zRowPtr, c + 1);
    for (let p = i32At(zRowPtr, c); p < end; p++) addScaledBlock(f64Ptr(zValues, p * bb), bs, f64Ptr(res, i32At(zColInd, p) * bs), bo);
  }
}

/** x += P x_c: injection at the C points, then (wCol ≠ 0) the one-point rule W at the F points. */
export function airProlong(nC: i32, cPoints: usize, nF: i32, fPoints: usize, wCol: usize, wValues: usize, bs: i32, xc: usize, x: usize): void {
  const bb = bs * bs;
  for (let c = 0; c < nC; c++) {
    const xo = f64Ptr(x, i32At(cPoints, c) * bs), co = f64Ptr(xc, c * bs);
    for (let q = 0; q < bs; q++) setF64(xo, q, f64At(xo, q) + f64At(co, q));
  }
  if (wCol == 0) return;
  for (let q = 0; q < nF; q++) {
    const f = i32At(fPoints, q);
    const c = i32At(wCol, f);
    if (c < 0) continue;
    addScaledBlock(f64Ptr(wValues, f * bb), bs, f64Ptr(xc, c * bs), f64Ptr(x, f * bs));
  }
}
