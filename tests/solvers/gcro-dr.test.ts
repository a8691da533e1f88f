import { describe, it, expect } from 'vitest';
import { gmresDr } from '../../src/solvers/gmres-dr.js';
import { gcroDr, type GcroDrRecycle } from '../../src/solvers/gcro-dr.js';
import { csrOperator } from '../../src/solvers/operator.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import type { KrylovCarry } from '../../src/solvers/options.js';
import { convectionDiffusion, csrMatVec, opts, pointJacobi } from './helpers.js';
import { isMonotone, morganBidiagonal, randomShifted } from './deflated-helpers.js';
import { recipe, systemOfCsr } from '../precond/helpers.js';

const ones = (n: number): Float64Array => new Float64Array(n).fill(1);
const base = opts({ restart: 30, deflate: 10, rtol: 1e-10, maxIterations: 5000 });

describe('gcro-dr: one system', () => {
  for (const seed of [11, 12, 13]) {
    it(`random non-symmetric system (seed ${seed}): solved to rtol, monotone history`, () => {
      const a = randomShifted(seed, 150, 6, 2.2);
      const xStar = Float64Array.from({ length: 150 }, (_, i) => Math.cos(i * seed));
      const b = csrMatVec(a, xStar);
      const x = new Float64Array(150);
      const r = gcroDr(csrOperator(a), b, x, opts({ restart: 10, deflate: 4, rtol: 1e-10 }));
      expect(r.method).toBe('gcro-dr');
      expect(r.cause).toBe('relative-target');
      expect(r.trueRelativeResidual).toBeLessThanOrEqual(1e-10);
      expect(r.history.length).toBe(r.iterations + 1);
      expect(r.restarts).toBeGreaterThan(1);
      expect(isMonotone(r.history)).toBe(true);
      expect(r.residualChecks.length).toBe(r.restarts + 1);
      expect(r.residualMismatch).toBe(false);
      // start + one per iteration + one true residual per cycle; no carry, so no fitted products
      expect(r.work.solve.matvecs).toBe(r.iterations + r.restarts + 2);
      const kr = r.memory.buffers.krylov;
      expect(kr.basis).toBe(11 * 150 * 8);
      for (const key of ['recycledU', 'recycledC', 'newU', 'newC']) expect(kr[key]).toBe(4 * 150 * 8);
    });
  }

  it('with a preconditioner (right) and cgs2: solved', () => {
    const a = convectionDiffusion(12, 0.6, 0.3, 0);
    const r = gcroDr(csrOperator(a), ones(144), new Float64Array(144), opts({ restart: 10, deflate: 3, M: pointJacobi(a), orthogonalization: 'cgs2' }));
    expect(r.cause).toBe('relative-target');
    expect(r.trueRelativeResidual).toBeLessThanOrEqual(1e-10);
  });

  it('deflate 0 is GMRES(m): the same history as gmres-dr with k = 0', () => {
    const a = randomShifted(5, 80, 5, 2);
    const o = opts({ restart: 8, deflate: 0 });
    const c = gcroDr(csrOperator(a), ones(80), new Float64Array(80), o);
    const d = gmresDr(csrOperator(a), ones(80), new Float64Array(80), o);
    expect(c.iterations).toBe(d.iterations);
    for (let i = 0; i < d.history.length; i++) expect(Math.abs(c.history[i] - d.history[i])).toBeLessThanOrEqual(1e-12);
  });
});

describe('gcro-dr: recycling across a sequence (Parks et al. 2006)', () => {
  it('identical systems: the second solve needs clearly fewer iterations than the first', () => {
    // Parks, de Sturler, Mackey, Johnson & Maiti, "Recycling Krylov subspaces for sequences of linear
    // systems", SIAM J. Sci. Comput. 28(5), 2006: the recycled U_k carries the deflation into the next
    // solve. Morgan's bidiagonal matrix (from memory, see deflated-helpers.ts), GCRO-DR(30,10).
    // Measured: 206, then 116 iterations (116 + 10 fitting products + 7 true residuals = 133 matvecs vs 217).
    const n = 1000;
    const a = morganBidiagonal(n);
    const carry: KrylovCarry = {};
    const first = gcroDr(csrOperator(a), ones(n), new Float64Array(n), { ...base, carry });
    const rec = carry.recycle as GcroDrRecycle;
    expect(rec.method).toBe('gcro-dr');
    expect(rec.n).toBe(n);
    expect(rec.k).toBe(10);
    expect(rec.u.length).toBe(10 * n);
    const second = gcroDr(csrOperator(a), ones(n), new Float64Array(n), { ...base, carry });
    expect(first.cause).toBe('relative-target');
    expect(second.cause).toBe('relative-target');
    expect(second.trueRelativeResidual).toBeLessThanOrEqual(1e-10);
    expect(second.iterations).toBeLessThanOrEqual(0.7 * first.iterations);
    // refitting C = A U costs k products, counted
    expect(second.work.solve.matvecs).toBe(second.iterations + second.restarts + 2 + 10);
    expect(second.work.solve.matvecs).toBeLessThan(first.work.solve.matvecs);
  });

  it('slowly varying systems (A + 0.02·s·I, b perturbed): a saving over gmres-dr without carry', () => {
    // invented sequence; Parks et al. 2006 §5 report savings on slowly changing sequences.
    // Measured: gmres-dr 206, 206, 205, 205 iterations; gcro-dr 206, 116, 116, 116.
    const n = 1000;
    const carry: KrylovCarry = {};
    let plain = 0, recycled = 0, plainMv = 0, recycledMv = 0;
    for (let s = 0; s < 4; s++) {
      const a = morganBidiagonal(n, 0.02 * s);
      const b = Float64Array.from(ones(n), (v, i) => v + 0.01 * s * Math.sin(i));
      const d = gmresDr(csrOperator(a), b, new Float64Array(n), base);
      const c = gcroDr(csrOperator(a), b, new Float64Array(n), { ...base, carry });
      expect(c.trueRelativeResidual).toBeLessThanOrEqual(1e-10);
      plain += d.iterations; recycled += c.iterations;
      plainMv += d.work.solve.matvecs; recycledMv += c.work.solve.matvecs;
    }
    expect(recycled).toBeLessThan(0.75 * plain);
    expect(recycledMv).toBeLessThan(0.8 * plainMv);
  });

  it('a carry of another length is ignored (as no carry), and then replaced', () => {
    const a = morganBidiagonal(300);
    const wrong: KrylovCarry = { recycle: { method: 'gcro-dr', n: 200, k: 3, u: new Float64Array(600) } };
    const none = gcroDr(csrOperator(a), ones(300), new Float64Array(300), base);
    const withWrong = gcroDr(csrOperator(a), ones(300), new Float64Array(300), { ...base, carry: wrong });
    expect(withWrong.history).toEqual(none.history);
    expect((wrong.recycle as GcroDrRecycle).n).toBe(300);
  });

  it('through solveSystem on WebAssembly kernels: the carry lives on the JavaScript heap and works', () => {
    const n = 400;
    const sysW = systemOfCsr(morganBidiagonal(n)), sysT = systemOfCsr(morganBidiagonal(n));
    const r = recipe({ krylov: 'gcro-dr', restart: 20, deflate: 6, rtol: 1e-10 });
    const cw: KrylovCarry = {}, ct: KrylovCarry = {};
    const w1 = solveSystem(sysW, ones(n), r, { kernels: 'wasm', carry: cw });
    const t1 = solveSystem(sysT, ones(n), r, { kernels: 'typescript', carry: ct });
    expect(w1.result.kernels).toBe('wasm');
    expect(w1.result.kernelsNote).toBeUndefined();
    expect(w1.result.history).toEqual(t1.result.history);
    const u = (cw.recycle as GcroDrRecycle).u;
    expect(u.buffer).not.toBe(sysW.bsr.values.buffer);
    const w2 = solveSystem(sysW, ones(n), r, { kernels: 'wasm', carry: cw });
    const t2 = solveSystem(sysT, ones(n), r, { kernels: 'typescript', carry: ct });
    expect(w2.result.history).toEqual(t2.result.history);
    expect(w2.result.iterations).toBeLessThan(w1.result.iterations);
  });
});
