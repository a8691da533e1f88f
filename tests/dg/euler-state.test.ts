/**
 * Euler states given as primitive-variable expressions (src/dg/physics/euler-state.ts): the two
 * written forms agree, a constant expression state reproduces the built-in uniform state bit for
 * bit, the right-hand side is minus the residual at the projection of the same state evaluated
 * independently, boundary data come from the state unless `inflow` is given, and bad input gets one
 * line naming the option, the variable, the point and the element.
 */
import { describe, it, expect } from 'vitest';
import { buildDiscretization, generateSystem, generateWithDiscretization, parseGeneratorParams, resolveGenerator } from '../../src/dg/generate.js';
import { assembleDg } from '../../src/dg/assemble.js';
import { projectFunction } from '../../src/dg/projection.js';
import { toConserved } from '../../src/dg/physics/euler-flux.js';
import { UserError } from '../../src/util/errors.js';

const params = (o: Record<string, unknown>) => parseGeneratorParams({ physics: 'euler', dim: 2, order: 1, cells: 3, slabs: 1, ...o }, 'test');

describe('Euler primitive-expression states', () => {
  it('the assignment string and the object form give the same normalized parameters and matrix', () => {
    const a = params({ state: 'rho = 1 + 0.2*sin(2*pi*x); u = 0.5; v = 0.1*y; p = 1' });
    const b = params({ state: { p: 1, v: '0.1*y', rho: '1 + 0.2*sin(2*pi*x)', u: 0.5 } });
    expect(a.state).toEqual({ rho: '1 + 0.2*sin(2*pi*x)', u: 0.5, v: '0.1*y', p: 1 });
    expect(Object.keys(b.state as object)).toEqual(['rho', 'u', 'v', 'p']);
    expect(Array.from(generateSystem(a).bsr.values)).toEqual(Array.from(generateSystem(b).bsr.values));
    // the normalized parameters (as stored in the layout) rebuild the case
    const again = parseGeneratorParams(JSON.parse(JSON.stringify(a)), 'layout');
    expect(again.state).toEqual(a.state);
  });

  it('a constant expression state is the built-in uniform state, bit for bit', () => {
    const builtin = generateSystem(params({ state: 'uniform', density: 1.3, velocity: [0.4, -0.2], pressure: 0.8, jitter: 0.1 }));
    const expr = generateSystem(params({ state: 'rho = 1.3; u = 0.4; v = -0.2; p = 0.8', jitter: 0.1 }));
    expect(Array.from(expr.bsr.values)).toEqual(Array.from(builtin.bsr.values));
    expect(Array.from(expr.rhs)).toEqual(Array.from(builtin.rhs));
  });

  it('rhs = −R at the projection of the state, evaluated here independently of mathjs', () => {
    const p = params({ state: 'rho = 1 + 0.2*sin(2*pi*x)*cos(pi*y); u = 0.5 + 0.1*t; v = 0.1*y; p = 1 + 0.1*x*y' });
    const { system, disc } = generateWithDiscretization(p);
    const u = new Float64Array(2);
    const U = projectFunction(disc.mesh, 1, 4, disc.ordering.inv, (X, xo, out) => {
      const [x, y, t] = [X[xo]!, X[xo + 1]!, X[xo + 2]!];
      u[0] = 0.5 + 0.1 * t; u[1] = 0.1 * y;
      toConserved(1 + 0.2 * Math.sin(2 * Math.PI * x) * Math.cos(Math.PI * y), u, 1 + 0.1 * x * y, 1.4, out);
    });
    const R = assembleDg(disc, U, { matrix: false }).residual;
    let worst = 0, scale = 0;
    for (let i = 0; i < R.length; i++) { worst = Math.max(worst, Math.abs(system.rhs[i]! + R[i]!)); scale = Math.max(scale, Math.abs(R[i]!)); }
    expect(scale).toBeGreaterThan(1e-3); // not a solution: a real residual
    expect(worst).toBeLessThan(1e-13 * Math.max(1, scale));
    expect(resolveGenerator(p).physics.exact).toBeNull();
    expect(system.layout.provenance?.physicsSummary).toMatchObject({ state: 'expression', boundaryData: 'the state', exactSolution: false });
  });

  it('boundary data come from the state unless inflow is given', () => {
    const state = 'rho = 1 + 0.1*x; u = 0.5; v = 0.2; p = 1';
    const plain = generateSystem(params({ state }));
    const same = generateSystem(params({ state, inflow: state }));
    const other = generateSystem(params({ state, inflow: 'rho = 1.2; u = 0.5; v = 0.2; p = 1' }));
    expect(Array.from(same.rhs)).toEqual(Array.from(plain.rhs));
    let diff = 0;
    for (let i = 0; i < plain.rhs.length; i++) diff = Math.max(diff, Math.abs(other.rhs[i]! - plain.rhs[i]!));
    expect(diff).toBeGreaterThan(1e-3);
    // the Jacobian does not depend on exterior data only through U⁺: it changes too (the flux at the boundary)
    expect(resolveGenerator(params({ state: 'vortex', extent: [10, 10], inflow: 'rho = 1; u = 1; v = 1; p = 1' })).physics.exact).toBeNull();
    expect(resolveGenerator(params({ state: 'vortex', extent: [10, 10] })).physics.exact).not.toBeNull();
  });

  const bad: [Record<string, unknown>, RegExp][] = [
    [{ state: 'rho = 1; u = 0.5; p = 1' }, /^test\.state: missing v \(expected 'rho = …; u = …; v = …; p = …'\)$/],
    [{ state: 'rho = 1; u = 0.5; v = 0; w = 0; p = 1' }, /^test\.state: unknown variable 'w' \(expected rho, u, v, p in 2D\)$/],
    [{ state: 'rho = 1; rho = 2; u = 0.5; v = 0; p = 1' }, /'rho' is given twice/],
    [{ state: 'rho = 1; u = 0.5; v; p = 1' }, /expected 'rho = …; u = …; v = …; p = …' \(one assignment per primitive variable, separated by ';'\), got "v"/],
    [{ state: 'rho = 1; u = q; v = 0; p = 1' }, /^test\.state: u: expression 'q' uses unknown name 'q'/],
    [{ state: 'blast' }, /expected one of uniform, vortex, shock-tube or primitive expressions/],
    [{ state: 'rho = 1; u = 0.5; v = 0; p = 1', density: 2 }, /^test\.density: has no effect with an expression state/],
    [{ state: 'rho = 1 - 2*x; u = 0.5; v = 0; p = 1' }, /^test\.state: density 0 ≤ 0 at \(x, y, t\) = \(0\.5000, 0, 0\) \(state\); density and pressure must be > 0$/],
    [{ state: 'rho = 1; u = 0.5; v = 0; p = 1', inflow: 'rho = 1; u = 0; v = 0; p = y - 0.5' }, /^test\.inflow: pressure -0\.5000 ≤ 0 at \(x, y, t\) = \(0, 0, 0\) \(boundary data\)/],
  ];
  for (const [o, msg] of bad) {
    it(`refuses ${JSON.stringify(o)} with one line`, () => {
      expect(() => params(o)).toThrow(UserError);
      expect(() => params(o)).toThrow(msg);
    });
  }

  it('a state that is positive on the sample lattice but not at a quadrature point names the point and the element', () => {
    // a narrow pressure dip between the lattice points (x = 0.25, 0.5) that goes below zero
    const p = parseGeneratorParams({ physics: 'euler', dim: 1, order: 1, cells: 4, slabs: 1, state: 'rho = 1; u = 0.5; p = 1 - 1.5*exp(-((x-0.37)*30)^2)' }, 'test');
    let message = '';
    try { buildDiscretization(p); generateSystem(p); } catch (e) { message = (e as Error).message; }
    expect(message).toMatch(/state: pressure -?\d\.\d+ ≤ 0 at \(x, t\) = \(0\.3\d+, \d\.\d+\), a quadrature point of element \d+ \(state\); density and pressure must be > 0$/);
    expect(message.split('\n')).toHaveLength(1);
  });
});
