import { describe, it, expect } from 'vitest';
import { DEFAULT_INNER_RECIPE, DEFAULT_RECIPE, parseRecipe, recipeFromOptions } from '../../src/solvers/recipe.js';

describe('parseRecipe (suite files)', () => {
  it('fills defaults and derives a name', () => {
    const r = parseRecipe({ preconditioner: 'block-ilu0' }, 'suite.json: recipes[0]');
    expect(r).toMatchObject({ ...DEFAULT_RECIPE, preconditioner: 'block-ilu0', name: 'gmres-block-ilu0' });
    expect(r.inner).toBeUndefined();
  });

  it('names the bad field and what was expected, in one line', () => {
    expect(() => parseRecipe({ restart: 0 }, 'suite.json: recipes[2]'))
      .toThrow('suite.json: recipes[2].restart: expected an integer from 1 to 10000, got 0');
    expect(() => parseRecipe({ krylov: 'cg' }, 'r')).toThrow('r.krylov: expected one of gmres, fgmres, bicgstab, gmres-dr, gcro-dr, none, got "cg"');
    expect(() => parseRecipe({ rtol: '1e-8' }, 'r')).toThrow(/r\.rtol: expected a finite number ≥ 0 and < 1, got "1e-8"/);
    expect(() => parseRecipe({ restrat: 10 }, 'r')).toThrow(/r: unknown field "restrat"/);
    expect(() => parseRecipe([], 'r')).toThrow(/r: expected an object/);
    expect(() => parseRecipe({ name: '' }, 'r')).toThrow(/r\.name/);
  });

  it('checks fields against each other', () => {
    expect(() => parseRecipe({ preconditioner: 'block-gs', omega: 2 }, 'r')).toThrow(/r\.omega: block-gs relaxation must be below 2/);
    expect(() => parseRecipe({ krylov: 'fgmres', side: 'left' }, 'r')).toThrow(/r\.side/);
    expect(() => parseRecipe({ inner: {} }, 'r')).toThrow(/r\.inner: an inner recipe is only used by preconditioner slab/);
    expect(() => parseRecipe({ preconditioner: 'slab', inner: { preconditioner: 'slab' } }, 'r')).toThrow(/r\.inner\.preconditioner/);
    expect(() => parseRecipe({ preconditioner: 'slab', inner: { restart: -1 } }, 'r')).toThrow(/r\.inner\.restart/);
  });

  it('slab recipes get an inner recipe (DEFAULT_INNER_RECIPE when none is given)', () => {
    expect(parseRecipe({ preconditioner: 'slab' }, 'r').inner).toEqual(DEFAULT_INNER_RECIPE);
    const r = parseRecipe({ preconditioner: 'slab', krylov: 'fgmres', inner: { krylov: 'bicgstab', rtol: 1e-6 } }, 'r');
    expect(r.inner).toMatchObject({ ...DEFAULT_INNER_RECIPE, krylov: 'bicgstab', rtol: 1e-6 });
  });

  it('does not modify its input', () => {
    const input = { preconditioner: 'slab', inner: { rtol: 1e-6 } };
    const copy = JSON.parse(JSON.stringify(input));
    parseRecipe(input, 'r');
    expect(input).toEqual(copy);
  });
});

describe('recipeFromOptions (command line)', () => {
  it('parses string option values and names the flag on error', () => {
    const r = recipeFromOptions({ krylov: 'gmres', precond: 'jacobi', rtol: '1e-6', maxIters: '50', ortho: 'cgs2' });
    expect(r).toMatchObject({ krylov: 'gmres', preconditioner: 'jacobi', rtol: 1e-6, maxIterations: 50, orthogonalization: 'cgs2' });
    expect(() => recipeFromOptions({ maxIters: '5.5' })).toThrow('option --max-iters: expected an integer from 0 to 1000000000, got "5.5"');
    expect(() => recipeFromOptions({ restart: 'ten' })).toThrow(/option --restart: expected an integer/);
    expect(() => recipeFromOptions({ precond: 'block-ilu0', ordering: 'random' })).toThrow(/option --ordering: expected one of natural, rcm, downstream, mdf/);
  });

  it('inner options fill the slab inner recipe and are rejected without --precond slab', () => {
    const r = recipeFromOptions({ precond: 'slab', krylov: 'fgmres', innerKrylov: 'bicgstab', innerPrecond: 'block-jacobi', innerRtol: '1e-4' });
    expect(r.inner).toMatchObject({ krylov: 'bicgstab', preconditioner: 'block-jacobi', rtol: 1e-4 });
    expect(() => recipeFromOptions({ innerRtol: '1e-4' })).toThrow('option --inner-rtol: inner options are only used with --precond slab');
    expect(() => recipeFromOptions({ precond: 'slab', innerPrecond: 'slab' })).toThrow(/option --inner-precond/);
  });
});
