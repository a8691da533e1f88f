/**
 * Small dense kernels on ROW-MAJOR square bs×bs blocks stored inside larger Float64Arrays
 * (entry (i, j) of the block at offset o is a[o + i*bs + j]). Used by block Jacobi, block
 * Gauss–Seidel, block ILU(0) and the slab solver.
 *
 * Kernels are unchecked free functions (callers validate once, outside the hot loop). Each
 * kernel that has an unrolled fast path also has a plain `…Naive` twin that the tests compare
 * against; the naive twins are never used in production code.
 */
import { ptr, wasmFor } from '../kernels-host/arena.js';

/**
 * Pivot threshold, relative: a pivot p fails when |p| ≤ PIVOT_RTOL · ‖block‖_max (or p = 0).
 * 1e-14 ≈ 45 ulp: a pivot this small relative to its block has lost all significant digits
 * (common practice; the same order as the singularity tests of dense LU codes).
 */
export const PIVOT_RTOL = 1e-14;

// When the arrays live in kernel memory (src/kernels-host) the kernels below hand over to their
// WebAssembly twins in src/kernels/dense.ts (same arithmetic, bit-identical results). The
// mat-vecs do so only from bs 4 up: below that the call costs more than the few flops it saves.

/** Largest absolute entry of a bs×bs block. */
export function blockMaxAbs(a: Float64Array, ao: number, bs: number): number {
  const w = wasmFor(a);
  if (w !== null) return w.blockMaxAbs(ptr(a, ao), bs);
  let m = 0;
  const end = ao + bs * bs;
  for (let p = ao; p < end; p++) {
    const v = Math.abs(a[p]);
    if (v > m) m = v;
  }
  return m;
}

/** Frobenius norm of a bs×bs block. */
export function blockFrobenius(a: Float64Array, ao: number, bs: number): number {
  let s = 0;
  const end = ao + bs * bs;
  for (let p = ao; p < end; p++) s += a[p] * a[p];
  return Math.sqrt(s);
}

/** True when every entry of a[o .. o+len) is finite. */
export function allFinite(a: Float64Array, o: number, len: number): boolean {
  const w = wasmFor(a);
  if (w !== null) return w.allFinite(ptr(a, o), len) !== 0;
  const end = o + len;
  for (let p = o; p < end; p++) {
    const v = a[p];
    // v − v is NaN exactly when v is NaN or ±Inf
    if (v - v !== 0) return false;
  }
  return true;
}

/**
 * In-place LU with partial pivoting (row interchanges), P·A = L·U, L unit lower (stored below
 * the diagonal), U upper. piv[po + k] = the row swapped with row k at step k (LAPACK getrf
 * convention, 0-based). Returns −1 on success, or the column k whose pivot |U_kk| ≤ tiny
 * (the factorization stops there). Golub & Van Loan, Matrix Computations, Alg. 3.4.1.
 *
 * Fast path for bs ≥ 16 (below that the unblocked loop was as fast in bench/precond.bench.ts):
 * right-looking blocked LU with panels of 4 columns (the getrf/getf2 split of LAPACK): the
 * panel is factored column by column, then the 4 pivot rows are finished by a small triangular
 * solve and the trailing matrix gets one rank-4 update, whose inner loop does 8 flops per
 * load/store of the updated entry (the same shape as blockGemmSub). Same pivots as the
 * unblocked version up to rounding.
 */
export function luFactor(
  a: Float64Array, ao: number, bs: number, piv: Int32Array, po: number, tiny: number,
): number {
  const w = wasmFor(a, piv);
  if (w !== null) return w.luFactor(ptr(a, ao), bs, ptr(piv, po), tiny);
  if (bs < 16) return luFactorUnblocked(a, ao, bs, piv, po, tiny);
  const NB = 4;
  for (let k0 = 0; k0 < bs; k0 += NB) {
    const kEnd = Math.min(k0 + NB, bs);
    // panel: columns k0..kEnd−1, all rows ≥ k
    for (let k = k0; k < kEnd; k++) {
      const rk = ao + k * bs;
      let p = k;
      let best = Math.abs(a[rk + k]);
      for (let i = k + 1; i < bs; i++) {
        const v = Math.abs(a[ao + i * bs + k]);
        if (v > best) { best = v; p = i; }
      }
      piv[po + k] = p;
      if (!(best > tiny)) return k;
      if (p !== k) {
        const rp = ao + p * bs;
        for (let j = 0; j < bs; j++) { const t = a[rk + j]; a[rk + j] = a[rp + j]; a[rp + j] = t; }
      }
      const inv = 1 / a[rk + k];
      for (let i = k + 1; i < bs; i++) {
        const ri = ao + i * bs;
        const l = a[ri + k] * inv;
        a[ri + k] = l;
        for (let j = k + 1; j < kEnd; j++) a[ri + j] -= l * a[rk + j];
      }
    }
    if (kEnd === bs) break;
    // pivot rows k0..kEnd−1, trailing columns: U12 = L11⁻¹ A12
    for (let k = k0 + 1; k < kEnd; k++) {
      const rk = ao + k * bs;
      for (let q = k0; q < k; q++) {
        const l = a[rk + q];
        if (l === 0) continue;
        const rq = ao + q * bs;
        for (let j = kEnd; j < bs; j++) a[rk + j] -= l * a[rq + j];
      }
    }
    // trailing update A22 −= L21 · U12 (rank 4 when the panel is full)
    const r0 = ao + k0 * bs;
    if (kEnd - k0 === 4) {
      const r1 = r0 + bs, r2 = r1 + bs, r3 = r2 + bs;
      for (let i = kEnd; i < bs; i++) {
        const ri = ao + i * bs;
        const l0 = a[ri + k0], l1 = a[ri + k0 + 1], l2 = a[ri + k0 + 2], l3 = a[ri + k0 + 3];
        for (let j = kEnd; j < bs; j++) {
          a[ri + j] -= l0 * a[r0 + j] + l1 * a[r1 + j] + l2 * a[r2 + j] + l3 * a[r3 + j];
        }
      }
    } else {
      for (let i = kEnd; i < bs; i++) {
        const ri = ao + i * bs;
        for (let q = k0; q < kEnd; q++) {
          const l = a[ri + q];
          const rq = ao + q * bs;
          for (let j = kEnd; j < bs; j++) a[ri + j] -= l * a[rq + j];
        }
      }
    }
  }
  return -1;
}

/** Unblocked LU with partial pivoting (right-looking rank-1 updates): the generic path and test twin. */
export function luFactorUnblocked(
  a: Float64Array, ao: number, bs: number, piv: Int32Array, po: number, tiny: number,
): number {
  for (let k = 0; k < bs; k++) {
    const rk = ao + k * bs;
    let p = k;
    let best = Math.abs(a[rk + k]);
    for (let i = k + 1; i < bs; i++) {
      const v = Math.abs(a[ao + i * bs + k]);
      if (v > best) { best = v; p = i; }
    }
    piv[po + k] = p;
    if (!(best > tiny)) return k; // also catches NaN
    if (p !== k) {
      const rp = ao + p * bs;
      for (let j = 0; j < bs; j++) {
        const t = a[rk + j]; a[rk + j] = a[rp + j]; a[rp + j] = t;
      }
    }
    const inv = 1 / a[rk + k];
    for (let i = k + 1; i < bs; i++) {
      const ri = ao + i * bs;
      const l = a[ri + k] * inv;
      a[ri + k] = l;
      if (l !== 0) {
        for (let j = k + 1; j < bs; j++) a[ri + j] -= l * a[rk + j];
      }
    }
  }
  return -1;
}

/**
 * x ← A⁻¹ x in place, from luFactor output. Each substitution row is a dot product; rows are
 * taken two at a time (forward: i, i+1; backward: i, i−1) so each load of x serves both rows,
 * with two partial sums per row, which gives four independent multiply-add chains instead of one
 * (1.1–1.2× luSolveNaive on the 1728 diagonal-block factors of the bs = 30 matrix of
 * bench/iteration.bench.ts; a 4-rows-per-pass variant was no faster). The second row's term in
 * the first row's unknown is applied once that unknown is known. Same result as luSolveNaive up
 * to summation order.
 */
export function luSolve(
  lu: Float64Array, lo: number, piv: Int32Array, po: number, bs: number, x: Float64Array, xo: number,
): void {
  const w = bs >= 4 ? wasmFor(lu, piv, x) : null;
  if (w !== null) { w.luSolve(ptr(lu, lo), ptr(piv, po), bs, ptr(x, xo)); return; }
  for (let k = 0; k < bs; k++) {
    const p = piv[po + k];
    if (p !== k) { const t = x[xo + k]; x[xo + k] = x[xo + p]; x[xo + p] = t; }
  }
  // forward, rows i and i+1 together: they share the loads of x[0..i)
  let i = 1;
  for (; i + 1 < bs; i += 2) {
    const r0 = lo + i * bs, r1 = r0 + bs;
    let a0 = x[xo + i], a1 = 0, b0 = x[xo + i + 1], b1 = 0;
    let j = 0;
    for (; j + 1 < i; j += 2) {
      const x0 = x[xo + j], x1 = x[xo + j + 1];
      a0 -= lu[r0 + j] * x0; a1 -= lu[r0 + j + 1] * x1;
      b0 -= lu[r1 + j] * x0; b1 -= lu[r1 + j + 1] * x1;
    }
    if (j < i) { const x0 = x[xo + j]; a0 -= lu[r0 + j] * x0; b0 -= lu[r1 + j] * x0; }
    const xi = a0 + a1;
    x[xo + i] = xi;
    x[xo + i + 1] = (b0 + b1) - lu[r1 + i] * xi;
  }
  if (i < bs) {
    const r0 = lo + i * bs;
    let s0 = x[xo + i], s1 = 0;
    let j = 0;
    for (; j + 1 < i; j += 2) { s0 -= lu[r0 + j] * x[xo + j]; s1 -= lu[r0 + j + 1] * x[xo + j + 1]; }
    if (j < i) s0 -= lu[r0 + j] * x[xo + j];
    x[xo + i] = s0 + s1;
  }
  // backward, rows i and i−1 together: they share the loads of x(i..bs)
  i = bs - 1;
  for (; i >= 1; i -= 2) {
    const r0 = lo + i * bs, r1 = r0 - bs;
    let a0 = x[xo + i], a1 = 0, b0 = x[xo + i - 1], b1 = 0;
    let j = i + 1;
    for (; j + 1 < bs; j += 2) {
      const x0 = x[xo + j], x1 = x[xo + j + 1];
      a0 -= lu[r0 + j] * x0; a1 -= lu[r0 + j + 1] * x1;
      b0 -= lu[r1 + j] * x0; b1 -= lu[r1 + j + 1] * x1;
    }
    if (j < bs) { const x0 = x[xo + j]; a0 -= lu[r0 + j] * x0; b0 -= lu[r1 + j] * x0; }
    const xi = (a0 + a1) / lu[r0 + i];
    x[xo + i] = xi;
    x[xo + i - 1] = ((b0 + b1) - lu[r1 + i] * xi) / lu[r1 + i - 1];
  }
  if (i === 0) {
    let s0 = x[xo], s1 = 0;
    let j = 1;
    for (; j + 1 < bs; j += 2) { s0 -= lu[lo + j] * x[xo + j]; s1 -= lu[lo + j + 1] * x[xo + j + 1]; }
    if (j < bs) s0 -= lu[lo + j] * x[xo + j];
    x[xo] = (s0 + s1) / lu[lo];
  }
}

/**
 * out ← A⁻¹ (row-major) from luFactor output. Works on whole rows (contiguous inner loops):
 * out = P·I, then L·Y = out and U·X = Y by row operations, four source rows per pass over the
 * target row. About 4/3·bs³ flops.
 */
export function luInverse(
  lu: Float64Array, lo: number, piv: Int32Array, po: number, bs: number, out: Float64Array, oo: number,
): void {
  const w = wasmFor(lu, piv, out);
  if (w !== null) { w.luInverse(ptr(lu, lo), ptr(piv, po), bs, ptr(out, oo)); return; }
  const bb = bs * bs;
  for (let p = 0; p < bb; p++) out[oo + p] = 0;
  for (let i = 0; i < bs; i++) out[oo + i * bs + i] = 1;
  for (let k = 0; k < bs; k++) {
    const p = piv[po + k];
    if (p !== k) {
      const rk = oo + k * bs, rp = oo + p * bs;
      for (let j = 0; j < bs; j++) { const t = out[rk + j]; out[rk + j] = out[rp + j]; out[rp + j] = t; }
    }
  }
  // forward: row_i −= Σ_{k<i} L_ik row_k
  for (let i = 1; i < bs; i++) {
    const ri = oo + i * bs, li = lo + i * bs;
    let k = 0;
    for (; k + 3 < i; k += 4) {
      const l0 = lu[li + k], l1 = lu[li + k + 1], l2 = lu[li + k + 2], l3 = lu[li + k + 3];
      const r0 = oo + k * bs, r1 = r0 + bs, r2 = r1 + bs, r3 = r2 + bs;
      for (let j = 0; j < bs; j++) out[ri + j] -= l0 * out[r0 + j] + l1 * out[r1 + j] + l2 * out[r2 + j] + l3 * out[r3 + j];
    }
    for (; k < i; k++) {
      const l = lu[li + k];
      if (l === 0) continue;
      const rk = oo + k * bs;
      for (let j = 0; j < bs; j++) out[ri + j] -= l * out[rk + j];
    }
  }
  // backward: row_i = (row_i − Σ_{k>i} U_ik row_k) / U_ii
  for (let i = bs - 1; i >= 0; i--) {
    const ri = oo + i * bs, ui = lo + i * bs;
    let k = i + 1;
    for (; k + 3 < bs; k += 4) {
      const u0 = lu[ui + k], u1 = lu[ui + k + 1], u2 = lu[ui + k + 2], u3 = lu[ui + k + 3];
      const r0 = oo + k * bs, r1 = r0 + bs, r2 = r1 + bs, r3 = r2 + bs;
      for (let j = 0; j < bs; j++) out[ri + j] -= u0 * out[r0 + j] + u1 * out[r1 + j] + u2 * out[r2 + j] + u3 * out[r3 + j];
    }
    for (; k < bs; k++) {
      const u = lu[ui + k];
      if (u === 0) continue;
      const rk = oo + k * bs;
      for (let j = 0; j < bs; j++) out[ri + j] -= u * out[rk + j];
    }
    const d = 1 / lu[ui + i];
    for (let j = 0; j < bs; j++) out[ri + j] *= d;
  }
}

/**
 * y[yo..] ← A x[xo..]. Fast paths for bs ≤ 3; bs 6–33 divisible by 3 goes three rows per pass
 * (blockMatVecRows3; the range where that kernel shape beat the two-row one, see mulAddTiled3 in
 * src/sparse/bsr.ts for the measurements); otherwise two rows per pass, so each
 * x entry loaded serves two rows (about 1.6–1.9× the one-row loop on streamed blocks,
 * bench/precond.bench.ts). x and y may be the same array when the ranges do not overlap.
 */
export function blockMatVec(
  a: Float64Array, ao: number, bs: number, x: Float64Array, xo: number, y: Float64Array, yo: number,
): void {
  const w = bs >= 4 ? wasmFor(a, x, y) : null;
  if (w !== null) { w.blockMatVec(ptr(a, ao), bs, ptr(x, xo), ptr(y, yo)); return; }
  if (bs === 1) { y[yo] = a[ao] * x[xo]; return; }
  if (bs === 2) {
    const x0 = x[xo], x1 = x[xo + 1];
    y[yo] = a[ao] * x0 + a[ao + 1] * x1;
    y[yo + 1] = a[ao + 2] * x0 + a[ao + 3] * x1;
    return;
  }
  if (bs === 3) {
    const x0 = x[xo], x1 = x[xo + 1], x2 = x[xo + 2];
    y[yo] = a[ao] * x0 + a[ao + 1] * x1 + a[ao + 2] * x2;
    y[yo + 1] = a[ao + 3] * x0 + a[ao + 4] * x1 + a[ao + 5] * x2;
    y[yo + 2] = a[ao + 6] * x0 + a[ao + 7] * x1 + a[ao + 8] * x2;
    return;
  }
  if (bs % 3 === 0 && bs <= 33) { blockMatVecRows3(a, ao, bs, x, xo, y, yo, false); return; }
  let i = 0;
  for (; i + 1 < bs; i += 2) {
    const r0 = ao + i * bs, r1 = r0 + bs;
    let s0 = 0, s1 = 0, t0 = 0, t1 = 0;
    let j = 0;
    for (; j + 1 < bs; j += 2) {
      const x0 = x[xo + j], x1 = x[xo + j + 1];
      s0 += a[r0 + j] * x0; t0 += a[r0 + j + 1] * x1;
      s1 += a[r1 + j] * x0; t1 += a[r1 + j + 1] * x1;
    }
    if (j < bs) { const x0 = x[xo + j]; s0 += a[r0 + j] * x0; s1 += a[r1 + j] * x0; }
    y[yo + i] = s0 + t0;
    y[yo + i + 1] = s1 + t1;
  }
  if (i < bs) {
    const r0 = ao + i * bs;
    let s = 0;
    for (let j = 0; j < bs; j++) s += a[r0 + j] * x[xo + j];
    y[yo + i] = s;
  }
}

/**
 * y[yo..] = A x[xo..] (subtract false) or y[yo..] −= A x[xo..] (subtract true) for bs divisible by
 * 3 (6 ≤ bs ≤ 33): three rows per pass, two partial sums each (see blockMatVec). The branch sits
 * outside the inner loop, once per row triple.
 */
function blockMatVecRows3(
  a: Float64Array, ao: number, bs: number, x: Float64Array, xo: number, y: Float64Array, yo: number,
  subtract: boolean,
): void {
  let r0 = ao;
  for (let i = 0; i < bs; i += 3) {
    const r1 = r0 + bs, r2 = r1 + bs;
    let s0 = 0, s1 = 0, s2 = 0, t0 = 0, t1 = 0, t2 = 0;
    let j = 0;
    for (; j + 1 < bs; j += 2) {
      const xa = x[xo + j], xb = x[xo + j + 1];
      s0 += a[r0 + j] * xa; t0 += a[r0 + j + 1] * xb;
      s1 += a[r1 + j] * xa; t1 += a[r1 + j + 1] * xb;
      s2 += a[r2 + j] * xa; t2 += a[r2 + j + 1] * xb;
    }
    if (j < bs) { const xa = x[xo + j]; s0 += a[r0 + j] * xa; s1 += a[r1 + j] * xa; s2 += a[r2 + j] * xa; }
    if (subtract) {
      y[yo + i] -= s0 + t0; y[yo + i + 1] -= s1 + t1; y[yo + i + 2] -= s2 + t2;
    } else {
      y[yo + i] = s0 + t0; y[yo + i + 1] = s1 + t1; y[yo + i + 2] = s2 + t2;
    }
    r0 += 3 * bs;
  }
}

/** y[yo..] −= A x[xo..]. Same fast paths as blockMatVec. */
export function blockMatVecSub(
  a: Float64Array, ao: number, bs: number, x: Float64Array, xo: number, y: Float64Array, yo: number,
): void {
  const w = bs >= 4 ? wasmFor(a, x, y) : null;
  if (w !== null) { w.blockMatVecSub(ptr(a, ao), bs, ptr(x, xo), ptr(y, yo)); return; }
  if (bs === 1) { y[yo] -= a[ao] * x[xo]; return; }
  if (bs === 2) {
    const x0 = x[xo], x1 = x[xo + 1];
    y[yo] -= a[ao] * x0 + a[ao + 1] * x1;
    y[yo + 1] -= a[ao + 2] * x0 + a[ao + 3] * x1;
    return;
  }
  if (bs === 3) {
    const x0 = x[xo], x1 = x[xo + 1], x2 = x[xo + 2];
    y[yo] -= a[ao] * x0 + a[ao + 1] * x1 + a[ao + 2] * x2;
    y[yo + 1] -= a[ao + 3] * x0 + a[ao + 4] * x1 + a[ao + 5] * x2;
    y[yo + 2] -= a[ao + 6] * x0 + a[ao + 7] * x1 + a[ao + 8] * x2;
    return;
  }
  if (bs % 3 === 0 && bs <= 33) { blockMatVecRows3(a, ao, bs, x, xo, y, yo, true); return; }
  let i = 0;
  for (; i + 1 < bs; i += 2) {
    const r0 = ao + i * bs, r1 = r0 + bs;
    let s0 = 0, s1 = 0, t0 = 0, t1 = 0;
    let j = 0;
    for (; j + 1 < bs; j += 2) {
      const x0 = x[xo + j], x1 = x[xo + j + 1];
      s0 += a[r0 + j] * x0; t0 += a[r0 + j + 1] * x1;
      s1 += a[r1 + j] * x0; t1 += a[r1 + j + 1] * x1;
    }
    if (j < bs) { const x0 = x[xo + j]; s0 += a[r0 + j] * x0; s1 += a[r1 + j] * x0; }
    y[yo + i] -= s0 + t0;
    y[yo + i + 1] -= s1 + t1;
  }
  if (i < bs) {
    const r0 = ao + i * bs;
    let s = 0;
    for (let j = 0; j < bs; j++) s += a[r0 + j] * x[xo + j];
    y[yo + i] -= s;
  }
}

/**
 * C −= A·B (all bs×bs row-major). i-k-j order so the inner loop streams rows of B and C;
 * k unrolled by 4 so each pass over a row of C does 4 multiply-adds per load/store of C.
 * C must not overlap A or B.
 */
export function blockGemmSub(
  c: Float64Array, co: number, a: Float64Array, ao: number, b: Float64Array, bo: number, bs: number,
): void {
  if (bs === 1) { c[co] -= a[ao] * b[bo]; return; }
  const w = wasmFor(c, a, b);
  if (w !== null) { w.blockGemmSub(ptr(c, co), ptr(a, ao), ptr(b, bo), bs); return; }
  const k4 = bs & ~3;
  for (let i = 0; i < bs; i++) {
    const ci = co + i * bs;
    const ai = ao + i * bs;
    let k = 0;
    for (; k < k4; k += 4) {
      const a0 = a[ai + k], a1 = a[ai + k + 1], a2 = a[ai + k + 2], a3 = a[ai + k + 3];
      const b0 = bo + k * bs, b1 = b0 + bs, b2 = b1 + bs, b3 = b2 + bs;
      for (let j = 0; j < bs; j++) {
        c[ci + j] -= a0 * b[b0 + j] + a1 * b[b1 + j] + a2 * b[b2 + j] + a3 * b[b3 + j];
      }
    }
    for (; k < bs; k++) {
      const aik = a[ai + k];
      const bk = bo + k * bs;
      for (let j = 0; j < bs; j++) c[ci + j] -= aik * b[bk + j];
    }
  }
}

/** C ← A·B (all bs×bs row-major; C must not overlap A or B). */
export function blockGemm(
  c: Float64Array, co: number, a: Float64Array, ao: number, b: Float64Array, bo: number, bs: number,
): void {
  const w = wasmFor(c, a, b);
  if (w !== null) { w.blockGemm(ptr(c, co), ptr(a, ao), ptr(b, bo), bs); return; }
  const bb = bs * bs;
  for (let p = 0; p < bb; p++) c[co + p] = 0;
  // C = 0 − (−A)·B would need a negated copy; instead accumulate with the sign flipped.
  const k4 = bs & ~3;
  for (let i = 0; i < bs; i++) {
    const ci = co + i * bs;
    const ai = ao + i * bs;
    let k = 0;
    for (; k < k4; k += 4) {
      const a0 = a[ai + k], a1 = a[ai + k + 1], a2 = a[ai + k + 2], a3 = a[ai + k + 3];
      const b0 = bo + k * bs, b1 = b0 + bs, b2 = b1 + bs, b3 = b2 + bs;
      for (let j = 0; j < bs; j++) {
        c[ci + j] += a0 * b[b0 + j] + a1 * b[b1 + j] + a2 * b[b2 + j] + a3 * b[b3 + j];
      }
    }
    for (; k < bs; k++) {
      const aik = a[ai + k];
      const bk = bo + k * bs;
      for (let j = 0; j < bs; j++) c[ci + j] += aik * b[bk + j];
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Naive twins (reference implementations for the fast-vs-slow tests; never used in hot paths).

/** x ← A⁻¹ x from luFactor output, one accumulator per row (the twin of luSolve). */
export function luSolveNaive(
  lu: Float64Array, lo: number, piv: Int32Array, po: number, bs: number, x: Float64Array, xo: number,
): void {
  for (let k = 0; k < bs; k++) {
    const p = piv[po + k];
    if (p !== k) { const t = x[xo + k]; x[xo + k] = x[xo + p]; x[xo + p] = t; }
  }
  for (let i = 1; i < bs; i++) {
    const ri = lo + i * bs;
    let s = x[xo + i];
    for (let j = 0; j < i; j++) s -= lu[ri + j] * x[xo + j];
    x[xo + i] = s;
  }
  for (let i = bs - 1; i >= 0; i--) {
    const ri = lo + i * bs;
    let s = x[xo + i];
    for (let j = i + 1; j < bs; j++) s -= lu[ri + j] * x[xo + j];
    x[xo + i] = s / lu[ri + i];
  }
}

export function blockMatVecNaive(
  a: Float64Array, ao: number, bs: number, x: Float64Array, xo: number, y: Float64Array, yo: number,
): void {
  for (let i = 0; i < bs; i++) {
    let s = 0;
    for (let j = 0; j < bs; j++) s += a[ao + i * bs + j] * x[xo + j];
    y[yo + i] = s;
  }
}

export function blockMatVecSubNaive(
  a: Float64Array, ao: number, bs: number, x: Float64Array, xo: number, y: Float64Array, yo: number,
): void {
  for (let i = 0; i < bs; i++) {
    let s = 0;
    for (let j = 0; j < bs; j++) s += a[ao + i * bs + j] * x[xo + j];
    y[yo + i] -= s;
  }
}

export function blockGemmSubNaive(
  c: Float64Array, co: number, a: Float64Array, ao: number, b: Float64Array, bo: number, bs: number,
): void {
  for (let i = 0; i < bs; i++) {
    for (let j = 0; j < bs; j++) {
      let s = 0;
      for (let k = 0; k < bs; k++) s += a[ao + i * bs + k] * b[bo + k * bs + j];
      c[co + i * bs + j] -= s;
    }
  }
}

/** Flop counts used by the benchmark (multiply and add counted separately). */
export const denseFlops = {
  lu: (bs: number): number => (2 * bs * bs * bs) / 3,
  inverse: (bs: number): number => 2 * bs * bs * bs, // LU + inverse from factors
  gemm: (bs: number): number => 2 * bs * bs * bs,
  matVec: (bs: number): number => 2 * bs * bs,
};
