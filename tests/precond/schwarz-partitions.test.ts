// Schwarz on coordinate-bisection partitions, and the published behaviour of one-level Schwarz
// and of block methods across parts on a pure upwind flow, checked on partitions we control.
import { describe, expect, it } from 'vitest';
import { createPreconditioner } from '../../src/precond/registry.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { permuteBsr, permuteVectorBlocks } from '../../src/sparse/permute.js';
import { partitionBlocks } from '../../src/sparse/partition.js';
import type { Centroids } from '../../src/sparse/types.js';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { UserError } from '../../src/util/errors.js';
import { poisson2d, randomVector, recipe, systemOf } from './helpers.js';

/** Grid point (k mod m, ⌊k / m⌋) of block row k of poisson2d(m). */
function gridPoints(m: number): Centroids {
  const values = new Float64Array(2 * m * m);
  for (let k = 0; k < m * m; k++) { values[2 * k] = k % m; values[2 * k + 1] = Math.floor(k / m); }
  return { nCoordinates: 2, values };
}

describe("schwarz partitionMethod 'coordinates'", () => {
  it('uses the centroids, reports the method, and is refused without them (one line naming the field)', () => {
    const m = 8, a = csrToBsr(poisson2d(m), 1);
    const r = recipe({ name: 'rcb', preconditioner: 'schwarz', parts: 4, overlap: 0, subdomain: 'exact', partitionMethod: 'coordinates' });
    const M = createPreconditioner({ ...systemOf(a), centroids: gridPoints(m) }, r);
    expect(M.setup()).toEqual({ ok: true });
    const st = M.stats!();
    expect(st.partitionMethod).toBe('coordinates');
    expect(st.partSizes).toEqual([16, 16, 16, 16]);
    expect(st.edgeCut).toBe(32); // quadrants: two straight cuts of 8 edges, both directions
    let message = '';
    try { createPreconditioner(systemOf(a), r); } catch (e) { expect(e).toBeInstanceOf(UserError); message = (e as Error).message; }
    expect(message).toMatch(/^recipe rcb: schwarz partitionMethod 'coordinates' needs element centroids: the layout has no "centroids" field .*or use partitionMethod graph$/);
    expect(message).not.toContain('\n');
    expect(() => parseRecipe({ preconditioner: 'block-ilu0', partitionMethod: 'coordinates' }, 's.json: recipes[0]'))
      .toThrow(/recipes\[0\]\.partitionMethod: has no effect with gmres \+ block-ilu0 \(read only by schwarz\)/);
    expect(() => parseRecipe({ preconditioner: 'schwarz', partitionMethod: 'inertial' }, 'w')).toThrow(/w\.partitionMethod: expected one of graph, coordinates/);
  });

  // Smith, Bjørstad & Gropp, Domain Decomposition, 1996, ch. 2 and 5 (from memory): one-level
  // additive Schwarz has κ ≤ C (1 + 1/(H δ)) (subdomain size H, overlap width δ; the form of
  // Toselli & Widlund, Domain Decomposition Methods, 2005, §3.6, from memory): the iteration
  // counts grow as the subdomains shrink (more of them), and more overlap lowers both the counts
  // and their growth. Square subdomains from coordinate bisection of a 24×24 grid: P = 4, 16, 64.
  it('2D Poisson, square subdomains: iterations grow with P; overlap lowers the counts and their growth', () => {
    const m = 24, a = csrToBsr(poisson2d(m), 1), b = randomVector(m * m, 5);
    const sys = { ...systemOf(a), centroids: gridPoints(m) };
    const its = (P: number, overlap: number): number => {
      const res = solveSystem(sys, b, recipe({
        preconditioner: 'schwarz', parts: P, overlap, schwarzKind: 'additive', subdomain: 'exact', partitionMethod: 'coordinates',
        rtol: 1e-8, restart: 300, maxIterations: 600,
      })).result;
      expect(res.cause).toBe('relative-target');
      return res.iterations;
    };
    const Ps = [4, 16, 64];
    const counts = [0, 1, 2].map((overlap) => Ps.map((P) => its(P, overlap)));
    for (const row of counts) { expect(row[1]).toBeGreaterThan(row[0]); expect(row[2]).toBeGreaterThan(row[1]); }
    for (let k = 0; k < Ps.length; k++) { expect(counts[1][k]).toBeLessThan(counts[0][k]); expect(counts[2][k]).toBeLessThanOrEqual(counts[1][k]); }
    expect(counts[2][2]).toBeLessThan(counts[1][2]);
    const growth = counts.map((row) => row[2] - row[0]);
    expect(growth[1]).toBeLessThan(growth[0]);
    expect(growth[2]).toBeLessThan(growth[1]);
  });
});

describe('pure upwind advection in 2D+t, parts ordered along the flow by coordinate bisection', () => {
  // Invented scenario: a long, thin channel (4 × 0.25) swept by a fast flow (velocity 16 along x)
  // that crosses it within the one time slab (16 · 0.25 = 4), upwind DG of order 1. The centroids'
  // widest spread is along x for up to 8 parts (a part of 4 cells is wider than 0.25 in y and t),
  // so coordinate bisection cuts across the flow and numbers the parts downstream.
  const params = parseGeneratorParams({
    physics: 'advection', dim: 2, order: 1, cells: [32, 2], extent: [4, 0.25], slabs: 1, slabThickness: 0.25,
    velocity: [16, 0], dropZeroBlocks: true,
  }, 'channel');
  const g = generateSystem(params);
  const a = g.bsr, bs = a.bs;
  const c = g.layout.centroids!;
  const centroids: Centroids = { nCoordinates: c.nCoordinates, values: Float64Array.from(c.values) };
  const sys = { ...systemOf(a), centroids };

  // Mathematical fact (shared/references.md): with parts ordered along the flow the block matrix
  // over the parts is block lower bidiagonal, so block Jacobi across the parts (schwarz, overlap 0,
  // exact part solves) has a nilpotent iteration matrix of index P — the inflow information moves
  // one part per step — and is exact after P steps, not before when the flow crosses the domain;
  // block Gauss–Seidel across the same parts is one forward substitution: exact in 1 step.
  it.each([2, 4, 8])('P = %i: block Jacobi across parts needs P iterations, block Gauss–Seidel across parts 1', (P) => {
    const p = partitionBlocks(a, P, { method: 'coordinates', centroids });
    // the parts are slices across x, numbered downstream; no part reads a part downstream of it
    for (let q = 0; q + 1 < P; q++) {
      const xs = (r: number) => Array.from(p.perm.subarray(p.partOffsets[r], p.partOffsets[r + 1]), (I) => centroids.values[I * 3]);
      expect(Math.max(...xs(q))).toBeLessThan(Math.min(...xs(q + 1)));
    }
    let upstreamReads = 0;
    for (let I = 0; I < a.nBlockRows; I++) for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) if (p.part[a.colInd[k]] > p.part[I]) upstreamReads++;
    expect(upstreamReads).toBe(0);

    const jacobi = recipe({ krylov: 'none', preconditioner: 'schwarz', parts: P, overlap: 0, subdomain: 'direct', partitionMethod: 'coordinates', rtol: 1e-10, maxIterations: 50 });
    const stationary = solveSystem(sys, g.rhs, jacobi).result;
    expect(stationary.cause).toBe('relative-target');
    expect(stationary.iterations).toBe(P);
    const gmres = solveSystem(sys, g.rhs, { ...jacobi, krylov: 'gmres' }).result;
    expect(gmres.cause).toBe('relative-target');
    expect(gmres.iterations).toBeGreaterThanOrEqual(P - 1);
    expect(gmres.iterations).toBeLessThanOrEqual(P);

    // block Gauss–Seidel across the parts: the slab solver (forward substitution over consecutive
    // block-row ranges) on the matrix grouped part by part, each part solved exactly
    const grouped = permuteBsr(a, p.perm);
    const b = new Float64Array(g.rhs.length);
    permuteVectorBlocks(g.rhs, p.perm, bs, b);
    const gs = solveSystem(systemOf(grouped, p.partOffsets), b, recipe({
      krylov: 'none', preconditioner: 'slab', rtol: 1e-10, maxIterations: 50,
      inner: recipe({ name: 'part', krylov: 'none', preconditioner: 'direct', maxIterations: 1 }),
    })).result;
    expect(gs.cause).toBe('relative-target');
    expect(gs.iterations).toBe(1);
    expect((gs.preconditionerStats as { blocksAboveSlabDiagonal: number }).blocksAboveSlabDiagonal).toBe(0);
  });
});
