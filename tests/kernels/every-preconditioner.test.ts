// Tier 3 (fast against slow) at the level of whole solves: every registered preconditioner, solved
// with the WebAssembly kernels, gives the same iterations and residual history, bit for bit, as on
// the TypeScript kernels, and no kernel call during its setup and solve fell back to TypeScript
// (KernelArena.missed: a call made while the solve's kernel memory was active with an array outside
// it). Preconditioners whose own loops have no WebAssembly twin yet are listed, and the test fails
// once one of them needs no fallback any more (so the list stays true).
import { describe, expect, it } from 'vitest';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { activeArena, type KernelArena } from '../../src/kernels-host/arena.js';
import { preconditionerNames } from '../../src/precond/registry.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import type { SystemMatrix } from '../../src/precond/types.js';
import { firstDifference } from './helpers.js';

/** AIR's cycle (Z and W products, F/C relaxation) runs its own TypeScript loops (README, WebAssembly kernels). */
const NOT_YET_IN_WEBASSEMBLY = new Set<string>([]);

const g = generateSystem(parseGeneratorParams({
  physics: 'acoustics', dim: 1, order: 2, cells: [16], extent: [1], slabs: 2, layersPerSlab: 1, cfl: 1,
  periodic: [true], soundSpeed: 1, meanFlow: [0.3],
}, 'test'));
const fresh = (): SystemMatrix => ({
  bsr: { ...g.bsr, values: g.bsr.values.slice() }, csr: bsrToCsr(g.bsr),
  slabOffsets: Int32Array.from(g.layout.slabOffsets ?? []), modes: g.layout.modes,
});

describe('every registered preconditioner runs on the WebAssembly kernels', () => {
  for (const name of preconditionerNames()) {
    it(name, () => {
      const recipe = parseRecipe({ krylov: name === 'slab' || name === 'p-multigrid' ? 'fgmres' : 'gmres', preconditioner: name, rtol: 1e-10 }, name);
      let arena: KernelArena | null = null;
      const wasm = solveSystem(fresh(), g.rhs, recipe, { kernels: 'wasm', onIteration: () => { arena ??= activeArena(); } }).result;
      const ts = solveSystem(fresh(), g.rhs, recipe, { kernels: 'typescript' }).result;
      expect(wasm.kernels).toBe('wasm');
      expect(wasm.outcome).toBe('solved');
      expect(wasm.iterations).toBe(ts.iterations);
      expect(firstDifference(Float64Array.from(wasm.history), Float64Array.from(ts.history))).toBeUndefined();
      expect(arena).not.toBeNull();
      const a = arena as unknown as KernelArena;
      expect(a.dispatched).toBeGreaterThan(0);
      if (NOT_YET_IN_WEBASSEMBLY.has(name)) expect(a.missed, `${name} needs no TypeScript fallback now: remove it from NOT_YET_IN_WEBASSEMBLY`).toBeGreaterThan(0);
      else expect(a.missed, `${name}: kernel calls that ran in TypeScript`).toBe(0);
      expect(a.spilledBytes).toBe(0);
    });
  }
});
