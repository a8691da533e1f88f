import { describe, it, expect } from 'vitest';
import { parseRecipe, recipeFromOptions, recordedRecipe } from '../../src/solvers/recipe.js';
import { DEFAULT_DEFLATE, defaultDeflate } from '../../src/solvers/options.js';

describe('recipe field deflate (gmres-dr, gcro-dr)', () => {
  it('a deflated method without deflate gets the default, recorded in results', () => {
    const r = parseRecipe({ krylov: 'gmres-dr' }, 'r');
    expect(r.deflate).toBe(DEFAULT_DEFLATE);
    expect(recordedRecipe(r).deflate).toBe(DEFAULT_DEFLATE);
    expect(parseRecipe({ krylov: 'gcro-dr', restart: 40, deflate: 15 }, 'r').deflate).toBe(15);
    expect(recipeFromOptions({ krylov: 'gcro-dr', deflate: '4', restart: '12' }).deflate).toBe(4);
    // a short cycle gets a smaller default: ⌊restart/3⌋
    expect(recipeFromOptions({ krylov: 'gcro-dr', restart: '8' }).deflate).toBe(2);
    expect(parseRecipe({ krylov: 'gmres-dr', restart: 2 }, 'r').deflate).toBe(0);
    expect([30, 31, 60, 9].map(defaultDeflate)).toEqual([10, 10, 10, 3]);
    // other methods neither read nor record it
    expect(recordedRecipe(parseRecipe({ krylov: 'gmres' }, 'r')).deflate).toBeUndefined();
  });

  it('deflate ≥ restart is refused, naming the field', () => {
    expect(() => parseRecipe({ krylov: 'gmres-dr', restart: 10, deflate: 10 }, 'suite.json: recipes[1]'))
      .toThrow(/^suite\.json: recipes\[1\]\.deflate: gmres-dr keeps deflate harmonic Ritz vectors of a restart-10 cycle, so deflate must be below restart; got deflate 10$/);
    expect(() => recipeFromOptions({ krylov: 'gcro-dr', restart: '8', deflate: '8' }))
      .toThrow(/^option --deflate: gcro-dr keeps .*got deflate 8$/);
    expect(() => recipeFromOptions({ krylov: 'gcro-dr', deflate: '-1' })).toThrow(/^option --deflate: expected an integer from 0 to 9999, got "-1"$/);
  });

  it('deflate with another method, and side with a deflated one, have no effect: refused', () => {
    expect(() => parseRecipe({ krylov: 'gmres', deflate: 5 }, 'r')).toThrow(/^r\.deflate: has no effect with gmres \+ none \(read only by gmres-dr, gcro-dr\); remove it$/);
    expect(() => recipeFromOptions({ krylov: 'bicgstab', deflate: '5' })).toThrow(/^option --deflate: has no effect/);
    expect(() => recipeFromOptions({ krylov: 'gmres-dr', side: 'left' })).toThrow(/^option --side: has no effect with gmres-dr/);
  });

  it('a slab inner recipe and a p-multigrid coarse solve may use them too', () => {
    const r = recipeFromOptions({ krylov: 'fgmres', precond: 'slab', innerKrylov: 'gmres-dr', innerDeflate: '3', innerRestart: '10' });
    expect(r.inner?.deflate).toBe(3);
    expect(parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { krylov: 'gcro-dr' } }, 'r').inner?.deflate).toBe(DEFAULT_DEFLATE);
  });

  it('refuses a variable preconditioner at the recipe level, like gmres', () => {
    expect(() => parseRecipe({ krylov: 'gmres-dr', preconditioner: 'p-multigrid' }, 'r')).toThrow(/^r\.krylov: p-multigrid with a gmres coarse solve changes between applications \(variable\); gmres-dr needs a fixed preconditioner/);
  });
});
