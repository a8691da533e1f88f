import { describe, expect, it } from 'vitest';
import { createPreconditioner } from '../../src/precond/registry.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { parseRecipe, recipeFromOptions } from '../../src/solvers/recipe.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import type { Bsr } from '../../src/sparse/types.js';
import { UserError } from '../../src/util/errors.js';
import { poisson2d, randomBsr, randomVector, recipe, systemOf } from './helpers.js';

/**
 * Pure upwind advection along a chain of nb cells, bs 2: diagonal blocks [[1, 0.2], [0.1, 1]],
 * the upstream neighbour's block −I (an inflow that does not decay along the chain).
 */
function upwindChain(nb: number): Bsr {
  const rowPtr = new Int32Array(nb + 1), colInd: number[] = [], values: number[] = [];
  for (let I = 0; I < nb; I++) {
    if (I > 0) { colInd.push(I - 1); values.push(-1, 0, 0, -1); }
    colInd.push(I); values.push(1, 0.2, 0.1, 1);
    rowPtr[I + 1] = colInd.length;
  }
  return { nBlockRows: nb, nBlockCols: nb, bs: 2, rowPtr, colInd: Int32Array.from(colInd), values: Float64Array.from(values) };
}

function schwarzIterations(a: Bsr, b: Float64Array, over: Record<string, unknown>): number {
  const r = recipe({ preconditioner: 'schwarz', rtol: 1e-8, restart: 200, maxIterations: 400, ...over });
  const res = solveSystem(systemOf(a), b, r).result;
  expect(res.cause).toBe('relative-target');
  return res.iterations;
}

describe('schwarz (one-level restricted / additive Schwarz on a block-graph partition)', () => {
  it('one part with an exact subdomain solve is A⁻¹: GMRES converges in 1 iteration', () => {
    const a = upwindChain(12);
    const it1 = schwarzIterations(a, randomVector(24, 1), { parts: 1, overlap: 0, subdomain: 'exact' });
    expect(it1).toBe(1);
  });

  it('overlap 0: restricted and additive agree (both are block Jacobi over the parts)', () => {
    const a = randomBsr(16, 2, [[1, 0], [5, 9], [12, 3], [7, 8], [8, 7]], 4);
    const r = randomVector(32, 2);
    const out = ['restricted', 'additive'].map((k) => {
      const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 4, overlap: 0, schwarzKind: k as 'restricted', subdomain: 'block-ilu0' }));
      expect(M.setup()).toEqual({ ok: true });
      const z = new Float64Array(32);
      M.apply(r, z);
      return z;
    });
    for (let i = 0; i < 32; i++) expect(out[0][i]).toBeCloseTo(out[1][i], 13);
  });

  it('additive Schwarz with overlap is symmetric on the SPD Poisson matrix: (M r, s) = (r, M s)', () => {
    const a = csrToBsr(poisson2d(8), 1);
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 4, overlap: 2, schwarzKind: 'additive', subdomain: 'exact' }));
    expect(M.setup()).toEqual({ ok: true });
    const r = randomVector(64, 3), s = randomVector(64, 4), mr = new Float64Array(64), ms = new Float64Array(64);
    M.apply(r, mr); M.apply(s, ms);
    let x = 0, y = 0;
    for (let i = 0; i < 64; i++) { x += mr[i] * s[i]; y += r[i] * ms[i]; }
    expect(Math.abs(x - y)).toBeLessThan(1e-12 * Math.abs(x));
    const st = M.stats!();
    expect(st.parts).toBe(4);
    expect((st.partSizes as number[]).reduce((t, v) => t + v, 0)).toBe(64);
    expect((st.overlappedSizes as number[]).every((v, i) => v > (st.partSizes as number[])[i])).toBe(true);
    expect((st.permutation as number[]).length).toBe(64);
  });

  // Smith, Bjørstad & Gropp, Domain Decomposition, 1996, ch. 2 (one-level additive Schwarz: the
  // condition number grows with the number of subdomains, like 1/(H δ) with overlap δ): the
  // iteration counts on 2D Poisson grow with P, and overlap lowers them.
  it('2D Poisson: one-level additive Schwarz iterations grow with the parts; overlap lowers them', () => {
    const m = 20, a = csrToBsr(poisson2d(m), 1), b = randomVector(m * m, 5);
    const its = (P: number, overlap: number) => schwarzIterations(a, b, { parts: P, overlap, schwarzKind: 'additive', subdomain: 'exact' });
    const o0 = [2, 8, 25].map((P) => its(P, 0));
    const o2 = [2, 8, 25].map((P) => its(P, 2));
    expect(o0[1]).toBeGreaterThan(o0[0]);
    expect(o0[2]).toBeGreaterThan(o0[1]);
    expect(o2[2]).toBeGreaterThan(o2[0]);
    for (let k = 0; k < 3; k++) expect(o2[k]).toBeLessThan(o0[k]);
  });

  // Mathematical fact: with parts ordered along the flow, block Jacobi across parts on a block
  // lower triangular matrix has a nilpotent iteration matrix of index P (information moves one part
  // per step), so the stationary iteration is exact after P steps and not before; forward block
  // Gauss–Seidel on the same order is an exact solve (1 step).
  it('pure upwind advection: block Jacobi across P parts needs P stationary steps; block Gauss–Seidel 1', () => {
    const a = upwindChain(32), b = randomVector(64, 6);
    for (const P of [2, 4, 8]) {
      const res = solveSystem(systemOf(a), b, recipe({ krylov: 'none', preconditioner: 'schwarz', parts: P, overlap: 0, subdomain: 'exact', rtol: 1e-10, maxIterations: 50 })).result;
      expect(res.cause).toBe('relative-target');
      expect(res.iterations).toBe(P);
    }
    const gs = solveSystem(systemOf(a), b, recipe({ krylov: 'none', preconditioner: 'block-gs', rtol: 1e-10, maxIterations: 50 })).result;
    expect(gs.iterations).toBe(1);
  });

  it('a subdomain failure names the block row of the whole matrix', () => {
    const a = randomBsr(8, 2, [[7, 6]], 3);
    a.values.fill(0, 6 * 4, 7 * 4); // block row 6's diagonal block is zero
    const out = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 2, overlap: 0, subdomain: 'block-jacobi' })).setup();
    expect(out.ok).toBe(false);
    if (!out.ok) { expect(out.blockRow).toBe(6); expect(out.message).toMatch(/schwarz subdomain \d: .*block row 6 of the whole matrix/); }
  });

  it('exact subdomains above the size limit are refused in setup with reason invalid', () => {
    const a = csrToBsr(poisson2d(70), 1); // 4900 unknowns in one part
    const out = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 1, subdomain: 'exact' })).setup();
    expect(out.ok).toBe(false);
    if (!out.ok) { expect(out.reason).toBe('invalid'); expect(out.message).toMatch(/limit is 4096 unknowns per subdomain/); }
  });

  it('options: validated with field paths and flags; schwarz fields elsewhere are errors', () => {
    expect(() => parseRecipe({ preconditioner: 'schwarz', overlap: 3 }, 's.json: recipes[0]')).toThrow(/s\.json: recipes\[0\]\.overlap: expected an integer from 0 to 2, got 3/);
    expect(() => parseRecipe({ preconditioner: 'block-ilu0', parts: 4 }, 's.json: recipes[1]')).toThrow(/recipes\[1\]\.parts: has no effect with gmres \+ block-ilu0 \(read only by schwarz\)/);
    expect(() => parseRecipe({ preconditioner: 'schwarz', subdomain: 'slab' }, 'w')).toThrow(/w\.subdomain: expected one of/);
    expect(() => recipeFromOptions({ precond: 'ilu0', overlap: '1' })).toThrow(/--overlap: has no effect with gmres \+ ilu0 \(read only by schwarz\)/);
    const r = recipeFromOptions({ precond: 'schwarz', parts: '8', overlap: '2', schwarzKind: 'additive', subdomainPrecond: 'direct' });
    expect([r.parts, r.overlap, r.schwarzKind, r.subdomain]).toEqual([8, 2, 'additive', 'direct']);
    const a = upwindChain(6);
    expect(() => createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 7 }))).toThrow(UserError);
    expect(() => createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 2, partitionSlabs: 'within' }))).toThrow(/needs slab offsets/);
    expect(() => createPreconditioner(systemOf(a, Int32Array.of(0, 2, 4, 6)), recipe({ preconditioner: 'schwarz', parts: 2, partitionSlabs: 'within' }))).toThrow(/at least one part per slab/);
  });

  it('direct as the subdomain solve equals exact', () => {
    const a = randomBsr(16, 2, [[1, 0], [5, 9], [12, 3], [7, 8], [8, 7], [3, 4], [4, 3]], 8);
    const r = randomVector(32, 9);
    const z = ['exact', 'direct'].map((s) => {
      const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 3, overlap: 1, subdomain: s as 'exact' }));
      expect(M.setup()).toEqual({ ok: true });
      const out = new Float64Array(32);
      M.apply(r, out);
      return out;
    });
    for (let i = 0; i < 32; i++) expect(z[0][i]).toBeCloseTo(z[1][i], 11);
  });
});

describe('schwarz and direct work counts by hand (work model, src/solvers/work.ts)', () => {
  it('schwarz, 2 parts, overlap 0, exact, on diag(2, 4) (bs 1): 2 flops and 176 bytes per apply', () => {
    const a: Bsr = { nBlockRows: 2, nBlockCols: 2, bs: 1, rowPtr: Int32Array.of(0, 1, 2), colInd: Int32Array.of(0, 1), values: Float64Array.of(2, 4) };
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'schwarz', parts: 2, overlap: 0, subdomain: 'exact' }));
    expect(M.setup()).toEqual({ ok: true });
    const z = new Float64Array(2);
    M.apply(Float64Array.of(2, 4), z);
    expect(Array.from(z)).toEqual([1, 1]);
    // per part (m = 1): gather 2·8 + 4, copy 16, LU solve 1 flop and 8 + 4 + 16 bytes, write-back 2·8 + 2·4
    const w = M.work().apply;
    expect([w.flops, w.bytes, w.preconditionerApplies]).toEqual([2, 2 * (20 + 16 + 28 + 24), 1]);
  });

  it('direct on diag(2, 4) (bs 1): apply = two permutes, two empty sweeps, two 1×1 mat-vecs', () => {
    const a: Bsr = { nBlockRows: 2, nBlockCols: 2, bs: 1, rowPtr: Int32Array.of(0, 1, 2), colInd: Int32Array.of(0, 1), values: Float64Array.of(2, 4) };
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'direct' }));
    expect(M.setup()).toEqual({ ok: true });
    M.apply(Float64Array.of(2, 4), new Float64Array(2));
    // permute: 2·2·8 + 2·4 = 40 (twice); sweep over 0 blocks: 4·3 + 2·2·8 = 44 (twice); mat-vec 2 flops, 8 + 16 bytes (twice)
    const w = M.work().apply;
    expect([w.flops, w.bytes]).toEqual([4, 2 * 40 + 2 * 44 + 2 * 24]);
  });
});
