// The memory projection against matrices built by the generator (src/dg/generate.ts) in the test.
import { describe, it, expect } from 'vitest';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrBytes, bsrMemory } from '../../src/sparse/bsr.js';
import { estimateMemory } from '../../src/run/estimate.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { DEFAULT_RECIPE } from '../../src/solvers/recipe.js';

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

describe('estimate vs the bytes the preconditioners report', () => {
  // The projection's per-preconditioner formulas (src/run/estimate.ts) against memory() of the real
  // preconditioners with the default recipe (natural ordering), workspace left out as in the estimate.
  for (const raw of cases) {
    it(`${raw.physics} ${raw.dim}D+t p = ${raw.order}: jacobi, block-jacobi, block-gs and block-ilu0 factor bytes`, () => {
      const params = parseGeneratorParams(raw, 'test case');
      const { bsr, layout } = generateSystem(params);
      const prov = layout.provenance as { nEquations: number };
      const e = estimateMemory({
        spaceDim: params.dim, order: params.order, equations: prov.nEquations, cells: params.cells,
        layersPerSlab: params.layersPerSlab, slabs: params.slabs, periodic: params.periodic, restart: 30,
      });
      const system = { bsr, csr: bsrToCsr(bsr) };
      for (const name of ['jacobi', 'block-jacobi', 'block-gs', 'block-ilu0'] as const) {
        const M = createPreconditioner(system, { ...DEFAULT_RECIPE, preconditioner: name });
        expect(M.setup().ok).toBe(true);
        const mem = M.memory();
        const counted = Object.entries(mem).filter(([k]) => k !== 'workspace').reduce((s, [, v]) => s + v, 0);
        expect(counted, name).toBe(e.allAtOnce.preconditioners[name].total);
      }
    });
  }
});
