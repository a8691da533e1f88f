/**
 * Forward-mode automatic differentiation with a fixed number of directions: a value and its
 * partial derivatives with respect to N inputs (dual numbers; common practice). Used where an
 * exact Jacobian of a nonlinear numerical flux is needed and a hand-derived one would be long and
 * error-prone (the Roe flux with its entropy fix). Non-smooth functions (|x|, max) differentiate
 * the active branch, as the rest of the generator does for Burgers' local Lax–Friedrichs flux.
 */
export class Dual {
  constructor(public v: number, public readonly d: Float64Array) {}

  static constant(v: number, n: number): Dual {
    return new Dual(v, new Float64Array(n));
  }

  /** Input k of n: value v, derivative e_k. */
  static variable(v: number, k: number, n: number): Dual {
    const d = new Float64Array(n);
    d[k] = 1;
    return new Dual(v, d);
  }

  add(b: Dual | number): Dual {
    if (typeof b === 'number') return new Dual(this.v + b, this.d.slice());
    const d = new Float64Array(this.d.length);
    for (let i = 0; i < d.length; i++) d[i] = this.d[i]! + b.d[i]!;
    return new Dual(this.v + b.v, d);
  }

  sub(b: Dual | number): Dual {
    if (typeof b === 'number') return new Dual(this.v - b, this.d.slice());
    const d = new Float64Array(this.d.length);
    for (let i = 0; i < d.length; i++) d[i] = this.d[i]! - b.d[i]!;
    return new Dual(this.v - b.v, d);
  }

  mul(b: Dual | number): Dual {
    const d = new Float64Array(this.d.length);
    if (typeof b === 'number') {
      for (let i = 0; i < d.length; i++) d[i] = this.d[i]! * b;
      return new Dual(this.v * b, d);
    }
    for (let i = 0; i < d.length; i++) d[i] = this.d[i]! * b.v + this.v * b.d[i]!;
    return new Dual(this.v * b.v, d);
  }

  div(b: Dual | number): Dual {
    const d = new Float64Array(this.d.length);
    if (typeof b === 'number') {
      for (let i = 0; i < d.length; i++) d[i] = this.d[i]! / b;
      return new Dual(this.v / b, d);
    }
    const q = this.v / b.v;
    for (let i = 0; i < d.length; i++) d[i] = (this.d[i]! - q * b.d[i]!) / b.v;
    return new Dual(q, d);
  }

  neg(): Dual {
    return this.mul(-1);
  }

  sqrt(): Dual {
    const s = Math.sqrt(this.v);
    return this.scaleDerivative(s, 0.5 / s);
  }

  /** |x|; derivative sign(x), taken as +1 at 0. */
  abs(): Dual {
    return this.v >= 0 ? new Dual(this.v, this.d.slice()) : this.neg();
  }

  /** The larger of two; ties take this one's derivative. */
  max(b: Dual): Dual {
    return this.v >= b.v ? this : b;
  }

  private scaleDerivative(v: number, f: number): Dual {
    const d = new Float64Array(this.d.length);
    for (let i = 0; i < d.length; i++) d[i] = this.d[i]! * f;
    return new Dual(v, d);
  }
}
