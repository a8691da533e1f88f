// prepareSolve: one preconditioner setup for several solves. Checked against what it replaces:
// two right-hand sides through one prepared solve equal two solveSystem calls bit for bit (on both
// kernel sets), and a lagged preconditioner (prepared from A1, solving with A2) equals building
// the operator of A2 and applying M(A1) by hand through krylovSolve.
import { describe, expect, it } from 'vitest';
import { prepareSolve, solveSystem } from '../../src/solvers/run-recipe.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { krylovSolve } from '../../src/solvers/krylov.js';
import { bsrOperator, csrOperator } from '../../src/solvers/operator.js';
import { activeArena } from '../../src/kernels-host/arena.js';
import { zeroWork } from '../../src/solvers/work.js';
import { UserError } from '../../src/util/errors.js';
import type { Recipe } from '../../src/solvers/recipe.js';
import type { SystemMatrix } from '../../src/precond/types.js';
import { randomBsr, randomVector, recipe, systemOf } from '../precond/helpers.js';
import { firstDifference } from '../kernels/helpers.js';

const PATTERN: Array<[number, number]> = [];
for (let i = 1; i < 20; i++) { PATTERN.push([i, i - 1]); if (i % 3 === 0) PATTERN.push([i - 3, i]); }

function system(bs: number, seed: number): SystemMatrix {
  return systemOf(randomBsr(20, bs, PATTERN, seed, 1.5 * bs), Int32Array.from([0, 10, 20]));
}

const RECIPES: Array<Partial<Recipe>> = [
  { preconditioner: 'block-ilu0' },
  { preconditioner: 'ilu0' },
  { preconditioner: 'block-gs', sweep: 'symmetric' },
  { preconditioner: 'slab', krylov: 'fgmres' },
  { preconditioner: 'block-jacobi', krylov: 'bicgstab' },
  { preconditioner: 'none' },
];

const label = (o: Partial<Recipe>): string => Object.entries(o).map(([k, v]) => `${k}=${v}`).join(' ');

describe('prepareSolve: two right-hand sides equal two solveSystem calls', () => {
  for (const kernels of ['wasm', 'typescript'] as const) {
    for (const over of RECIPES) {
      it(`${kernels}: ${label(over)}`, () => {
        const r = recipe({ restart: 8, rtol: 1e-10, ...over });
        const n = 20 * 3;
        const b1 = randomVector(n, 11), b2 = randomVector(n, 12);
        const single1 = solveSystem(system(3, 5), b1, r, { kernels });
        const single2 = solveSystem(system(3, 5), b2, r, { kernels });
        const p = prepareSolve(system(3, 5), r, { kernels });
        expect(p.setup.ok).toBe(true);
        const one = p.solve(b1);
        const two = p.solve(b2);
        p.dispose();
        expect(activeArena()).toBeNull();
        for (const [got, want] of [[one, single1], [two, single2]] as const) {
          expect(got.result.kernels).toBe(kernels);
          expect(got.result.cause).toBe(want.result.cause);
          expect(got.result.iterations).toBe(want.result.iterations);
          expect(got.result.history).toEqual(want.result.history);
          expect(got.result.work.solve).toEqual(want.result.work.solve);
          expect(firstDifference(got.x, want.x)).toBeUndefined();
        }
        // the first solve carries the setup, the second did none and says so
        expect(one.result.work.setup).toEqual(single1.result.work.setup);
        expect(one.result.work.setup).toEqual(p.setup.work);
        expect(one.result.timing.setupSeconds).toBe(p.setup.seconds);
        expect(one.result.setupReused).toBeUndefined();
        expect(two.result.work.setup).toEqual(zeroWork());
        expect(two.result.timing.setupSeconds).toBe(0);
        if (r.preconditioner === 'none') {
          expect(two.result.setupReused).toBeUndefined();
        } else {
          expect(two.result.setupReused).toBe(true);
          expect(p.setup.work.flops).toBeGreaterThan(0);
        }
        // the solutions are the caller's own arrays and survive dispose
        expect(firstDifference(one.x, single1.x)).toBeUndefined();
      });
    }
  }

  it('x0 and onIteration pass through; b and x0 are not modified', () => {
    const r = recipe({ preconditioner: 'block-ilu0', rtol: 1e-10 });
    const b = randomVector(60, 3), x0 = randomVector(60, 4);
    const bc = Float64Array.from(b), x0c = Float64Array.from(x0);
    const seen: number[] = [];
    const want = solveSystem(system(3, 6), b, r, { x0 });
    const p = prepareSolve(system(3, 6), r);
    const got = p.solve(b, { x0, onIteration: (it) => { seen.push(it); } });
    p.dispose();
    expect(got.result.history).toEqual(want.result.history);
    expect(firstDifference(got.x, want.x)).toBeUndefined();
    expect(seen.length).toBe(got.result.iterations + 1);
    expect(firstDifference(b, bc)).toBeUndefined();
    expect(firstDifference(x0, x0c)).toBeUndefined();
  });
});

describe('prepareSolve: a lagged preconditioner (opts.matrix)', () => {
  for (const over of [{ preconditioner: 'block-ilu0' }, { preconditioner: 'ilu0' }, { preconditioner: 'slab', krylov: 'fgmres' }] as Array<Partial<Recipe>>) {
    for (const kernels of ['wasm', 'typescript'] as const) {
      it(`${kernels}: ${label(over)}: equals the operator of A2 with M(A1) applied by hand`, () => {
        const r = recipe({ restart: 8, rtol: 1e-10, ...over });
        const b = randomVector(60, 21);
        // by hand, on the TypeScript kernels: M set up on A1, the Krylov method on A2
        const a1 = system(3, 5), a2 = system(3, 6);
        const M = createPreconditioner(a1, r);
        expect(M.setup().ok).toBe(true);
        const point = r.preconditioner === 'ilu0';
        const A2 = point ? csrOperator(a2.csr) : bsrOperator(a2.bsr);
        const xHand = new Float64Array(60);
        const hand = krylovSolve(A2, b, xHand, r, M);

        const p = prepareSolve(system(3, 5), r, { kernels, laggedMatrix: true });
        const own = p.solve(b); // A1 itself first: the lagged solve must not disturb the prepared state
        const lagged = p.solve(b, { matrix: system(3, 6) });
        const again = p.solve(b);
        p.dispose();
        expect(lagged.result.iterations).toBe(hand.iterations);
        expect(lagged.result.history).toEqual(hand.history);
        expect(firstDifference(lagged.x, xHand)).toBeUndefined();
        expect(lagged.result.setupReused).toBe(true);
        expect(lagged.result.kernels).toBe(kernels);
        expect(lagged.result.kernelsNote).toBeUndefined();
        expect(lagged.result.memory.buffers.matrix['values (matrix solved, lagged preconditioner)']).toBe(
          (point ? a2.csr : a2.bsr).values.byteLength);
        expect(again.result.history).toEqual(own.result.history);
        expect(firstDifference(again.x, own.x)).toBeUndefined();
        // A2 differs from A1, so the lagged solve is a different solve
        expect(lagged.result.history).not.toEqual(own.result.history);
      });
    }
  }

  it('without room planned, values that do not fit run the operator on TypeScript kernels and say so (same numbers)', () => {
    // none, restart 1: the kernel memory bound is 18 vectors (1.8 MB) + 1 MiB; these values are 4.9 MB
    const nb = 800, bs = 16;
    const pat: Array<[number, number]> = [];
    for (let i = 1; i < nb; i++) { pat.push([i, i - 1]); if (i > 1) pat.push([i, i - 2]); }
    const a1 = systemOf(randomBsr(nb, bs, pat, 1, 2 * bs)), a2 = systemOf(randomBsr(nb, bs, pat, 2, 2 * bs));
    const r = recipe({ preconditioner: 'none', restart: 1, rtol: 1e-3, maxIterations: 20 });
    const b = randomVector(nb * bs, 3);
    const want = solveSystem(systemOf(randomBsr(nb, bs, pat, 2, 2 * bs)), b, r, { kernels: 'typescript' });
    const p = prepareSolve(a1, r, { kernels: 'wasm' });
    const got = p.solve(b, { matrix: a2 });
    p.dispose();
    expect(got.result.kernelsNote).toMatch(/^the values of the matrix solved \(lagged preconditioner\) did not fit kernel memory/);
    expect(got.result.history).toEqual(want.result.history);
    expect(firstDifference(got.x, want.x)).toBeUndefined();
    // with room planned (laggedMatrix) they fit
    const q = prepareSolve(a1, r, { kernels: 'wasm', laggedMatrix: true });
    const fits = q.solve(b, { matrix: a2 });
    q.dispose();
    expect(fits.result.kernelsNote).toBeUndefined();
    expect(fits.result.history).toEqual(want.result.history);
  });

  it('a different size, block size or pattern is a one-line UserError', () => {
    const r = recipe({ preconditioner: 'block-ilu0' });
    const p = prepareSolve(system(3, 5), r);
    const b = randomVector(60, 1);
    const otherPattern = systemOf(randomBsr(20, 3, [...PATTERN, [7, 2]], 5, 4.5));
    expect(() => p.solve(b, { matrix: system(2, 5) })).toThrow(UserError);
    expect(() => p.solve(b, { matrix: system(2, 5) })).toThrow('lagged preconditioner: the matrix to solve has size 40, the prepared matrix 60 (a reused preconditioner needs the same size and pattern)');
    expect(() => p.solve(b, { matrix: systemOf(randomBsr(30, 2, [], 5, 3)) })).toThrow('lagged preconditioner: the matrix to solve has block size 2, the prepared matrix 3');
    expect(() => p.solve(b, { matrix: otherPattern })).toThrow(/^lagged preconditioner: the matrix to solve: its pattern differs from the prepared matrix's in block row 7 \(number of stored entries\)/);
    expect(() => p.solve(randomVector(59, 1))).toThrow('right-hand side has length 59, expected 60 (the matrix size)');
    expect(activeArena()).toBeNull();
    // the failed calls left the prepared solve intact
    const want = solveSystem(system(3, 5), b, r);
    expect(p.solve(b).result.history).toEqual(want.result.history);
    p.dispose();
  });
});

describe('prepareSolve: kernel memory lifetime', () => {
  it('dispose releases: the arena is free for the next solve of the system, solve() afterwards throws', () => {
    const sys = system(4, 9);
    const r = recipe({ preconditioner: 'block-ilu0' });
    const b = randomVector(80, 2);
    const p = prepareSolve(sys, r, { kernels: 'wasm' });
    const buffer = sys.bsr.values.buffer;
    const first = p.solve(b);
    expect(activeArena()).toBeNull(); // inactive between solves
    p.dispose();
    expect(p.disposed).toBe(true);
    expect(activeArena()).toBeNull();
    expect(() => p.solve(b)).toThrow('prepareSolve: solve() after dispose()');
    // the same arena serves the next solve (it is no longer held), with the same results
    const next = solveSystem(sys, b, r, { kernels: 'wasm' });
    expect(sys.bsr.values.buffer).toBe(buffer);
    expect(next.result.history).toEqual(first.result.history);
    p.dispose(); // twice is harmless
  });

  it('two prepared solves of one system alive at once keep their own factors', () => {
    const sys = system(3, 7);
    const b = randomVector(60, 8);
    const rA = recipe({ preconditioner: 'block-ilu0', rtol: 1e-10 });
    const rB = recipe({ preconditioner: 'block-jacobi', rtol: 1e-10 });
    const wantA = solveSystem(system(3, 7), b, rA, { kernels: 'wasm' });
    const wantB = solveSystem(system(3, 7), b, rB, { kernels: 'wasm' });
    const pA = prepareSolve(sys, rA, { kernels: 'wasm' });
    const pB = prepareSolve(sys, rB, { kernels: 'wasm' }); // pA's arena is held: pB gets its own
    for (let k = 0; k < 2; k++) {
      const a = pA.solve(b), bb = pB.solve(b);
      expect(a.result.history).toEqual(wantA.result.history);
      expect(bb.result.history).toEqual(wantB.result.history);
      expect(firstDifference(a.x, wantA.x)).toBeUndefined();
      expect(firstDifference(bb.x, wantB.x)).toBeUndefined();
    }
    pA.dispose();
    pB.dispose();
    expect(activeArena()).toBeNull();
  });

  it('a failed setup does not throw: setup.ok false, every solve reports it with x = x0', () => {
    // a zero diagonal block: block-jacobi cannot factor it
    const bsr = randomBsr(6, 2, [[1, 0]], 3, 3);
    bsr.values.fill(0, 0, 4);
    const r = recipe({ preconditioner: 'block-jacobi' });
    const p = prepareSolve(systemOf(bsr), r);
    expect(p.setup.ok).toBe(false);
    expect(p.setup.message).toMatch(/block row 0/);
    const b = randomVector(12, 1);
    const one = p.solve(b), two = p.solve(b);
    p.dispose();
    expect(one.result.cause).toBe('preconditioner-error');
    expect(two.result.cause).toBe('preconditioner-error');
    expect(two.result.setupReused).toBe(true);
    expect(one.x.every((v) => v === 0)).toBe(true);
  });
});
