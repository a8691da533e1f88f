import { describe, it, expect } from 'vitest';
import {
  COMMON_RECIPE_FIELDS, KRYLOV_NAMES, KRYLOV_USES, PRECONDITIONER_NAMES, RECIPE_FIELDS, parseRecipe, recipeFromOptions,
  recordedRecipe, usedRecipeFields,
} from '../../src/solvers/recipe.js';
import { preconditionerNames, preconditionerUses, registerPreconditioner } from '../../src/precond/registry.js';

describe('recipe fields a method does not read are refused (suite files)', () => {
  it('an ordering for block Jacobi, restart or side for BiCGStab, omega with GMRES + ILU(0): one line naming the field', () => {
    expect(() => parseRecipe({ preconditioner: 'block-jacobi', ordering: 'rcm' }, 'suite.json: recipes[1]'))
      .toThrow(/^suite\.json: recipes\[1\]\.ordering: has no effect with gmres \+ block-jacobi \(read only by block-gs, block-ilu0, block-iluk, schwarz\); remove it$/);
    expect(() => parseRecipe({ krylov: 'bicgstab', restart: 50 }, 'r')).toThrow(/^r\.restart: has no effect with bicgstab \+ none \(read only by gmres, fgmres, gmres-dr, gcro-dr\)/);
    expect(() => parseRecipe({ krylov: 'bicgstab', side: 'left' }, 'r')).toThrow(/^r\.side: has no effect with bicgstab/);
    expect(() => parseRecipe({ krylov: 'fgmres', side: 'right' }, 'r')).toThrow(/^r\.side: has no effect with fgmres/);
    expect(() => parseRecipe({ preconditioner: 'ilu0', omega: 1.2 }, 'r')).toThrow(/^r\.omega: has no effect with gmres \+ ilu0 \(read only by krylov none \(stationary iteration\), block-gs, schwarz\)/);
    expect(() => parseRecipe({ preconditioner: 'none', shift: 0.1 }, 'r')).toThrow(/^r\.shift: has no effect/);
    expect(() => parseRecipe({ preconditioner: 'block-ilu0', sweeps: 2 }, 'r')).toThrow(/^r\.sweeps: /);
    expect(() => parseRecipe({ preconditioner: 'ilu0', blockInverse: 'lu' }, 'r')).toThrow(/^r\.blockInverse: /);
  });

  it('even a value equal to the default is refused when given: it still has no effect', () => {
    expect(() => parseRecipe({ preconditioner: 'block-jacobi', ordering: 'natural' }, 'r')).toThrow(/r\.ordering: has no effect/);
  });

  it('fields a method does read are accepted, including omega with a symmetric block-gs sweep (SSOR reads it)', () => {
    expect(parseRecipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.3, ordering: 'rcm', sweeps: 2, blockInverse: 'lu', shift: 0.1 }, 'r'))
      .toMatchObject({ omega: 1.3, sweep: 'symmetric' });
    expect(parseRecipe({ krylov: 'none', preconditioner: 'jacobi', omega: 0.7 }, 'r').omega).toBe(0.7);
    expect(parseRecipe({ krylov: 'gmres', restart: 10, side: 'left', orthogonalization: 'cgs2', rtol: 1e-6, atol: 1e-12, maxIterations: 5, divergence: 1e6, relativeTo: 'start-residual' }, 'r').restart).toBe(10);
    expect(parseRecipe({ preconditioner: 'block-ilu0', ordering: 'mdf', shift: 0 }, 'r').ordering).toBe('mdf');
  });

  it('inner recipes follow the same rule, named by their field path', () => {
    expect(() => parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { krylov: 'bicgstab', restart: 5 } }, 's: recipes[0]'))
      .toThrow(/^s: recipes\[0\]\.inner\.restart: has no effect with bicgstab \+ block-ilu0/);
    expect(() => parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', ordering: 'rcm' }, 'r')).toThrow(/^r\.ordering: has no effect with fgmres \+ slab/);
  });
});

describe('recipe options a method does not read are refused (command line)', () => {
  it('names the option, not the JSON field', () => {
    expect(() => recipeFromOptions({ precond: 'block-jacobi', ordering: 'mdf' })).toThrow(/^option --ordering: has no effect with gmres \+ block-jacobi/);
    expect(() => recipeFromOptions({ krylov: 'bicgstab', restart: '40' })).toThrow(/^option --restart: has no effect with bicgstab/);
    expect(() => recipeFromOptions({ krylov: 'bicgstab', side: 'left' })).toThrow(/^option --side: /);
    expect(() => recipeFromOptions({ precond: 'ilu0', omega: '1.5' })).toThrow(/^option --omega: /);
    expect(() => recipeFromOptions({ precond: 'ilu0', blockInverse: 'lu' })).toThrow(/^option --block-inverse: /);
    expect(() => recipeFromOptions({ precond: 'slab', krylov: 'fgmres', innerKrylov: 'bicgstab', innerRestart: '5' })).toThrow(/^option --inner-restart: has no effect with bicgstab/);
    expect(recipeFromOptions({ krylov: 'none', precond: 'block-gs', sweep: 'symmetric', omega: '1.2' }).omega).toBe(1.2);
  });

  it('the old spelling --order says the new one', () => {
    expect(() => recipeFromOptions({ order: 'mdf' })).toThrow(/^option --order: the block ordering option is now --ordering/);
    expect(() => recipeFromOptions({ precond: 'slab', innerOrder: 'mdf' })).toThrow(/^option --inner-order: .*--inner-ordering/);
  });
});

describe('results record only the fields a recipe’s methods read', () => {
  it('BiCGStab + block Jacobi records no restart, side, ordering, sweep or omega', () => {
    const rec = recordedRecipe(parseRecipe({ name: 'b', krylov: 'bicgstab', preconditioner: 'block-jacobi' }, 'r'));
    expect(Object.keys(rec).sort()).toEqual(['name', ...COMMON_RECIPE_FIELDS, 'blockInverse', 'shift'].sort());
  });

  it('slab keeps its trimmed inner recipe; GMRES + block-gs keeps every field it reads', () => {
    const rec = recordedRecipe(parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { krylov: 'bicgstab' } }, 'r'));
    expect(rec).toHaveProperty('inner');
    expect(rec.inner).not.toHaveProperty('restart');
    expect(rec.inner).toHaveProperty('ordering');
    expect(rec).not.toHaveProperty('side');
    const gs = recordedRecipe(parseRecipe({ preconditioner: 'block-gs' }, 'r'));
    for (const f of ['restart', 'side', 'orthogonalization', 'sweep', 'ordering', 'omega', 'sweeps', 'shift', 'blockInverse']) expect(gs).toHaveProperty(f);
  });

  it('every registered preconditioner and Krylov method declares fields that exist', () => {
    const known = new Set<string>([...RECIPE_FIELDS, 'inner', 'air', 'pMultigrid']);
    for (const name of preconditionerNames()) {
      const u = preconditionerUses(name);
      expect(u, name).not.toBe('all');
      if (u !== 'all') for (const f of u) expect(known.has(f), `${name}: ${f}`).toBe(true);
    }
    for (const k of KRYLOV_NAMES) for (const f of KRYLOV_USES[k]) expect(known.has(f)).toBe(true);
    expect(new Set(preconditionerNames())).toEqual(new Set(PRECONDITIONER_NAMES));
  });

  it('a preconditioner registered without a uses list is treated as reading every field (nothing refused or dropped)', () => {
    registerPreconditioner('test-undeclared', () => { throw new Error('not used'); });
    expect(preconditionerUses('test-undeclared')).toBe('all');
    expect(usedRecipeFields({ krylov: 'bicgstab', preconditioner: 'test-undeclared' as never })).toBe('all');
  });
});
