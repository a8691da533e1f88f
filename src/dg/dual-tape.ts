/**
 * Allocation-free forward-mode differentiation: the arithmetic of Dual (dual.ts) on slots of one
 * preallocated arena, a slot being an integer handle to a value and its n partial derivatives.
 * Each operation computes exactly what the Dual method of the same name computes, in the same
 * floating-point order, so a function written against either gives bit-identical values and
 * derivatives; the arena is rewound (reset) between evaluations instead of leaving garbage.
 */
export class DualTape {
  private v: Float64Array;
  private d: Float64Array;
  private top = 0;

  constructor(readonly n: number, capacity = 512) {
    this.v = new Float64Array(capacity);
    this.d = new Float64Array(capacity * n);
  }

  /** Forget every slot. */
  reset(): void { this.top = 0; }

  value(a: number): number { return this.v[a]!; }
  /** Partial derivative k of slot a. */
  der(a: number, k: number): number { return this.d[a * this.n + k]!; }

  private alloc(): number {
    if (this.top === this.v.length) {
      const v = new Float64Array(2 * this.v.length); v.set(this.v); this.v = v;
      const d = new Float64Array(2 * this.d.length); d.set(this.d); this.d = d;
    }
    return this.top++;
  }

  constant(x: number): number {
    const r = this.alloc(), n = this.n, d = this.d, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = 0;
    this.v[r] = x;
    return r;
  }

  /** Input k: value x, derivative e_k. */
  variable(x: number, k: number): number {
    const r = this.constant(x);
    this.d[r * this.n + k] = 1;
    return r;
  }

  add(a: number, b: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, bo = b * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! + d[bo + i]!;
    this.v[r] = this.v[a]! + this.v[b]!;
    return r;
  }

  /** a + x (x a plain number). */
  addc(a: number, x: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]!;
    this.v[r] = this.v[a]! + x;
    return r;
  }

  sub(a: number, b: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, bo = b * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! - d[bo + i]!;
    this.v[r] = this.v[a]! - this.v[b]!;
    return r;
  }

  mul(a: number, b: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, bo = b * n, ro = r * n;
    const av = this.v[a]!, bv = this.v[b]!;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! * bv + av * d[bo + i]!;
    this.v[r] = av * bv;
    return r;
  }

  /** a · x (x a plain number). */
  mulc(a: number, x: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! * x;
    this.v[r] = this.v[a]! * x;
    return r;
  }

  div(a: number, b: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, bo = b * n, ro = r * n;
    const bv = this.v[b]!;
    const q = this.v[a]! / bv;
    for (let i = 0; i < n; i++) d[ro + i] = (d[ao + i]! - q * d[bo + i]!) / bv;
    this.v[r] = q;
    return r;
  }

  /** a / x (x a plain number). */
  divc(a: number, x: number): number {
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! / x;
    this.v[r] = this.v[a]! / x;
    return r;
  }

  sqrt(a: number): number {
    const s = Math.sqrt(this.v[a]!);
    const f = 0.5 / s;
    const r = this.alloc(), n = this.n, d = this.d;
    const ao = a * n, ro = r * n;
    for (let i = 0; i < n; i++) d[ro + i] = d[ao + i]! * f;
    this.v[r] = s;
    return r;
  }

  /** |a|; derivative sign(a), +1 at 0 (Dual.abs; slots are never changed, so a itself stands for its copy). */
  abs(a: number): number {
    return this.v[a]! >= 0 ? a : this.mulc(a, -1);
  }

  /** The larger of two; ties take a (Dual.max). */
  max(a: number, b: number): number {
    return this.v[a]! >= this.v[b]! ? a : b;
  }
}
