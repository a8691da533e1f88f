/**
 * Dense vector kernels used by the solvers. Plain loops on Float64Array; no allocation.
 * Lengths are explicit so that views into a larger basis buffer need no subarray objects.
 */

/** Σ x[i]·y[i] for i < n. */
export function dot(n: number, x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * y[i];
  return s;
}

/** Euclidean norm of x[0..n). NaN or Inf in x gives a non-finite result. */
export function norm2(n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * x[i];
  return Math.sqrt(s);
}

/** y ← y + a·x. */
export function axpy(n: number, a: number, x: Float64Array, y: Float64Array): void {
  for (let i = 0; i < n; i++) y[i] += a * x[i];
}

/** x ← a·x. */
export function scale(n: number, a: number, x: Float64Array): void {
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
  let s = 0;
  for (let i = 0; i < n; i++) {
    const v = y[i] + a * x[i];
    y[i] = v;
    s += v * z[i];
  }
  return s;
}

/** y ← y + a·x, then return ‖y‖₂ of the updated y, in one pass. */
export function axpyNorm2(n: number, a: number, x: Float64Array, y: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const v = y[i] + a * x[i];
    y[i] = v;
    s += v * v;
  }
  return Math.sqrt(s);
}
