// Dense vector kernels: twins of src/solvers/vector.ts. The TypeScript reductions keep four partial
// sums s0..s3 over i ≡ 0..3 (mod 4); here lanes (s0, s1) and (s2, s3) of two f64x2 accumulators hold
// the same sums, built from the same products in the same order, so results are bit-identical.
import { f64At, setF64, pairAt } from './common';

export function dot(n: i32, x: usize, y: usize): f64 {
  let a = f64x2.splat(0), b = f64x2.splat(0);
  let i = 0;
  for (; i + 3 < n; i += 4) {
    a = f64x2.add(a, f64x2.mul(pairAt(x, i), pairAt(y, i)));
    b = f64x2.add(b, f64x2.mul(pairAt(x, i + 2), pairAt(y, i + 2)));
  }
  let s0 = f64x2.extract_lane(a, 0);
  for (; i < n; i++) s0 += f64At(x, i) * f64At(y, i);
  return (s0 + f64x2.extract_lane(a, 1)) + (f64x2.extract_lane(b, 0) + f64x2.extract_lane(b, 1));
}

export function sumSquares(n: i32, x: usize): f64 {
  let a = f64x2.splat(0), b = f64x2.splat(0);
  let i = 0;
  for (; i + 3 < n; i += 4) {
    const p = pairAt(x, i), q = pairAt(x, i + 2);
    a = f64x2.add(a, f64x2.mul(p, p));
    b = f64x2.add(b, f64x2.mul(q, q));
  }
  let s0 = f64x2.extract_lane(a, 0);
  for (; i < n; i++) { const v = f64At(x, i); s0 += v * v; }
  return (s0 + f64x2.extract_lane(a, 1)) + (f64x2.extract_lane(b, 0) + f64x2.extract_lane(b, 1));
}

export function norm2(n: i32, x: usize): f64 { return Math.sqrt(sumSquares(n, x)); }

/** y ← y + a·x */
export function axpy(n: i32, a: f64, x: usize, y: usize): void {
  const av = f64x2.splat(a);
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(y + (<usize>i << 3), f64x2.add(pairAt(y, i), f64x2.mul(av, pairAt(x, i))));
  for (; i < n; i++) setF64(y, i, f64At(y, i) + a * f64At(x, i));
}

/** x ← a·x */
export function scale(n: i32, a: f64, x: usize): void {
  const av = f64x2.splat(a);
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(x + (<usize>i << 3), f64x2.mul(pairAt(x, i), av));
  for (; i < n; i++) setF64(x, i, f64At(x, i) * a);
}

/** y ← y + a·x, then (y, z). */
export function axpyDot(n: i32, a: f64, x: usize, y: usize, z: usize): f64 {
  // eight entries per pass with constant offsets (1.15–1.2× the four-entry loop in cache, a scratch
  // measurement); s still takes the pairs at i ≡ 0 (mod 4) and t those at i ≡ 2, in index order
  const av = f64x2.splat(a);
  let s = f64x2.splat(0), t = f64x2.splat(0);
  let i = 0;
  for (; i + 7 < n; i += 8) {
    const o = <usize>i << 3, py = y + o, px = x + o, pz = z + o;
    const v0 = f64x2.add(v128.load(py), f64x2.mul(av, v128.load(px)));
    const v1 = f64x2.add(v128.load(py, 16), f64x2.mul(av, v128.load(px, 16)));
    const v2 = f64x2.add(v128.load(py, 32), f64x2.mul(av, v128.load(px, 32)));
    const v3 = f64x2.add(v128.load(py, 48), f64x2.mul(av, v128.load(px, 48)));
    v128.store(py, v0); v128.store(py, v1, 16); v128.store(py, v2, 32); v128.store(py, v3, 48);
    s = f64x2.add(s, f64x2.mul(v0, v128.load(pz)));
    t = f64x2.add(t, f64x2.mul(v1, v128.load(pz, 16)));
    s = f64x2.add(s, f64x2.mul(v2, v128.load(pz, 32)));
    t = f64x2.add(t, f64x2.mul(v3, v128.load(pz, 48)));
  }
  for (; i + 3 < n; i += 4) {
    const v = f64x2.add(pairAt(y, i), f64x2.mul(av, pairAt(x, i)));
    const w = f64x2.add(pairAt(y, i + 2), f64x2.mul(av, pairAt(x, i + 2)));
    v128.store(y + (<usize>i << 3), v);
    v128.store(y + (<usize>(i + 2) << 3), w);
    s = f64x2.add(s, f64x2.mul(v, pairAt(z, i)));
    t = f64x2.add(t, f64x2.mul(w, pairAt(z, i + 2)));
  }
  let s0 = f64x2.extract_lane(s, 0);
  for (; i < n; i++) {
    const v = f64At(y, i) + a * f64At(x, i);
    setF64(y, i, v);
    s0 += v * f64At(z, i);
  }
  return (s0 + f64x2.extract_lane(s, 1)) + (f64x2.extract_lane(t, 0) + f64x2.extract_lane(t, 1));
}

/** y ← y + a·x, then ‖y‖₂ (passes as in axpyDot). */
export function axpyNorm2(n: i32, a: f64, x: usize, y: usize): f64 {
  const av = f64x2.splat(a);
  let s = f64x2.splat(0), t = f64x2.splat(0);
  let i = 0;
  for (; i + 7 < n; i += 8) {
    const o = <usize>i << 3, py = y + o, px = x + o;
    const v0 = f64x2.add(v128.load(py), f64x2.mul(av, v128.load(px)));
    const v1 = f64x2.add(v128.load(py, 16), f64x2.mul(av, v128.load(px, 16)));
    const v2 = f64x2.add(v128.load(py, 32), f64x2.mul(av, v128.load(px, 32)));
    const v3 = f64x2.add(v128.load(py, 48), f64x2.mul(av, v128.load(px, 48)));
    v128.store(py, v0); v128.store(py, v1, 16); v128.store(py, v2, 32); v128.store(py, v3, 48);
    s = f64x2.add(s, f64x2.mul(v0, v0));
    t = f64x2.add(t, f64x2.mul(v1, v1));
    s = f64x2.add(s, f64x2.mul(v2, v2));
    t = f64x2.add(t, f64x2.mul(v3, v3));
  }
  for (; i + 3 < n; i += 4) {
    const v = f64x2.add(pairAt(y, i), f64x2.mul(av, pairAt(x, i)));
    const w = f64x2.add(pairAt(y, i + 2), f64x2.mul(av, pairAt(x, i + 2)));
    v128.store(y + (<usize>i << 3), v);
    v128.store(y + (<usize>(i + 2) << 3), w);
    s = f64x2.add(s, f64x2.mul(v, v));
    t = f64x2.add(t, f64x2.mul(w, w));
  }
  let s0 = f64x2.extract_lane(s, 0);
  for (; i < n; i++) {
    const v = f64At(y, i) + a * f64At(x, i);
    setF64(y, i, v);
    s0 += v * v;
  }
  return Math.sqrt((s0 + f64x2.extract_lane(s, 1)) + (f64x2.extract_lane(t, 0) + f64x2.extract_lane(t, 1)));
}

/** r ← b − r (the second half of a residual). */
export function subtractFrom(n: i32, b: usize, r: usize): void {
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(r + (<usize>i << 3), f64x2.sub(pairAt(b, i), pairAt(r, i)));
  for (; i < n; i++) setF64(r, i, f64At(b, i) - f64At(r, i));
}

/** out ← u + a·v (out may be u or v). */
export function waxpy(n: i32, u: usize, a: f64, v: usize, out: usize): void {
  const av = f64x2.splat(a);
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(out + (<usize>i << 3), f64x2.add(pairAt(u, i), f64x2.mul(av, pairAt(v, i))));
  for (; i < n; i++) setF64(out, i, f64At(u, i) + a * f64At(v, i));
}

/** p ← r + β (p − ω v) (the BiCGStab direction update). */
export function bicgDirection(n: i32, r: usize, beta: f64, p: usize, omega: f64, v: usize): void {
  const bv = f64x2.splat(beta), ov = f64x2.splat(omega);
  let i = 0;
  for (; i + 1 < n; i += 2) {
    v128.store(p + (<usize>i << 3), f64x2.add(pairAt(r, i), f64x2.mul(bv, f64x2.sub(pairAt(p, i), f64x2.mul(ov, pairAt(v, i))))));
  }
  for (; i < n; i++) setF64(p, i, f64At(r, i) + beta * (f64At(p, i) - omega * f64At(v, i)));
}

/** z ← d ∘ r (point Jacobi). */
export function hadamard(n: i32, d: usize, r: usize, z: usize): void {
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(z + (<usize>i << 3), f64x2.mul(pairAt(d, i), pairAt(r, i)));
  for (; i < n; i++) setF64(z, i, f64At(d, i) * f64At(r, i));
}

/** a ← b + s·c: the streaming triad of bench/stream.ts. */
export function triad(n: i32, a: usize, b: usize, s: f64, c: usize): void {
  const sv = f64x2.splat(s);
  let i = 0;
  for (; i + 1 < n; i += 2) v128.store(a + (<usize>i << 3), f64x2.add(pairAt(b, i), f64x2.mul(sv, pairAt(c, i))));
  for (; i < n; i++) setF64(a, i, f64At(b, i) + s * f64At(c, i));
}
