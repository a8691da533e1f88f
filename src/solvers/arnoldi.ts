/**
 * Building blocks of the deflated GMRES variants (gmres-dr.ts, gcro-dr.ts): the Gram–Schmidt step,
 * the projection against a recycled space, Givens rotations kept as a list (so the leading block
 * of a deflated restart, which is full rather than Hessenberg, can be reduced too), the triangular
 * solve, and the solution update under right preconditioning. Each adds its work by the model of
 * src/solvers/work.ts exactly as gmres.ts counts the same operations.
 */
import type { Orthogonalization } from './recipe.js';
import type { WorkCounts } from './types.js';
import type { PreconditionerMeter } from './result.js';
import { addWork, kernel, vectorWork } from './work.js';
import { axpy, axpyDot, axpyNorm2, dot, norm2 } from './vector.js';

/**
 * Orthogonalize next against basis[0..count) (count ≥ 1), writing the coefficients to
 * h[off .. off+count) and returning ‖next‖ afterwards (not normalized). The arithmetic is gmres.ts's:
 * modified Gram–Schmidt with each update fused with the next dot product, or classical Gram–Schmidt
 * twice ('cgs2', Giraud, Langou & Rozložník 2005). hTmp holds at least count entries.
 */
export function orthogonalize(
  n: number, basis: readonly Float64Array[], count: number, next: Float64Array, h: Float64Array, off: number,
  ortho: Orthogonalization, hTmp: Float64Array, counts: WorkCounts,
): number {
  const j = count - 1;
  if (ortho === 'mgs') {
    let hij = dot(n, next, basis[0]);
    for (let i = 0; i < j; i++) {
      h[off + i] = hij;
      hij = axpyDot(n, -hij, basis[i], next, basis[i + 1]);
    }
    h[off + j] = hij;
    const norm = axpyNorm2(n, -hij, basis[j], next);
    addWork(counts, vectorWork.dot(n));
    addWork(counts, vectorWork.axpyDot(n), j);
    addWork(counts, vectorWork.axpyNorm2(n));
    return norm;
  }
  cgs2(n, basis, count, next, h, off, hTmp, counts);
  addWork(counts, vectorWork.norm2(n));
  return norm2(n, next);
}

/** Subtract from next its components along the orthonormal basis[0..count), coefficients to h[off..). No norm. */
export function project(
  n: number, basis: readonly Float64Array[], count: number, next: Float64Array, h: Float64Array, off: number,
  ortho: Orthogonalization, hTmp: Float64Array, counts: WorkCounts,
): void {
  if (count === 0) return;
  if (ortho === 'mgs') {
    let hij = dot(n, next, basis[0]);
    for (let i = 0; i < count - 1; i++) {
      h[off + i] = hij;
      hij = axpyDot(n, -hij, basis[i], next, basis[i + 1]);
    }
    h[off + count - 1] = hij;
    axpy(n, -hij, basis[count - 1], next);
    addWork(counts, vectorWork.dot(n));
    addWork(counts, vectorWork.axpyDot(n), count - 1);
    addWork(counts, vectorWork.axpy(n));
    return;
  }
  cgs2(n, basis, count, next, h, off, hTmp, counts);
}

function cgs2(
  n: number, basis: readonly Float64Array[], count: number, next: Float64Array, h: Float64Array, off: number,
  hTmp: Float64Array, counts: WorkCounts,
): void {
  for (let i = 0; i < count; i++) h[off + i] = 0;
  for (let pass = 0; pass < 2; pass++) {
    for (let i = 0; i < count; i++) hTmp[i] = dot(n, next, basis[i]);
    for (let i = 0; i < count; i++) { axpy(n, -hTmp[i], basis[i], next); h[off + i] += hTmp[i]; }
  }
  addWork(counts, vectorWork.dot(n), 2 * count);
  addWork(counts, vectorWork.axpy(n), 2 * count);
  addWork(counts, kernel(2 * count, 0)); // h += hTmp
}

/** Givens rotations in the order made; rotation t acts on rows (row[t], row[t] + 1). */
export interface Rotations { row: Int32Array; c: Float64Array; s: Float64Array; count: number }

export function rotations(capacity: number): Rotations {
  return { row: new Int32Array(capacity), c: new Float64Array(capacity), s: new Float64Array(capacity), count: 0 };
}

export function rotationBytes(r: Rotations): number {
  return r.row.byteLength + r.c.byteLength + r.s.byteLength;
}

/** Apply every rotation so far to column col (entries at off + row). 6 flops each (counted by the caller). */
export function applyRotations(rot: Rotations, col: Float64Array, off: number): void {
  for (let t = 0; t < rot.count; t++) {
    const i = off + rot.row[t];
    const a = col[i], b = col[i + 1];
    col[i] = rot.c[t] * a + rot.s[t] * b;
    col[i + 1] = -rot.s[t] * a + rot.c[t] * b;
  }
}

/**
 * A new rotation on rows (i, i+1) of column col that zeroes entry i+1, applied to the right-hand
 * side g as well; returns the new diagonal value (hypot). gmres.ts's formulas.
 */
export function newRotation(rot: Rotations, col: Float64Array, off: number, i: number, g: Float64Array): number {
  const a = col[off + i], b = col[off + i + 1];
  const d = Math.hypot(a, b);
  const t = rot.count++;
  rot.row[t] = i;
  if (d === 0) { rot.c[t] = 1; rot.s[t] = 0; } else { rot.c[t] = a / d; rot.s[t] = b / d; }
  col[off + i] = d;
  col[off + i + 1] = 0;
  const gi = g[i], gn = g[i + 1];
  g[i] = rot.c[t] * gi + rot.s[t] * gn;
  g[i + 1] = -rot.s[t] * gi + rot.c[t] * gn;
  return d;
}

/**
 * One Arnoldi column j (entries at off, rows up to j + 1) brought to triangular form the way
 * gmres.ts does, with the same flop count: 6 per earlier rotation, then hypot (3), cs and sn
 * (2 unless d = 0), and the update of g, whose entry j + 1 is 0 (2).
 */
export function rotateHessenbergColumn(rot: Rotations, col: Float64Array, off: number, j: number, g: Float64Array, counts: WorkCounts): number {
  const earlier = rot.count;
  applyRotations(rot, col, off);
  const d = newRotation(rot, col, off, j, g);
  addWork(counts, kernel(6 * earlier + 3 + (d === 0 ? 0 : 2) + 2, 0));
  return d;
}

/**
 * y ← R⁻¹ g for the upper triangular k×k R stored column by column with leading dimension ld.
 * Returns the index of a zero diagonal entry, or −1; adds gmres.ts's back-substitution flops.
 */
export function backSolve(R: Float64Array, ld: number, k: number, g: Float64Array, y: Float64Array, counts: WorkCounts): number {
  let singularAt = -1;
  for (let i = k - 1; i >= 0; i--) {
    let s = g[i];
    for (let l = i + 1; l < k; l++) s -= R[l * ld + i] * y[l];
    const rii = R[i * ld + i];
    if (!(Math.abs(rii) > 0)) { singularAt = i; break; }
    y[i] = s / rii;
  }
  addWork(counts, kernel(singularAt >= 0 ? (k - singularAt) * (k - singularAt) - 1 : k * k, 0));
  return singularAt;
}

/**
 * x ← x + M⁻¹ Σ_l coef[l]·vecs[l] (right preconditioning: one application per update), or
 * x ← x + Σ coef[l]·vecs[l] without M. w and z are work vectors (z only with M).
 */
export function addCorrection(
  n: number, x: Float64Array, vecs: readonly Float64Array[], coef: ArrayLike<number>, count: number,
  meter: PreconditionerMeter, hasM: boolean, w: Float64Array, z: Float64Array | undefined, counts: WorkCounts,
): void {
  if (hasM) {
    w.fill(0);
    for (let l = 0; l < count; l++) axpy(n, coef[l], vecs[l], w);
    meter.apply(w, z!);
    axpy(n, 1, z!, x);
    addWork(counts, vectorWork.fill(n));
    addWork(counts, vectorWork.axpy(n), count + 1);
  } else {
    for (let l = 0; l < count; l++) axpy(n, coef[l], vecs[l], x);
    addWork(counts, vectorWork.axpy(n), count);
  }
}

/** out ← Σ_l coef[l]·vecs[l]: a fill and count axpys. */
export function combine(n: number, vecs: readonly Float64Array[], coef: ArrayLike<number>, coefOff: number, count: number, out: Float64Array, counts: WorkCounts): void {
  out.fill(0);
  for (let l = 0; l < count; l++) axpy(n, coef[coefOff + l], vecs[l], out);
  addWork(counts, vectorWork.fill(n));
  addWork(counts, vectorWork.axpy(n), count);
}

/**
 * Thin QR of a small dense rows×cols matrix a (column by column, leading dimension rows) by
 * modified Gram–Schmidt with one reorthogonalization, in place: a becomes Q, r (cols×cols, column
 * by column) receives R. Returns false when a column is (numerically) dependent on the earlier ones.
 * Small dense work of size m: not counted (README, work model).
 */
export function smallQr(a: Float64Array, rows: number, cols: number, r: Float64Array): boolean {
  r.fill(0);
  for (let j = 0; j < cols; j++) {
    const cj = j * rows;
    let before = 0;
    for (let i = 0; i < rows; i++) before += a[cj + i] * a[cj + i];
    for (let pass = 0; pass < 2; pass++) {
      for (let l = 0; l < j; l++) {
        let d = 0;
        for (let i = 0; i < rows; i++) d += a[l * rows + i] * a[cj + i];
        for (let i = 0; i < rows; i++) a[cj + i] -= d * a[l * rows + i];
        r[j * cols + l] += d;
      }
    }
    let s = 0;
    for (let i = 0; i < rows; i++) s += a[cj + i] * a[cj + i];
    const nrm = Math.sqrt(s);
    if (!(nrm > 1e-12 * Math.sqrt(before))) return false;
    r[j * cols + j] = nrm;
    for (let i = 0; i < rows; i++) a[cj + i] /= nrm;
  }
  return true;
}
