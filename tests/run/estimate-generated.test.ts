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
import { estimateMatrix, isRefused, VARIABLE_BY_DEFAULT } from '../../src/run/estimate-pattern.js';
import type { Layout } from '../../src/sparse/types.js';

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

// Projected from the mesh sizes alone (estimateMemory); the others need the pattern or the values
// and are projected on a matrix (estimateMatrix, below).
const SIZE_PROJECTED = new Set(['none', 'jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'block-iluk', 'slab', 'p-multigrid']);

/** The generated case loaded as the CLI loads it (CSR read, layout with slabs and modes). */
function loaded(raw: Record<string, unknown>) {
  const params = parseGeneratorParams(raw, 'test case');
  const { bsr, layout } = generateSystem(params);
  const csr = bsrToCsr(bsr);
  const header: MatrixMarketHeader = { object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: csr.nRows, nCols: csr.nCols, nEntries: 0, comments: [] };
  const fresh = () => systemFromMatrix('case.mtx', header, { ...csr, values: csr.values.slice() }, { layout: layout as Layout });
  return { params, bsr, layout, fresh };
}

function solveFor(system: ReturnType<typeof systemFromMatrix>, name: string) {
  const b = new Float64Array(system.n).fill(1);
  const krylov = VARIABLE_BY_DEFAULT.has(name) ? 'fgmres' : 'gmres';
  return { krylov, ...solveSystem(system, b, parseRecipe({ preconditioner: name, krylov, maxIterations: 3 }, name)) };
}

describe('estimate from mesh sizes vs what solve reports', () => {
  // The projection's formulas (src/run/estimate.ts) against the bytes a real solve counts on the
  // generated matrix: the Jacobian in the format the recipe holds (CSR for jacobi and ilu0, BSR
  // otherwise), the preconditioner's bytes (workspace included) and the reserved Krylov basis.
  for (const raw of cases) {
    it(`${raw.physics} ${raw.dim}D+t p = ${raw.order}: ${[...SIZE_PROJECTED].join(', ')}`, () => {
      const { params, bsr, layout, fresh } = loaded(raw);
      const prov = layout.provenance as { nEquations: number };
      // block-iluk's projection takes the block count of its level-k pattern (default level)
      const fill = fillPattern(bsr, DEFAULT_RECIPE.fillLevel);
      if ('tooBig' in fill) throw new Error('fill pattern too big');
      const e = estimateMemory({
        spaceDim: params.dim, order: params.order, equations: prov.nEquations, cells: params.cells,
        layersPerSlab: params.layersPerSlab, slabs: params.slabs, periodic: params.periodic, restart: 30,
        fillBlocks: fill.rowPtr[bsr.nBlockRows],
      });
      for (const name of preconditionerNames()) {
        const est = e.allAtOnce.preconditioners[name as EstimatePreconditioner];
        if (!SIZE_PROJECTED.has(name)) { expect(est, `${name}`).toBeUndefined(); continue; }
        expect(est, `estimate has no entry for ${name}`).toBeDefined();
        const { result, krylov } = solveFor(fresh(), name);
        expect(result.memory.preconditionerBytes, name).toBe(est!.total);
        expect(result.memory.matrixBytes, name).toBe(jacobianBytes(e.allAtOnce, name as EstimatePreconditioner));
        expect(result.memory.basisReservedBytes, name).toBe(e.allAtOnce.krylov[krylov as 'gmres' | 'fgmres']);
      }
    });
  }
});

describe('estimate on a matrix vs what solve reports, for every registered preconditioner', () => {
  // estimateMatrix (src/run/estimate-pattern.ts) counts from the pattern, the slab offsets and the
  // layout's modes; air alone runs its setup. Every registered name must have a projection that
  // equals solve's counted bytes, buffer by buffer.
  for (const raw of cases) {
    it(`${raw.physics} ${raw.dim}D+t p = ${raw.order}: ${preconditionerNames().join(', ')}`, () => {
      const { fresh } = loaded(raw);
      const probe = fresh();
      const e = estimateMatrix(probe, preconditionerNames(), 30, probe);
      expect(preconditionerNames()).toContain('ilu0');
      for (const name of preconditionerNames()) {
        const est = e.preconditioners[name];
        expect(est, `estimate has no entry for ${name}`).toBeDefined();
        if (isRefused(est)) throw new Error(`${name} refused: ${est.refused}`);
        expect(est.source, name).toBe(name === 'air' ? 'measured by setup' : 'counted');
        const { result, krylov } = solveFor(fresh(), name);
        expect(result.memory.buffers.preconditioner, name).toEqual(est.parts);
        expect(result.memory.preconditionerBytes, name).toBe(est.total);
        expect(result.memory.matrixBytes, name).toBe(name === 'jacobi' || name === 'ilu0' ? e.jacobian.csr : e.jacobian.bsr);
        expect(result.memory.basisReservedBytes, name).toBe(e.krylov[krylov as 'gmres' | 'fgmres']);
      }
    });
  }
});
