// Block Gauss–Seidel under a reordering. Setup keeps A in place and only changes the order in
// which block rows are visited; by definition the preconditioner of P A Pᵀ in natural order,
// conjugated back (z = Pᵀ M(PAPᵀ)⁻¹ P r), is the same operator (derived: a sweep is defined by
// its visiting order alone), so both must give the same vector to rounding.
import { describe, expect, it } from 'vitest';
import { createBlockGs } from '../../src/precond/block-gs.js';
import { orderingPermutation } from '../../src/precond/block-tools.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { randomBsr, recipe, reorderedApplyDifference, rng, systemOf } from './helpers.js';

describe('block Gauss–Seidel under a reordering equals block Gauss–Seidel of the explicitly permuted matrix', () => {
  const nb = 14, bs = 3;
  const r = rng(44);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
  const a = randomBsr(nb, bs, pattern, 45);
  for (const ordering of ['rcm', 'downstream', 'mdf'] as const) {
    for (const [sweep, sweeps, omega, blockInverse] of [
      ['forward', 1, 1, 'inverse'], ['backward', 2, 0.8, 'lu'], ['symmetric', 1, 1.3, 'inverse'],
    ] as const) {
      it(`${ordering}, ${sweep} ×${sweeps}, ω ${omega}, ${blockInverse}`, () => {
        const over = { preconditioner: 'block-gs' as const, sweep, sweeps, omega, blockInverse };
        const M = createBlockGs(systemOf(a), recipe({ ...over, ordering }));
        expect(M.setup().ok).toBe(true);
        const perm = orderingPermutation(a, ordering, undefined);
        expect(perm).not.toBeNull();
        const pa = permuteBsr(a, perm!);
        const N = createBlockGs(systemOf(pa), recipe({ ...over, ordering: 'natural' }));
        expect(N.setup().ok).toBe(true);
        expect(reorderedApplyDifference(M, N, perm!, bs, 46)).toBeLessThan(1e-13);
        // memory: no copy of the matrix, only the visiting order and its inverse
        expect(M.memory()['visiting order and its inverse']).toBe(2 * nb * 4);
        expect(Object.keys(M.memory()).some((k) => k.includes('matrix'))).toBe(false);
      });
    }
  }
});
