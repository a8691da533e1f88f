// Stored zero blocks of generated matrices: their count in the layout, the option that drops them,
// and what they change for ILU(0).
import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrSpmv, bsrToCsr } from '../../src/sparse/bsr.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import type { Bsr } from '../../src/sparse/types.js';
import { runCli } from '../cli/cli-helpers.js';

/** Zero blocks counted here independently of the generator's countZeroBlocks. */
function zeroBlocks(a: Bsr): number {
  const bb = a.bs * a.bs;
  let n = 0;
  for (let k = 0; k < a.colInd.length; k++) if (a.values.subarray(k * bb, (k + 1) * bb).every((v) => v === 0)) n++;
  return n;
}

/** Triples of elements that are pairwise face neighbours (triangles of the block graph). */
function blockTriangles(a: Bsr): number {
  const adj = Array.from({ length: a.nBlockRows }, () => new Set<number>());
  for (let I = 0; I < a.nBlockRows; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      const J = a.colInd[k];
      if (J !== I) { adj[I].add(J); adj[J].add(I); }
    }
  }
  let t = 0;
  for (let I = 0; I < a.nBlockRows; I++) for (const J of adj[I]) if (J > I) for (const K of adj[J]) if (K > J && adj[I].has(K)) t++;
  return t;
}

function seeded(n: number): Float64Array {
  const x = new Float64Array(n);
  let s = 7;
  for (let i = 0; i < n; i++) { s = (s * 16807) % 2147483647; x[i] = s / 2147483647 - 0.5; }
  return x;
}

function applyPrec(a: Bsr, name: string, r: Float64Array): Float64Array {
  const M = createPreconditioner({ bsr: a, csr: bsrToCsr(a) }, parseRecipe({ preconditioner: name }, name));
  expect(M.setup().ok).toBe(true);
  const z = new Float64Array(r.length);
  M.apply(r, z);
  return z;
}

function iterations(a: Bsr, rhs: Float64Array, name: string): number {
  const { result } = solveSystem({ bsr: a, csr: bsrToCsr(a) }, rhs, parseRecipe({ preconditioner: name, rtol: 1e-10 }, name));
  expect(result.converged).toBe(true);
  return result.iterations;
}

const advection = { physics: 'advection', dim: 2, order: 1, cells: 6, slabs: 2, periodic: true };

describe('zero blocks in the layout', () => {
  it('counts the stored blocks that are exactly zero; about a third of an upwind advection matrix', () => {
    const { bsr, layout } = generateSystem(parseGeneratorParams(advection, 'case'));
    const z = zeroBlocks(bsr);
    expect(layout.zeroBlocks).toEqual({ count: z, share: z / bsr.colInd.length });
    // outflow faces of upwinding: their coupling block vanishes (issue's audit: 36–39 %)
    expect(layout.zeroBlocks!.share).toBeGreaterThan(0.3);
    expect(layout.zeroBlocks!.share).toBeLessThan(0.45);
    expect((layout.provenance as Record<string, unknown>).droppedZeroBlocks).toBe(0);
    expect('dropZeroBlocks' in ((layout.provenance as { params: object }).params)).toBe(false);
  });
});

describe('dropZeroBlocks', () => {
  it('leaves the same operator on the numerical pattern and records the choice', () => {
    const full = generateSystem(parseGeneratorParams(advection, 'case'));
    const drop = generateSystem(parseGeneratorParams({ ...advection, dropZeroBlocks: true }, 'case'));
    const nz = zeroBlocks(full.bsr);
    expect(drop.bsr.colInd.length).toBe(full.bsr.colInd.length - nz);
    // no zero block left except possibly a diagonal one
    expect(zeroBlocks(drop.bsr)).toBe(0);
    expect(drop.layout.zeroBlocks).toEqual({ count: 0, share: 0 });
    const x = seeded(full.rhs.length);
    const y1 = new Float64Array(x.length), y2 = new Float64Array(x.length);
    bsrSpmv(full.bsr, x, y1);
    bsrSpmv(drop.bsr, x, y2);
    expect(y2).toEqual(y1);
    expect(drop.rhs).toEqual(full.rhs);
    const prov = drop.layout.provenance as { droppedZeroBlocks: number; params: { dropZeroBlocks?: boolean } };
    expect(prov.droppedZeroBlocks).toBe(nz);
    expect(prov.params.dropZeroBlocks).toBe(true);
    expect(() => parseGeneratorParams({ ...advection, dropZeroBlocks: 'yes' }, 'suite.json: matrices[0].generate'))
      .toThrow(/matrices\[0\]\.generate\.dropZeroBlocks: expected true or false/);
  });

  it('generate --drop-zero-blocks writes the numerical pattern', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-zero-'));
    try {
      const r = await runCli(['generate', '--physics', 'advection', '--dim', '1', '--cells', '6', '--slabs', '2', '--drop-zero-blocks', '--name', 'c', '--out', dir]);
      expect(r.code).toBe(0);
      const layout = JSON.parse(readFileSync(join(dir, 'c.layout.json'), 'utf8')) as { zeroBlocks: { count: number }; provenance: { droppedZeroBlocks: number } };
      expect(layout.zeroBlocks.count).toBe(0);
      expect(layout.provenance.droppedZeroBlocks).toBeGreaterThan(0);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('ILU(0) on the full face pattern vs the numerical pattern', () => {
  // An ILU(0) update reaches block (I, J) only through a K that is a face neighbour of both
  // (Saad 2003, Algorithm 10.4: a_ij -= l_ik u_kj over positions of the pattern). Fill lands in a
  // zero block only where three elements are pairwise face neighbours.
  it('no pairwise-neighbour triples (Kuhn meshes with two or more cells per axis): identical factors, even with cycles', () => {
    // a rotating velocity on a periodic square: the upwind graph has cycles
    const rotating = { ...advection, velocity: ['-2*pi*(y-0.5)', '2*pi*(x-0.5)'], slabs: 1, cfl: 1 };
    const full = generateSystem(parseGeneratorParams(rotating, 'case'));
    const drop = generateSystem(parseGeneratorParams({ ...rotating, dropZeroBlocks: true }, 'case'));
    expect(zeroBlocks(full.bsr)).toBeGreaterThan(0);
    expect(blockTriangles(full.bsr)).toBe(0);
    const r = seeded(full.rhs.length);
    for (const name of ['block-ilu0', 'ilu0']) {
      expect(applyPrec(full.bsr, name, r), name).toEqual(applyPrec(drop.bsr, name, r));
      expect(iterations(full.bsr, full.rhs, name)).toBe(iterations(drop.bsr, drop.rhs, name));
    }
  });

  it('with pairwise-neighbour triples (one periodic cell per axis): fill lands in the zero blocks and the full pattern needs fewer iterations', () => {
    const tiny = { physics: 'advection', dim: 2, order: 2, cells: 1, slabs: 1, periodic: true, cfl: 2 };
    const full = generateSystem(parseGeneratorParams(tiny, 'case'));
    const drop = generateSystem(parseGeneratorParams({ ...tiny, dropZeroBlocks: true }, 'case'));
    expect(blockTriangles(full.bsr)).toBeGreaterThan(0);
    expect(zeroBlocks(full.bsr)).toBeGreaterThan(0);
    const r = seeded(full.rhs.length);
    const zFull = applyPrec(full.bsr, 'block-ilu0', r), zDrop = applyPrec(drop.bsr, 'block-ilu0', r);
    let diff = 0;
    for (let i = 0; i < r.length; i++) diff = Math.max(diff, Math.abs(zFull[i] - zDrop[i]));
    expect(diff).toBeGreaterThan(1e-3);
    const itFull = iterations(full.bsr, full.rhs, 'block-ilu0'), itDrop = iterations(drop.bsr, drop.rhs, 'block-ilu0');
    expect(itFull).toBeLessThan(itDrop);
  });
});
