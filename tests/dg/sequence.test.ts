// Generated sequences (src/dg/sequence.ts): Newton steps of Burgers converge quadratically, slab
// marching reproduces the slab-by-slab solution of the whole system, and the files record the sequence.
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { generateSequence, writeGeneratedSequence } from '../../src/dg/sequence.js';
import { solveBySlabs } from '../../src/dg/slab-solve.js';
import { bsrToCsr, bsrSpmv } from '../../src/sparse/bsr.js';
import { readLayout } from '../../src/sparse/layout.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import type { Bsr } from '../../src/sparse/types.js';
import { tempDir } from '../run/helpers.js';

const smoothBurgers = () => parseGeneratorParams({
  physics: 'burgers', dim: 1, order: 2, cells: [16], extent: [1], slabs: 2, cfl: 0.5, periodic: [true],
  initial: '0.6 + 0.2 * sin(2 * pi * x)',
}, 'test');

const advection = () => parseGeneratorParams({
  physics: 'advection', dim: 2, order: 1, cells: [5, 4], slabs: 3, velocity: [1, 0.4], periodic: [false, true],
}, 'test');

const TIGHT: Recipe = { ...DEFAULT_RECIPE, name: 'tight', krylov: 'gmres', preconditioner: 'block-ilu0', rtol: 1e-13, restart: 60, maxIterations: 2000 };
const EXACT: Recipe = { ...DEFAULT_RECIPE, name: 'exact', krylov: 'gmres', preconditioner: 'direct', rtol: 1e-13 };

function system(bsr: Bsr) {
  return { bsr, get csr() { return bsrToCsr(bsr); } };
}

function maxDiff(a: Float64Array, b: Float64Array): number {
  let d = 0, s = 0;
  for (let i = 0; i < a.length; i++) { d = Math.max(d, Math.abs(a[i] - b[i])); s = Math.max(s, Math.abs(b[i])); }
  return d / s;
}

describe('Newton sequence (Burgers)', () => {
  const params = smoothBurgers();
  const seq = generateSequence(params, { kind: 'newton', steps: 4 });
  const r = seq.residualNorms!;

  it('the nonlinear residual drops quadratically over the steps', () => {
    expect(r).toHaveLength(5);
    expect(r[0]).toBeGreaterThan(1e-4); // the projected initial state is not a solution
    // Newton near a solution with a Lipschitz Jacobian: ‖R(u_{k+1})‖ ≤ C ‖R(u_k)‖²
    // (Kelley, Iterative Methods for Linear and Nonlinear Equations, SIAM 1995, Theorem 5.1.2),
    // until rounding (≈ 1e-15 here) takes over.
    let quadratic = 0;
    for (let k = 0; k + 1 < r.length && r[k + 1] > 1e-13; k++) {
      expect(r[k + 1]).toBeLessThan(10 * r[k] * r[k]);
      expect(r[k + 1]).toBeLessThan(r[k] / 20);
      quadratic++;
    }
    expect(quadratic).toBeGreaterThanOrEqual(2);
    expect(r[r.length - 1]).toBeLessThan(1e-12);
  });

  it('each system is the Jacobian at the state after the previous tight update', () => {
    const s = seq.systems;
    expect(s.map((x) => x.layout.sequence.index)).toEqual([1, 2, 3, 4]);
    expect(s.every((x) => x.layout.sequence.count === 4 && x.layout.sequence.kind === 'newton')).toBe(true);
    for (let k = 0; k + 1 < s.length; k++) {
      const next = Float64Array.from(s[k].state!, (v, i) => v + s[k].solution[i]);
      expect(maxDiff(s[k + 1].state!, next)).toBe(0);
      // the update solves system k tightly
      const ax = new Float64Array(next.length);
      bsrSpmv(s[k].bsr, s[k].solution, ax);
      expect(maxDiff(ax, s[k].rhs)).toBeLessThan(1e-10);
      // one pattern for every step
      expect(Array.from(s[k + 1].bsr.colInd)).toEqual(Array.from(s[0].bsr.colInd));
      expect(s[k].layout.sequence.residualNorm).toBe(r[k]);
    }
    // the first step is the single Newton step `generate` writes
    const single = generateSystem(params);
    expect(maxDiff(s[0].bsr.values, single.bsr.values)).toBe(0);
    expect(maxDiff(s[0].rhs, single.rhs)).toBe(0);
  });
});

describe('slab-marching sequence', () => {
  const params = advection();
  const full = generateSystem(params);
  const seq = generateSequence(params, { kind: 'slabs' });
  const joined = new Float64Array(full.rhs.length);
  let at = 0;
  for (const s of seq.systems) { joined.set(s.solution, at); at += s.solution.length; }

  it('has one system per slab, each the slab block with the earlier slab as inflow', () => {
    expect(seq.systems).toHaveLength(3);
    const offsets = full.layout.slabOffsets!;
    seq.systems.forEach((s, k) => {
      expect(s.layout.sequence).toMatchObject({ kind: 'slabs', index: k + 1, count: 3, blockRows: [offsets[k], offsets[k + 1]] });
      expect(s.bsr.nBlockRows).toBe(offsets[k + 1] - offsets[k]);
      expect(Array.from(s.bsr.colInd)).toEqual(Array.from(seq.systems[0].bsr.colInd));
    });
  });

  it('its solutions joined are the slab-by-slab solution of the whole system, and its exact solution', () => {
    expect(at).toBe(full.rhs.length);
    expect(maxDiff(joined, solveBySlabs(full.bsr, full.rhs, full.layout.slabOffsets!).x)).toBeLessThan(1e-12);
    // independent of the slab code: the whole system by GMRES with a sparse direct factorization
    const whole = solveSystem(system(full.bsr), full.rhs, EXACT);
    expect(whole.result.converged).toBe(true);
    expect(maxDiff(joined, whole.x)).toBeLessThan(1e-10);
  });

  it('a recipe solving each stored system tightly gets the same solution', () => {
    let o = 0;
    for (const s of seq.systems) {
      const { result, x } = solveSystem(system(s.bsr), s.rhs, TIGHT);
      expect(result.converged).toBe(true);
      expect(maxDiff(x, joined.subarray(o, o + x.length))).toBeLessThan(1e-10);
      o += x.length;
    }
  });
});

describe('writeGeneratedSequence', () => {
  it('writes every system with its rhs and a layout recording the sequence (and the state for Newton)', async () => {
    const t = tempDir('slabbench-seq-');
    try {
      const out = await writeGeneratedSequence(smoothBurgers(), { kind: 'newton', steps: 2 }, t.dir, 'bore');
      expect(out.systems.map((s) => s.label)).toEqual(['newton 1', 'newton 2']);
      expect(out.systems.map((s) => s.mtx)).toEqual([join(t.dir, 'bore-s01.mtx'), join(t.dir, 'bore-s02.mtx')]);
      const layout = readLayout(out.systems[1].layout);
      expect(layout.sequence).toMatchObject({ kind: 'newton', index: 2, count: 2, stateFile: 'bore-s02.state.mtx' });
      expect(existsSync(join(t.dir, 'bore-s02.state.mtx'))).toBe(true);
      expect(String(layout.provenance?.system)).toContain('Newton step 2 of 2');
      expect(readFileSync(out.systems[0].rhs, 'utf8')).toContain('right-hand side of bore-s01');
    } finally {
      t.cleanup();
    }
  });
});
