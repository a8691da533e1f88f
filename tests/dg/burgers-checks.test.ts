/**
 * Burgers physics (src/dg/physics/burgers.ts): the point functions' coordinates, the field named in
 * each error, the summary written into layouts, and the branch of the local Lax–Friedrichs wave
 * speed on a tie (interface and reference-value tiers). The flux values and derivatives away from
 * ties are in burgers-flux-values.test.ts, the residual in burgers-residual.test.ts.
 */
import { describe, it, expect } from 'vitest';
import { PHYSICS } from '../../src/dg/physics/registry.js';
import type { PhysicsContext, ScalarPhysics } from '../../src/dg/physics/types.js';

const def = PHYSICS.get('burgers')!;

function ctx(dim: 1 | 2 | 3): PhysicsContext {
  return { dim, extent: [1, 1, 1].slice(0, dim), periodic: [false, false, false].slice(0, dim), label: (f) => `test.${f}` };
}

function burgers(dim: 1 | 2 | 3, raw: Record<string, unknown> = {}): ScalarPhysics {
  const c = ctx(dim);
  return def.create(def.normalize(raw, c), c) as ScalarPhysics;
}

describe('Burgers point functions read the coordinates of their own dimension (missing axes are 0)', () => {
  // one expression uses every name; the point sits at an offset in a longer array with decoys around it
  const expr = 'x + 10*y + 100*z + 1000*t';
  for (const [dim, X, xo, want, wantAt0] of [
    [1, [9, 9, 0.25, 0.5, 9, 9], 2, 0.25 + 500, 0.25],
    [2, [9, 0.25, 0.5, 0.75, 9, 9], 1, 0.25 + 5 + 750, 5.25],
    [3, [9, 9, 0.25, 0.5, 0.75, 0.125, 9], 2, 0.25 + 5 + 75 + 125, 80.25],
  ] as Array<[1 | 2 | 3, number[], number, number, number]>) {
    it(`${dim}D+t: state, inflow and transport velocity at (x, …, t); initial data at t = 0`, () => {
      const p = burgers(dim, { state: expr, initial: expr, inflow: expr });
      const P = Float64Array.from(X);
      const out = new Float64Array(1);
      p.state!(P, xo, out);
      expect(out[0]).toBeCloseTo(want, 12);
      p.boundaryData(P, xo, out);
      expect(out[0]).toBeCloseTo(want, 12);
      p.initialData(P, xo, out);
      expect(out[0]).toBeCloseTo(wantAt0, 12);
      // the transport velocity u b (b = e_1 by default) fills exactly d entries
      const v = new Float64Array(dim + 1).fill(-7);
      p.transportVelocity(P, xo, v);
      expect(v[0]).toBeCloseTo(want, 12);
      for (let k = 1; k < dim; k++) expect(v[k]).toBe(0);
      expect(v[dim]).toBe(-7);
    });
  }
});

describe('Burgers errors name the field', () => {
  it('an unknown name in an expression is refused by normalize, naming initial, state or inflow', () => {
    for (const field of ['initial', 'state', 'inflow']) {
      expect(() => def.normalize({ [field]: 'w + x' }, ctx(1))).toThrow(new RegExp(`^test\\.${field}: expression 'w \\+ x' uses unknown name 'w'`));
    }
  });

  it('a value that is not real at a point between the checked samples names its field when evaluated', () => {
    // sqrt((x − 0.1)(x − 0.2)) is real at the sample lattice x = 0, 0.25, …, 1 and complex for 0.1 < x < 0.2,
    // so check() accepts it and the error comes from the compiled field at assembly time
    const bad = 'sqrt((x - 0.1)*(x - 0.2))';
    const X = Float64Array.of(0.15, 0.05);
    const out = new Float64Array(1);
    const c = ctx(1);
    for (const field of ['initial', 'state', 'inflow']) {
      const fields = def.normalize({ [field]: bad }, c);
      expect(() => def.check(fields, c, 0.5)).not.toThrow();
    }
    const msg = (field: string): RegExp => new RegExp(`^test\\.${field}: expression '.*' evaluates to a non-real value at`);
    expect(() => burgers(1, { initial: bad, state: 0.5, inflow: 0.5 }).initialData(X, 0, out)).toThrow(msg('initial'));
    expect(() => burgers(1, { state: bad }).state!(X, 0, out)).toThrow(msg('state'));
    expect(() => burgers(1, { state: bad }).transportVelocity(X, 0, out)).toThrow(msg('state'));
    expect(() => burgers(1, { inflow: bad }).boundaryData(X, 0, out)).toThrow(msg('inflow'));
  });
});

describe('Burgers description in layouts', () => {
  it('summary: the flux, the wave speed and how the right-hand side is made', () => {
    const p = burgers(1, { state: '0.5 - x' });
    expect(p.summary).toEqual({ flux: 'local Lax-Friedrichs', maxWaveSpeed: 0.5, rhs: 'minus the residual at the state (Newton step)' });
    expect(p.name).toBe('burgers');
    expect(p.diffusivity).toBe(0);
    expect(p.alignVelocity).toBeNull();
    expect(p.exact).toBeNull();
  });
});

describe('local Lax–Friedrichs on a tie |λ(uL)| = |λ(uR)| with a jump: the left state\'s branch is differentiated', () => {
  it('1D+t, n = (1, 0), uL = 2, uR = −2: H = 6, ∂H/∂uL = 4, ∂H/∂uR = −2 (by hand)', () => {
    // λ = u b·n_x + n_t = u, so λL = 2, λR = −2 and α = 2 is not differentiable here. H = ½(G(uL)·n +
    // G(uR)·n) − ½α(uR − uL) = ½(2 + 2) − ½·2·(−4) = 6 (Rusanov 1961, as in the header of burgers.ts).
    // With dα/duL = sign(λL) = 1 on the left branch: ∂H/∂uL = ½λL + ½α − ½(uR − uL) = 1 + 1 + 2 = 4,
    // ∂H/∂uR = ½λR − ½α = −2. (The right branch would give 2 and −4: a one-sided derivative as
    // well; the left one is the implementation's choice, kept so generated matrices do not change.)
    const p = burgers(1);
    const out = new Float64Array(3);
    p.numericalFlux(new Float64Array(2), 0, 2, -2, Float64Array.of(1, 0), out);
    expect(out[0]).toBe(6);
    expect(out[1]).toBe(4);
    expect(out[2]).toBe(-2);
  });
});
