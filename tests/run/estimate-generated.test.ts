// The memory projection against matrices built by the generator (src/dg/generate.ts) in the test.
import { describe, it, expect } from 'vitest';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrBytes, bsrMemory } from '../../src/sparse/bsr.js';
import { estimateMemory, jacobianBytes, type EstimatePreconditioner } from '../../src/run/estimate.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { systemFromMatrix } from '../../src/sparse/system.js';
import type { MatrixMarketHeader } from '../../src/sparse/matrix-market-header.js';
import { preconditionerNames } from '../../src/precond/registry.js';
import { DEFAULT_RECIPE, parseRecipe } from '../../src/solvers/recipe.js';
import { fillPattern } from '../../src/sparse/fill-levels.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';

const cases: Array<Record<string, unknown>> = [
  { physics: 'advection', dim: 2, order: 1, cells: [4, 3], slabs: 2, layersPerSlab: 1, periodic: [false, true], velocity: [1, 0.5], initial: 'sin(2*pi*y)' },
  { physics: 'acoustics', dim: 1, order: 2, cells: [10], slabs: 3, layersPerSlab: 2, periodic: [false], soundSpeed: 1, meanFlow: [0.2], initial: 'exp(-((x-0.5)/0.1)^2)' },
  { physics: 'advection', dim: 3, order: 1, cells: [2, 2, 2], slabs: 2, layersPerSlab: 1, periodic: [false, false, false], velocity: [1, 0, 0], initial: '1' },
];

describe('estimate vs generateSystem', () => {
  for (const raw of cases) {
    it(`${raw.physics} ${raw.dim}D+t p = ${raw.order}: BSR bytes and blocks match exactly`, () => {
      const params = parseGeneratorParams(raw, 'test case');
      const { bsr, layout } = generateSystem(params);
      const prov = layout.provenance as { nEquations: number };
      const e = estimateMemory({
        spaceDim: params.dim, order: params.order, equations: prov.nEquations, cells: params.cells,
        layersPerSlab: params.layersPerSlab, slabs: params.slabs, periodic: params.periodic, restart: 30,
      });
      expect(e.bs).toBe(bsr.bs);
      expect(e.allAtOnce.blocks).toBe(bsr.colInd.length);
      expect(e.allAtOnce.jacobian.total).toBe(bsrBytes(bsr));
      const m = bsrMemory(bsr);
      expect(e.allAtOnce.jacobian.values).toBe(m.values);
      expect(e.allAtOnce.jacobian.indices).toBe(m.rowPtr + m.colInd);
    });
  }
});

/**
 * Registered preconditioners the projection does not cover yet (a known gap, listed here so that
 * any other new name without a projection fails this test).
 */
// Their storage depends on the values (AIR's coarse operators) or on a partition or fill pattern the
// mesh sizes do not give (schwarz, direct), or on the levels (p-multigrid): README says estimate leaves them out.
const NOT_YET_PROJECTED = new Set(['p-multigrid', 'air', 'schwarz', 'direct']);

describe('estimate vs what solve reports, for every registered preconditioner', () => {
  // The projection's formulas (src/run/estimate.ts) against the bytes a real solve counts on the
  // generated matrix, loaded as the CLI loads it: the Jacobian in the format the recipe holds (CSR
  // for jacobi and ilu0, BSR otherwise), the preconditioner's bytes (workspace included) and the
  // Krylov basis. Default options; slab with FGMRES and its default inner recipe.
  for (const raw of cases) {
    it(`${raw.physics} ${raw.dim}D+t p = ${raw.order}: ${preconditionerNames().join(', ')}`, () => {
      const params = parseGeneratorParams(raw, 'test case');
      const { bsr, layout } = generateSystem(params);
      const prov = layout.provenance as { nEquations: number };
      // block-iluk's projection takes the block count of its level-k pattern (default level)
      const fill = fillPattern(bsr, DEFAULT_RECIPE.fillLevel);
      if ('tooBig' in fill) throw new Error('fill pattern too big');
      const e = estimateMemory({
        spaceDim: params.dim, order: params.order, equations: prov.nEquations, cells: params.cells,
        layersPerSlab: params.layersPerSlab, slabs: params.slabs, periodic: params.periodic, restart: 30,
        fillBlocks: fill.rowPtr[bsr.nBlockRows],
      });
      const csr = bsrToCsr(bsr);
      const header: MatrixMarketHeader = { object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: csr.nRows, nCols: csr.nCols, nEntries: 0, comments: [] };
      const b = new Float64Array(csr.nRows).fill(1);
      expect(preconditionerNames()).toContain('ilu0');
      for (const name of preconditionerNames()) {
        const est = e.allAtOnce.preconditioners[name as EstimatePreconditioner];
        if (NOT_YET_PROJECTED.has(name)) { expect(est, `${name} now has a projection: remove it from NOT_YET_PROJECTED`).toBeUndefined(); continue; }
        expect(est, `estimate has no entry for ${name}`).toBeDefined();
        const system = systemFromMatrix('case.mtx', header, { ...csr, values: csr.values.slice() }, { layout: { blockSize: bsr.bs, slabOffsets: layout.slabOffsets } });
        const krylov = name === 'slab' ? 'fgmres' : 'gmres';
        const { result } = solveSystem(system, b, parseRecipe({ preconditioner: name, krylov, maxIterations: 3 }, name));
        expect(result.memory.preconditionerBytes, name).toBe(est!.total);
        expect(result.memory.matrixBytes, name).toBe(jacobianBytes(e.allAtOnce, name as EstimatePreconditioner));
        const k = result.memory.buffers.krylov;
        expect(k.basis + (k.flexibleBasis ?? 0), name).toBe(e.allAtOnce.krylov[krylov]);
      }
    });
  }
});
