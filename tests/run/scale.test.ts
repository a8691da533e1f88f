import { describe, expect, it } from 'vitest';
import { EXAMPLE_MACHINE, partCounts, partitionedRecipe, reductionsOf, runScale } from '../../src/run/scale.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { UserError } from '../../src/util/errors.js';
import { poisson2d, randomVector, systemOf } from '../precond/helpers.js';

const recipe = (over: Partial<Recipe> = {}): Recipe => ({ ...DEFAULT_RECIPE, ...over });

describe('scale: the partitioned forecast', () => {
  it('reductions per run, counted by hand from the loops', () => {
    // GMRES(30) mgs, 3 iterations, no restart: steps 0, 1, 2 make 2 + 3 + 4 reductions, + the final norm
    expect(reductionsOf(recipe(), 3, 0)).toBe(10);
    // cgs2: 3 per step + 1
    expect(reductionsOf(recipe({ orthogonalization: 'cgs2' }), 3, 0)).toBe(10);
    // GMRES(2) mgs, 5 iterations, 2 restarts: two full cycles (2 + 3 each), one step (2), 2 + 1 norms
    expect(reductionsOf(recipe({ restart: 2 }), 5, 2)).toBe(2 * 5 + 2 + 3);
    expect(reductionsOf(recipe({ krylov: 'none' }), 7, 0)).toBe(7);
    expect(reductionsOf(recipe({ krylov: 'bicgstab' }), 2, 0)).toBe(12);
    // GMRES-DR(4, 2) mgs, 6 iterations, 1 restart: first cycle 2 + 3 + 4 + 5, then m − k = 2 steps
    // against k + j + 1 vectors (4 + 5), + 1 + 1 norms; k = 0 is GMRES(m)
    expect(reductionsOf(recipe({ krylov: 'gmres-dr', restart: 4, deflate: 2 }), 6, 1)).toBe(14 + 9 + 2);
    expect(reductionsOf(recipe({ krylov: 'gmres-dr', restart: 4, deflate: 0 }), 6, 1)).toBe(reductionsOf(recipe({ restart: 4 }), 6, 1));
    // GCRO-DR(4, 2): the same steps (C then V), + 2 fused small blocks in the second cycle
    expect(reductionsOf(recipe({ krylov: 'gcro-dr', restart: 4, deflate: 2 }), 6, 1)).toBe(14 + 9 + 2 + 2);
    // cgs2: 3 per step in the first cycle, gcro-dr 5 per later step (two passes against C too)
    expect(reductionsOf(recipe({ krylov: 'gcro-dr', restart: 4, deflate: 2, orthogonalization: 'cgs2' }), 6, 1)).toBe(12 + 10 + 2 + 2);
  });

  it('recipes per P: schwarz gets the parts; others become block Jacobi over the parts with themselves per part', () => {
    expect(partCounts(10)).toEqual([1, 2, 4, 8]);
    expect(partCounts(13, 3)).toEqual([3, 6, 12]);
    const s = partitionedRecipe(recipe({ preconditioner: 'schwarz', overlap: 2 }), 4);
    expect([s.parts, s.overlap]).toEqual([4, 2]);
    const j = partitionedRecipe(recipe({ preconditioner: 'block-ilu0' }), 8);
    expect([j.preconditioner, j.parts, j.overlap, j.subdomain]).toEqual(['schwarz', 8, 0, 'block-ilu0']);
    expect(partitionedRecipe(recipe(), 2).preconditioner).toBe('none');
    expect(() => partitionedRecipe(recipe({ preconditioner: 'slab' }), 2)).toThrow(/cannot be applied part by part/);
  });

  it('on 2D Poisson: P = 1 has no communication; halo, messages and reduction time appear with P; the model adds up', () => {
    const a = csrToBsr(poisson2d(12), 1);
    const rep = runScale(systemOf(a), randomVector(144, 1), recipe({ preconditioner: 'block-ilu0', restart: 100 }), { maxParts: 8, machine: EXAMPLE_MACHINE });
    expect(rep.rows.map((r) => r.parts)).toEqual([1, 2, 4, 8]);
    const [one, ...more] = rep.rows;
    expect(one.haloBytesPerIteration).toBe(0);
    expect(one.messagesPerIteration).toBe(0);
    expect(one.modelled.reductions).toBe(0);
    expect(one.modelled.perIteration).toBeCloseTo(one.maxPartBytesPerIteration / EXAMPLE_MACHINE.bandwidth, 15);
    for (const r of more) {
      expect(r.converged).toBe(true);
      expect(r.partSizes.reduce((t, v) => t + v, 0)).toBe(144);
      expect(r.haloBytesPerIteration).toBeGreaterThan(0);
      expect(r.imbalance).toBeGreaterThanOrEqual(1);
      const m = r.modelled;
      expect(m.perIteration).toBeCloseTo(m.compute + m.messages + m.network + m.reductions, 15);
      expect(m.total).toBeCloseTo(m.perIteration * r.iterations, 12);
      expect(m.reductions).toBeCloseTo(r.reductionsPerIteration * Math.log2(r.parts) * EXAMPLE_MACHINE.latency, 15);
    }
    // more parts: smaller largest part, block Jacobi over the parts needs at least as many iterations
    expect(rep.rows[3].maxPartBytesPerIteration).toBeLessThan(rep.rows[1].maxPartBytesPerIteration);
    expect(rep.rows[3].iterations).toBeGreaterThanOrEqual(rep.rows[0].iterations);
  });

  it('bad requests are one-line user errors', () => {
    const a = csrToBsr(poisson2d(4), 1);
    expect(() => runScale(systemOf(a), randomVector(16, 1), recipe(), { maxParts: 17, machine: EXAMPLE_MACHINE })).toThrow(UserError);
    expect(() => runScale(systemOf(a), randomVector(16, 1), recipe({ preconditioner: 'schwarz', parts: 2 }), { maxParts: 2, machine: EXAMPLE_MACHINE })).toThrow(/--parts is set by scale/);
    const within = { maxParts: 2, machine: EXAMPLE_MACHINE, partition: { slabs: 'within' as const } };
    expect(() => runScale(systemOf(a), randomVector(16, 1), recipe(), within)).toThrow(/need slab offsets/);
    expect(() => runScale(systemOf(a, Int32Array.of(0, 4, 8, 16)), randomVector(16, 1), recipe(), within)).toThrow(/--max-parts 2 is below the 3 slabs/);
    expect(() => runScale(systemOf(a), randomVector(16, 1), recipe(), { ...within, partition: { method: 'coordinates' } })).toThrow(/needs element centroids/);
  });
});
