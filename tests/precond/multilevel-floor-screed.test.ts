/**
 * The floor screed of the demo and multilevel suites (matrices/demo/floor-screed.mtx.gz: p = 3
 * SIPG diffusion in 2D+t, one slab, ν·Δt/h² = 16; an invented scenario), solved with the recipes
 * of matrices/multilevel-suite.json exactly as the suite parses them. Deterministic fields only
 * (iterations, exact work counts), never times: the README's claim that the multilevel recipes
 * need far fewer iterations than every single-level one there, and that they still move more
 * bytes than block ILU(0), so they do not win on work.
 */
import { describe, it, expect, beforeAll } from 'vitest';
import { fileURLToPath } from 'node:url';
import { loadSuite, type GeneratedMatrixEntry } from '../../src/run/suite.js';
import { prebuiltCase } from '../../src/run/sweep.js';
import { loadSystem } from '../../src/sparse/load.js';
import { readMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import type { SystemMatrix } from '../../src/precond/types.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import type { Recipe } from '../../src/solvers/recipe.js';

interface Outcome { converged: boolean; iterations: number; applies: number; bytes: number }

const single = ['gmres-block-jacobi', 'gmres-block-gs-symmetric', 'gmres-ilu0', 'gmres-block-ilu0-downstream', 'bicgstab-block-ilu0'];
const multilevel = ['gmres-air', 'gmres-air-distance1-injection', 'gmres-air-w', 'gmres-air-distance1-strength05',
  'fgmres-p-multigrid', 'gmres-p-multigrid-fixed', 'fgmres-p-multigrid-31-ilu', 'gmres-p-multigrid-31-ilu-fixed'];

describe('floor screed (p = 3 stiff diffusion): multilevel recipes against single-level ones', () => {
  const out = new Map<string, Outcome>();
  const fine = new Map<string, Outcome>();

  beforeAll(async () => {
    const suite = await loadSuite(fileURLToPath(new URL('../../matrices/multilevel-suite.json', import.meta.url)));
    const demo = await loadSuite(fileURLToPath(new URL('../../matrices/suite.json', import.meta.url)));
    const entry = suite.matrices.find((m) => m.name === 'floor-screed') as GeneratedMatrixEntry;
    const demoEntry = demo.matrices.find((m) => m.name === 'floor-screed') as GeneratedMatrixEntry;
    // the same case in both suites, and the committed copy is what its parameters generate
    expect(entry.generate).toEqual(demoEntry.generate);
    const files = prebuiltCase(entry)!;
    expect(files).toBeDefined();
    const b = await readMatrixMarketVector(files.rhs);
    for (const recipe of suite.recipes) {
      const system = await loadSystem(files.mtx);
      const { result } = solveSystem(system, b, recipe);
      const w = result.work;
      out.set(recipe.name, {
        converged: result.converged, iterations: result.iterations,
        applies: w.solve.preconditionerApplies, bytes: w.setup.bytes + w.solve.bytes,
      });
    }
    // the 6×6 twin (h and Δt refined by 3/2), generated in memory from its suite entry
    const twin = suite.matrices.find((m) => m.name === 'floor-screed-6') as GeneratedMatrixEntry;
    const g = generateSystem(parseGeneratorParams(twin.generate, 'floor-screed-6'));
    const sys: SystemMatrix = { bsr: g.bsr, csr: bsrToCsr(g.bsr), slabOffsets: Int32Array.from(g.layout.slabOffsets ?? []), modes: g.layout.modes };
    for (const name of ['gmres-block-ilu0-downstream', 'gmres-air', 'gmres-air-w']) {
      const recipe = suite.recipes.find((r) => r.name === name) as Recipe;
      const { result } = solveSystem(sys, g.rhs, recipe);
      const w = result.work;
      fine.set(name, { converged: result.converged, iterations: result.iterations,
        applies: w.solve.preconditionerApplies, bytes: w.setup.bytes + w.solve.bytes });
    }
  }, 180_000);

  it('runs every recipe of the multilevel suite, and every one converges', () => {
    expect([...out.keys()].sort()).toEqual([...single, ...multilevel].sort());
    for (const [name, o] of out) expect(o.converged, name).toBe(true);
  });

  it('AIR needs less than half the iterations of the best single-level recipe, and the W-cycle the fewest of all', () => {
    const bestSingle = Math.min(...single.map((n) => out.get(n)!.iterations));
    expect(out.get('gmres-air')!.iterations).toBeLessThan(bestSingle / 2);
    expect(out.get('gmres-air-w')!.iterations).toBeLessThan(bestSingle / 3);
    const others = [...out].filter(([n]) => n !== 'gmres-air-w').map(([, o]) => o.iterations);
    expect(out.get('gmres-air-w')!.iterations).toBeLessThan(Math.min(...others));
  });

  it('tuned p-multigrid (degrees 3 → 1, block ILU(0) smoother) needs fewer iterations than every single-level recipe', () => {
    const bestSingle = Math.min(...single.map((n) => out.get(n)!.iterations));
    expect(out.get('fgmres-p-multigrid-31-ilu')!.iterations).toBeLessThan(bestSingle);
    expect(out.get('gmres-p-multigrid-31-ilu-fixed')!.iterations).toBeLessThan(out.get('gmres-block-ilu0-downstream')!.iterations);
    // the untuned defaults (block Gauss–Seidel smoother, every degree) beat block Jacobi only
    expect(out.get('fgmres-p-multigrid')!.iterations).toBeLessThan(out.get('gmres-block-jacobi')!.iterations / 4);
    expect(out.get('fgmres-p-multigrid')!.iterations).toBeGreaterThan(out.get('gmres-block-ilu0-downstream')!.iterations);
  });

  it('on work (bytes moved, setup + solve) block ILU(0) in downstream order still wins: no multilevel recipe moves fewer bytes', () => {
    const ilu = out.get('gmres-block-ilu0-downstream')!.bytes;
    for (const n of multilevel) expect(out.get(n)!.bytes, n).toBeGreaterThan(ilu);
    for (const n of single) expect(out.get(n)!.bytes, n).toBeGreaterThanOrEqual(ilu);
  });

  it('refined in space and time together (4×4 → 6×6), AIR\'s iterations grow less than block ILU(0)\'s and its byte count closes in', () => {
    for (const [n, o] of fine) expect(o.converged, n).toBe(true);
    const growth = (n: string) => fine.get(n)!.iterations / out.get(n)!.iterations;
    expect(growth('gmres-air')).toBeLessThan(growth('gmres-block-ilu0-downstream'));
    expect(growth('gmres-air-w')).toBeLessThan(growth('gmres-block-ilu0-downstream'));
    const ratio = (m: Map<string, Outcome>) => m.get('gmres-air')!.bytes / m.get('gmres-block-ilu0-downstream')!.bytes;
    expect(ratio(fine)).toBeLessThan(ratio(out));
    expect(ratio(fine)).toBeGreaterThan(1); // not yet below block ILU(0) at 6×6 (README: from 10×10 on)
  });
});
