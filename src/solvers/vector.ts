/**
 * Dense vector kernels used by the solvers. Plain loops on Float64Array; no allocation.
 * Lengths are explicit so that views into a larger basis buffer need no subarray objects.
 * Reductions keep four independent partial sums (unrolled by 4) so consecutive multiply-adds do
 * not wait on one another; the result differs from a single running sum only by summation order.
 * When every array lives in kernel memory (src/kernels-host) the WebAssembly twin runs instead
 * (src/kernels/vector.ts: the same partial sums in SIMD lanes, bit-identical results).
 */
import { ptr, wasmFor } from '../kernels-host/arena.js';

/** Σ x[i]·y[i] for i < n. */
export function dot(n: number, x: Float64Array, y: Float64Array): number {
  const k = wasmFor(x, y);
  if (k !== null) return k.dot(n, ptr(x), ptr(y));
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    s0 += x[i] * y[i];
    s1 += x[i + 1] * y[i + 1];
    s2 += x[i + 2] * y[i + 2];
    s3 += x[i + 3] * y[i + 3];
  }
  for (; i < n; i++) s0 += x[i] * y[i];
  return (s0 + s1) + (s2 + s3);
}

/** Euclidean norm of x[0..n). NaN or Inf in x gives a non-finite result. */
export function norm2(n: number, x: Float64Array): number {
  const k = wasmFor(x);
  if (k !== null) return k.norm2(n, ptr(x));
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const a = x[i], b = x[i + 1], c = x[i + 2], d = x[i + 3];
    s0 += a * a; s1 += b * b; s2 += c * c; s3 += d * d;
  }
  for (; i < n; i++) s0 += x[i] * x[i];
  return Math.sqrt((s0 + s1) + (s2 + s3));
}

/** y ← y + a·x. */
export function axpy(n: number, a: number, x: Float64Array, y: Float64Array): void {
  const k = wasmFor(x, y);
  if (k !== null) { k.axpy(n, a, ptr(x), ptr(y)); return; }
  for (let i = 0; i < n; i++) y[i] += a * x[i];
}

/** x ← a·x. */
export function scale(n: number, a: number, x: Float64Array): void {
  const k = wasmFor(x);
  if (k !== null) { k.scale(n, a, ptr(x)); return; }
  for (let i = 0; i < n; i++) x[i] *= a;
}

/** True when every entry of x[0..n) is zero. */
export function isZero(n: number, x: Float64Array): boolean {
  for (let i = 0; i < n; i++) if (x[i] !== 0) return false;
  return true;
}

/**
 * y ← y + a·x, then return (y, z) with the updated y: one pass instead of two. Fusing the update of
 * one modified Gram–Schmidt step with the next step's dot product keeps the MGS arithmetic exactly.
 */
export function axpyDot(n: number, a: number, x: Float64Array, y: Float64Array, z: Float64Array): number {
  const k = wasmFor(x, y, z);
  if (k !== null) return k.axpyDot(n, a, ptr(x), ptr(y), ptr(z));
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const v0 = y[i] + a * x[i], v1 = y[i + 1] + a * x[i + 1];
    const v2 = y[i + 2] + a * x[i + 2], v3 = y[i + 3] + a * x[i + 3];
    y[i] = v0; y[i + 1] = v1; y[i + 2] = v2; y[i + 3] = v3;
    s0 += v0 * z[i]; s1 += v1 * z[i + 1]; s2 += v2 * z[i + 2]; s3 += v3 * z[i + 3];
  }
  for (; i < n; i++) {
    const v = y[i] + a * x[i];
    y[i] = v;
    s0 += v * z[i];
  }
  return (s0 + s1) + (s2 + s3);
}

/** y ← y + a·x, then return ‖y‖₂ of the updated y, in one pass. */
export function axpyNorm2(n: number, a: number, x: Float64Array, y: Float64Array): number {
  const k = wasmFor(x, y);
  if (k !== null) return k.axpyNorm2(n, a, ptr(x), ptr(y));
  let s0 = 0, s1 = 0, s2 = 0, s3 = 0;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const v0 = y[i] + a * x[i], v1 = y[i + 1] + a * x[i + 1];
    const v2 = y[i + 2] + a * x[i + 2], v3 = y[i + 3] + a * x[i + 3];
    y[i] = v0; y[i + 1] = v1; y[i + 2] = v2; y[i + 3] = v3;
    s0 += v0 * v0; s1 += v1 * v1; s2 += v2 * v2; s3 += v3 * v3;
  }
  for (; i < n; i++) {
    const v = y[i] + a * x[i];
    y[i] = v;
    s0 += v * v;
  }
  return Math.sqrt((s0 + s1) + (s2 + s3));
}

/** r ← b − r (the second half of a residual r = b − A x). */
export function subtractFrom(n: number, b: Float64Array, r: Float64Array): void {
  const k = wasmFor(b, r);
  if (k !== null) { k.subtractFrom(n, ptr(b), ptr(r)); return; }
  for (let i = 0; i < n; i++) r[i] = b[i] - r[i];
}

/** out ← u + a·v (out may be u or v). */
export function waxpy(n: number, u: Float64Array, a: number, v: Float64Array, out: Float64Array): void {
  const k = wasmFor(u, v, out);
  if (k !== null) { k.waxpy(n, ptr(u), a, ptr(v), ptr(out)); return; }
  for (let i = 0; i < n; i++) out[i] = u[i] + a * v[i];
}

/** p ← r + β (p − ω v) (the BiCGStab search-direction update). */
export function bicgDirection(n: number, r: Float64Array, beta: number, p: Float64Array, omega: number, v: Float64Array): void {
  const k = wasmFor(r, p, v);
  if (k !== null) { k.bicgDirection(n, ptr(r), beta, ptr(p), omega, ptr(v)); return; }
  for (let i = 0; i < n; i++) p[i] = r[i] + beta * (p[i] - omega * v[i]);
}
