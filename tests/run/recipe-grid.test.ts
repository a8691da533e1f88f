/**
 * Parameter grids in suite files (a recipe field given as a list) and `sweep --dry-run`, which
 * lists the pairs a sweep would run. Real recipe parser (src/solvers/recipe.ts), so an expanded
 * value is validated exactly as a single recipe field is.
 */
import { describe, expect, it, afterAll } from 'vitest';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { parseSuite } from '../../src/run/suite.js';
import { expandRecipeGrid, gridRecipeName, MAX_GRID_RECIPES } from '../../src/run/recipe-grid.js';
import { parseRecipe } from '../../src/solvers/recipe.js';
import { parseGeneratorParams } from '../../src/dg/generate.js';
import { tempDir } from './helpers.js';
import { ciSuite, runCli } from '../cli/cli-helpers.js';

const parsers = { parseRecipe, parseGeneratorParams };

function suiteWith(recipes: unknown[]) {
  return {
    schema: 'slabbench-suite/1',
    matrices: [{ name: 'a', file: 'a.mtx' }, { name: 'b', file: 'b.mtx' }],
    recipes,
  };
}

describe('parameter grids in suite recipes', () => {
  it('expands a list into one recipe per value, named after the value', () => {
    const s = parseSuite(suiteWith([{ name: 'ilu', krylov: 'gmres', preconditioner: 'block-ilu0', restart: [10, 30, 60] }]), 'suite.json', '/x', parsers);
    expect(s.recipes.map((r) => [r.name, r.restart])).toEqual([['ilu.restart-10', 10], ['ilu.restart-30', 30], ['ilu.restart-60', 60]]);
    expect(s.recipes.every((r) => r.preconditioner === 'block-ilu0')).toBe(true);
    expect(s.grids).toEqual([{ recipeIndex: 0, fields: ['restart'], recipes: ['ilu.restart-10', 'ilu.restart-30', 'ilu.restart-60'] }]);
  });

  it('takes the Cartesian product of several lists, last listed field fastest, and the default name as base', () => {
    const s = parseSuite(suiteWith([
      { krylov: 'gmres', preconditioner: 'block-gs', sweep: ['forward', 'symmetric'], restart: [20, 40] },
      { name: 'plain', krylov: 'gmres' },
    ]), 'suite.json', '/x', parsers);
    expect(s.recipes.map((r) => r.name)).toEqual([
      'gmres-block-gs.sweep-forward.restart-20', 'gmres-block-gs.sweep-forward.restart-40',
      'gmres-block-gs.sweep-symmetric.restart-20', 'gmres-block-gs.sweep-symmetric.restart-40', 'plain']);
    expect(s.recipes.slice(0, 4).map((r) => `${r.sweep}/${r.restart}`)).toEqual(['forward/20', 'forward/40', 'symmetric/20', 'symmetric/40']);
    expect(s.grids).toHaveLength(1);
  });

  it('changes the fingerprint when a grid value changes', () => {
    const a = parseSuite(suiteWith([{ krylov: 'gmres', restart: [10, 30] }]), 'suite.json', '/x', parsers).fingerprint;
    const b = parseSuite(suiteWith([{ krylov: 'gmres', restart: [10, 31] }]), 'suite.json', '/x', parsers).fingerprint;
    expect(a).not.toBe(b);
  });

  const refusals: [string, unknown, RegExp][] = [
    ['an empty list', { krylov: 'gmres', restart: [] }, /suite\.json: recipes\[0\]\.restart: expected a value or a non-empty list of values, got \[\]/],
    ['a repeated value', { krylov: 'gmres', restart: [10, 10] }, /recipes\[0\]\.restart\[1\]: 10 is listed twice/],
    ['a nested list', { krylov: 'gmres', restart: [[10]] }, /recipes\[0\]\.restart\[0\]: expected a number, string or boolean in a grid list/],
    ['a list of names', { name: ['a', 'b'], krylov: 'gmres' }, /recipes\[0\]\.name: expected a string, got a list/],
    ['an invalid grid value', { krylov: 'gmres', restart: [10, 0] }, /recipes\[0\]\.restart: expected an integer from 1 to 10000, got 0 \(grid point restart = 0\)/],
    ['an unknown field', { krylov: 'gmres', restrat: [10, 20] }, /recipes\[0\]: unknown field "restrat"/],
    ['a name clash', [{ name: 'x.restart-10', krylov: 'gmres' }, { name: 'x', krylov: 'gmres', restart: [10, 20] }], /recipes\[1\]\.name: duplicate recipe name "x\.restart-10" \(also recipes\[0\]\)/],
  ];
  for (const [what, recipe, msg] of refusals) {
    it(`refuses ${what} with a one-line message naming the field`, () => {
      const recipes = Array.isArray(recipe) ? recipe : [recipe];
      expect(() => parseSuite(suiteWith(recipes), 'suite.json', '/x', parsers)).toThrow(msg);
    });
  }

  it('refuses a grid larger than the limit before expanding it', () => {
    const many = Array.from({ length: 40 }, (_, i) => i + 1);
    expect(() => expandRecipeGrid({ restart: many, maxIterations: many }, 'at')).toThrow(`at: the grid over restart (40) × maxIterations (40) expands to 1600 recipes, more than ${MAX_GRID_RECIPES}`);
    expect(gridRecipeName('b', [['rtol', 1e-10], ['side', 'left']])).toBe('b.rtol-1e-10.side-left');
  });
});

describe('slabbench sweep --dry-run', () => {
  const t = tempDir('slabbench-dry-run-');
  afterAll(() => t.cleanup());

  it('lists the pairs with grids expanded and selection and shard applied, running nothing', async () => {
    const suite = ciSuite(t.dir, 'grid.json', [
      { name: 'bj', krylov: 'gmres', preconditioner: 'block-jacobi', restart: [10, 20] },
      { name: 'gs', krylov: 'gmres', preconditioner: 'block-gs' },
    ]);
    const out = join(t.dir, 'never');
    const r = await runCli(['sweep', suite, '--dry-run']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/6 pairs would run; nothing was run/);
    expect(r.stdout).toMatch(/ci-corridor\s+bj\.restart-20\s+file /);
    expect(r.stdout).toMatch(/recipes\[0\] is a grid over restart: 2 recipes \(bj\.restart-10, bj\.restart-20\)/);
    expect(existsSync(out)).toBe(false);

    const j = await runCli(['sweep', suite, '--dry-run', '--json', '--only-recipe', 'bj.restart-20', '--shard', '2/2']);
    expect(j.code).toBe(0);
    const plan = JSON.parse(j.stdout) as { pairs: { matrix: string; recipe: string; fields: { restart: number } }[] };
    expect(plan.pairs.map((p) => `${p.matrix}/${p.recipe}/${p.fields.restart}`)).toEqual(['ci-corridor/bj.restart-20/20']);
  });

  it('refuses options that only shape a run', async () => {
    const suite = ciSuite(t.dir, 'plain.json', [{ name: 'bj', krylov: 'gmres', preconditioner: 'block-jacobi' }]);
    const r = await runCli(['sweep', suite, '--dry-run', '--jobs', '2']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/option --jobs: has no effect with --dry-run, which runs nothing/);
  });
});
