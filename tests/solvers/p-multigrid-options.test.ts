import { describe, it, expect } from 'vitest';
import {
  DEFAULT_PMG_COARSE_RECIPE, DEFAULT_PMG_SMOOTHER, defaultPMultigrid, parseRecipe, pMultigridIsVariable, recipeFromOptions, recordedRecipe,
} from '../../src/solvers/recipe.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { krylovSolve } from '../../src/solvers/krylov.js';
import { bsrOperator } from '../../src/solvers/operator.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { UserError } from '../../src/util/errors.js';
import { randomBsr, recipe, systemOf } from '../precond/helpers.js';

const modes = { nEquations: 1, arrangement: 'equation-major', degrees: [0, 1, 1] } as const;
const fgmresPmg = { krylov: 'fgmres', preconditioner: 'p-multigrid' };

describe('recipe field pMultigrid (suite files)', () => {
  it('fills the documented defaults', () => {
    const r = parseRecipe(fgmresPmg, 'r');
    expect(r.pMultigrid).toEqual({
      cycle: 'v', preSweeps: 1, postSweeps: 1,
      smoother: { preconditioner: 'block-gs', omega: 1, sweep: 'symmetric', ordering: 'natural', blockInverse: 'inverse', shift: 0, fillLevel: 1 },
      coarse: { ...DEFAULT_PMG_COARSE_RECIPE },
    });
    expect(r.pMultigrid?.levels).toBeUndefined();
    expect(DEFAULT_PMG_COARSE_RECIPE).toMatchObject({ krylov: 'gmres', restart: 30, preconditioner: 'block-ilu0', rtol: 1e-6, maxIterations: 200 });
    expect(DEFAULT_PMG_SMOOTHER.preconditioner).toBe('block-gs');
  });

  it('accepts every option', () => {
    const r = parseRecipe({
      ...fgmresPmg, pMultigrid: {
        levels: [3, 1, 0], cycle: 'w', preSweeps: 2, postSweeps: 0,
        smoother: { preconditioner: 'block-jacobi', omega: 0.7, blockInverse: 'lu', shift: 0.1 },
        coarse: { krylov: 'none', preconditioner: 'block-ilu0', ordering: 'rcm', rtol: 0, maxIterations: 4 },
      },
    }, 'r');
    expect(r.pMultigrid).toMatchObject({ levels: [3, 1, 0], cycle: 'w', preSweeps: 2, postSweeps: 0 });
    expect(r.pMultigrid?.smoother).toMatchObject({ preconditioner: 'block-jacobi', omega: 0.7, blockInverse: 'lu', shift: 0.1 });
    expect(r.pMultigrid?.coarse).toMatchObject({ name: 'pmg-coarse', krylov: 'none', ordering: 'rcm', rtol: 0, maxIterations: 4 });
    expect(pMultigridIsVariable(r.pMultigrid!)).toBe(false);
  });

  it.each([
    [{ pMultigrid: 3 }, /^r\.pMultigrid: expected an object with p-multigrid options/],
    [{ pMultigrid: { level: [1, 0] } }, /^r\.pMultigrid: unknown field "level"/],
    [{ pMultigrid: { levels: [2] } }, /^r\.pMultigrid\.levels: expected a list of at least 2 polynomial degrees, finest first, got \[2\]$/],
    [{ pMultigrid: { levels: '2,1' } }, /^r\.pMultigrid\.levels: expected a list/],
    [{ pMultigrid: { levels: [1, 2] } }, /^r\.pMultigrid\.levels: expected strictly decreasing degrees \(finest first\), got \[1, 2\]$/],
    [{ pMultigrid: { levels: [2, 1, 1] } }, /strictly decreasing/],
    [{ pMultigrid: { levels: [2, -1] } }, /^r\.pMultigrid\.levels: expected integer degrees 0\.\.1000/],
    [{ pMultigrid: { levels: [2, 0.5] } }, /integer degrees/],
    [{ pMultigrid: { cycle: 'f' } }, /^r\.pMultigrid\.cycle: expected one of v, w, got "f"$/],
    [{ pMultigrid: { preSweeps: -1 } }, /^r\.pMultigrid\.preSweeps: expected an integer from 0 to 100, got -1$/],
    [{ pMultigrid: { postSweeps: 1.5 } }, /^r\.pMultigrid\.postSweeps: expected an integer/],
    [{ pMultigrid: { preSweeps: 0, postSweeps: 0 } }, /^r\.pMultigrid\.postSweeps: preSweeps and postSweeps are both 0/],
    [{ pMultigrid: { smoother: 'block-gs' } }, /^r\.pMultigrid\.smoother: expected an object/],
    [{ pMultigrid: { smoother: { preconditioner: 'slab' } } }, /^r\.pMultigrid\.smoother\.preconditioner: expected one of jacobi, block-jacobi, block-gs, ilu0, block-ilu0, block-iluk, got "slab"$/],
    [{ pMultigrid: { smoother: { preconditioner: 'p-multigrid' } } }, /smoother\.preconditioner: expected one of/],
    [{ pMultigrid: { smoother: { omega: 2 } } }, /^r\.pMultigrid\.smoother\.omega: expected a finite number > 0 and < 2, got 2$/],
    [{ pMultigrid: { smoother: { omega: 0 } } }, /smoother\.omega: expected a finite number > 0/],
    [{ pMultigrid: { smoother: { sweep: 'sideways' } } }, /^r\.pMultigrid\.smoother\.sweep: expected one of forward, backward, symmetric/],
    [{ pMultigrid: { smoother: { ordering: 'random' } } }, /^r\.pMultigrid\.smoother\.ordering: expected one of natural, rcm, downstream, mdf/],
    [{ pMultigrid: { smoother: { blockInverse: 'qr' } } }, /^r\.pMultigrid\.smoother\.blockInverse: expected one of lu, inverse/],
    [{ pMultigrid: { smoother: { shift: -1 } } }, /^r\.pMultigrid\.smoother\.shift: expected a finite number ≥ 0/],
    [{ pMultigrid: { smoother: { sweeps: 2 } } }, /^r\.pMultigrid\.smoother: unknown field "sweeps"/],
    [{ pMultigrid: { smoother: { preconditioner: 'block-jacobi', sweep: 'forward' } } }, /^r\.pMultigrid\.smoother\.sweep: not used by smoother block-jacobi \(it reads omega, blockInverse, shift\)$/],
    [{ pMultigrid: { smoother: { preconditioner: 'block-ilu0', blockInverse: 'lu' } } }, /smoother\.blockInverse: not used by smoother block-ilu0/],
    [{ pMultigrid: { smoother: { preconditioner: 'jacobi', ordering: 'rcm' } } }, /smoother\.ordering: not used by smoother jacobi/],
    [{ pMultigrid: { smoother: { fillLevel: 2 } } }, /smoother\.fillLevel: not used by smoother block-gs/],
    [{ pMultigrid: { smoother: { preconditioner: 'block-iluk', fillLevel: 65 } } }, /smoother\.fillLevel: expected an integer from 0 to 64, got 65/],
    [{ pMultigrid: { coarse: 'gmres' } }, /^r\.pMultigrid\.coarse: expected an object with recipe fields$/],
    [{ pMultigrid: { coarse: { restart: 0 } } }, /^r\.pMultigrid\.coarse\.restart: expected an integer from 1 to 10000, got 0$/],
    [{ pMultigrid: { coarse: { preconditioner: 'slab' } } }, /^r\.pMultigrid\.coarse\.preconditioner: the coarse solve cannot use slab/],
    [{ pMultigrid: { coarse: { preconditioner: 'p-multigrid' } } }, /^r\.pMultigrid\.coarse\.preconditioner: the coarse solve cannot use p-multigrid/],
    [{ pMultigrid: { coarse: { pMultigrid: {} } } }, /^r\.pMultigrid\.coarse\.pMultigrid: the coarse solve cannot itself use p-multigrid/],
    [{ pMultigrid: { coarse: { inner: {} } } }, /^r\.pMultigrid\.coarse\.inner: /],
    [{ pMultigrid: { coarse: { magic: 1 } } }, /^r\.pMultigrid\.coarse: unknown field "magic"/],
  ])('%j → one-line error naming the field', (extra, pattern) => {
    let err: unknown;
    try { parseRecipe({ ...fgmresPmg, ...extra }, 'r'); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(UserError);
    expect((err as Error).message).not.toContain('\n');
    expect((err as Error).message).toMatch(pattern);
  });

  it('p-multigrid options without preconditioner p-multigrid are an error (an option without effect)', () => {
    expect(() => parseRecipe({ krylov: 'fgmres', preconditioner: 'block-jacobi', pMultigrid: {} }, 'r'))
      .toThrow(/^r\.pMultigrid: p-multigrid options are only used by preconditioner p-multigrid$/);
  });

  it('GMRES refuses a variable p-multigrid (Krylov coarse solve) at parse time; FGMRES and a fixed coarse solve are accepted', () => {
    expect(() => parseRecipe({ preconditioner: 'p-multigrid' }, 'suite.json: recipes[4]'))
      .toThrow(/^suite\.json: recipes\[4\]\.krylov: p-multigrid with a gmres coarse solve changes between applications \(variable\); gmres needs a fixed preconditioner: use krylov fgmres/);
    expect(() => parseRecipe({ krylov: 'bicgstab', preconditioner: 'p-multigrid' }, 'r')).toThrow(/r\.krylov: .*variable/);
    expect(() => parseRecipe({ preconditioner: 'p-multigrid', pMultigrid: { coarse: { krylov: 'none', maxIterations: 5 } } }, 'r'))
      .toThrow(/stationary coarse solve that stops at rtol/);
    expect(parseRecipe({ preconditioner: 'p-multigrid', pMultigrid: { coarse: { krylov: 'none', rtol: 0, maxIterations: 5 } } }, 'r').krylov).toBe('gmres');
    expect(parseRecipe({ preconditioner: 'p-multigrid', pMultigrid: { coarse: { krylov: 'none', maxIterations: 1 } } }, 'r').krylov).toBe('gmres');
    expect(parseRecipe(fgmresPmg, 'r').krylov).toBe('fgmres');
  });

  it('works as the slab inner recipe', () => {
    const r = parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { krylov: 'fgmres', preconditioner: 'p-multigrid', pMultigrid: { cycle: 'w' } } }, 'r');
    expect(r.inner?.pMultigrid?.cycle).toBe('w');
    expect(() => parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { preconditioner: 'p-multigrid' } }, 'r')).toThrow(/^r\.inner\.krylov: p-multigrid/);
  });

  it('does not modify its input', () => {
    const input = { ...fgmresPmg, pMultigrid: { levels: [2, 0], smoother: { omega: 0.5 }, coarse: { rtol: 1e-3 } } };
    const copy = JSON.parse(JSON.stringify(input));
    parseRecipe(input, 'r');
    expect(input).toEqual(copy);
  });
});

describe('--pmg-… options (command line)', () => {
  it('fill the options of the p-multigrid recipe', () => {
    const r = recipeFromOptions({
      krylov: 'fgmres', precond: 'p-multigrid', pmgLevels: '3, 1,0', pmgCycle: 'w', pmgPreSweeps: '2', pmgPostSweeps: '3',
      pmgSmoother: 'block-jacobi', pmgSmootherOmega: '0.6', pmgSmootherBlockInverse: 'lu',
      pmgCoarseKrylov: 'bicgstab', pmgCoarsePrecond: 'block-jacobi', pmgCoarseRtol: '1e-4', pmgCoarseMaxIters: '50',
    });
    expect(r.pMultigrid).toMatchObject({ levels: [3, 1, 0], cycle: 'w', preSweeps: 2, postSweeps: 3 });
    expect(r.pMultigrid?.smoother).toMatchObject({ preconditioner: 'block-jacobi', omega: 0.6, blockInverse: 'lu' });
    expect(r.pMultigrid?.coarse).toMatchObject({ krylov: 'bicgstab', preconditioner: 'block-jacobi', rtol: 1e-4, maxIterations: 50 });
    expect(recipeFromOptions({ krylov: 'fgmres', precond: 'p-multigrid' }).pMultigrid).toEqual(defaultPMultigrid());
  });

  it('apply to the slab inner recipe when that one is p-multigrid', () => {
    const r = recipeFromOptions({ krylov: 'fgmres', precond: 'slab', innerKrylov: 'fgmres', innerPrecond: 'p-multigrid', pmgCycle: 'w' });
    expect(r.inner?.pMultigrid?.cycle).toBe('w');
    expect(r.pMultigrid).toBeUndefined();
  });

  it.each([
    [{ precond: 'block-jacobi', pmgCycle: 'w' }, 'option --pmg-cycle: p-multigrid options are only used with --precond p-multigrid (or --inner-precond p-multigrid)'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgLevels: '2' }, 'option --pmg-levels: expected a comma-separated list of at least 2 polynomial degrees, finest first, got "2"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgLevels: '1,2' }, 'option --pmg-levels: expected strictly decreasing degrees (finest first), got "1,2"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgLevels: 'two,one' }, 'option --pmg-levels: expected a comma-separated list of at least 2 polynomial degrees, finest first, got "two,one"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgCycle: 'x' }, 'option --pmg-cycle: expected one of v, w, got "x"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgPreSweeps: '0', pmgPostSweeps: '0' }, 'option --pmg-post-sweeps: preSweeps and postSweeps are both 0: the levels above the coarsest would do nothing'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgSmoother: 'slab' }, 'option --pmg-smoother: expected one of jacobi, block-jacobi, block-gs, ilu0, block-ilu0, block-iluk, got "slab"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgSmootherOmega: '2.5' }, 'option --pmg-smoother-omega: expected a finite number > 0 and < 2, got "2.5"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgSmoother: 'jacobi', pmgSmootherSweep: 'forward' }, 'option --pmg-smoother-sweep: not used by smoother jacobi (it reads omega, shift)'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgSmootherOrdering: 'mdf', pmgSmoother: 'block-jacobi' }, 'option --pmg-smoother-ordering: not used by smoother block-jacobi (it reads omega, blockInverse, shift)'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgCoarseRtol: '2' }, 'option --pmg-coarse-rtol: expected a finite number ≥ 0 and < 1, got "2"'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgCoarsePrecond: 'slab' }, 'option --pmg-coarse-precond: the coarse solve cannot use slab; expected a single-level preconditioner'],
    [{ krylov: 'fgmres', precond: 'p-multigrid', pmgCoarseKrylov: 'fgmres', pmgCoarseSide: 'left' }, 'option --pmg-coarse-side: fgmres preconditions on the right only'],
    [{ precond: 'p-multigrid' }, /^option --krylov: p-multigrid with a gmres coarse solve changes between applications/],
  ])('%j → %s', (opts, message) => {
    let err: unknown;
    try { recipeFromOptions(opts); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(UserError);
    if (typeof message === 'string') expect((err as Error).message).toBe(message);
    else expect((err as Error).message).toMatch(message);
  });

  it('a fixed coarse solve (krylov none, rtol 0) makes p-multigrid acceptable to plain GMRES', () => {
    const r = recipeFromOptions({ precond: 'p-multigrid', pmgCoarseKrylov: 'none', pmgCoarseRtol: '0', pmgCoarseMaxIters: '3' });
    expect(r.krylov).toBe('gmres');
    expect(pMultigridIsVariable(r.pMultigrid!)).toBe(false);
  });
});

describe('the matrix side: layout field modes, and GMRES refusing a variable preconditioner at run time', () => {
  const a = randomBsr(6, 3, [[0, 1], [1, 0], [2, 3], [4, 5], [5, 2]], 11);

  it('a matrix without the layout section modes gets a one-line error naming the missing field', () => {
    let err: unknown;
    try { createPreconditioner(systemOf(a), recipe({ name: 'mine', krylov: 'fgmres', preconditioner: 'p-multigrid' })); } catch (e) { err = e; }
    expect(err).toBeInstanceOf(UserError);
    expect((err as Error).message).toMatch(/^recipe mine: p-multigrid needs the layout field "modes" \(\{ nEquations, arrangement, degrees \}/);
    expect((err as Error).message).not.toContain('\n');
  });

  it('modes that do not fit the block size, degree 0 only, or levels not starting at p are errors', () => {
    const sys = (m: unknown) => ({ ...systemOf(a), modes: m as typeof modes });
    const r = recipe({ name: 'mine', krylov: 'fgmres', preconditioner: 'p-multigrid', pMultigrid: defaultPMultigrid() });
    expect(() => createPreconditioner(sys({ nEquations: 1, arrangement: 'equation-major', degrees: [0, 1] }), r))
      .toThrow(/^recipe mine: layout field modes describes 1 × 2 = 2 unknowns per block, but the block size is 3$/);
    const p0 = createPreconditioner(sys({ nEquations: 3, arrangement: 'mode-major', degrees: [0] }), r).setup();
    expect(p0.ok).toBe(false);
    expect(!p0.ok && p0.message).toMatch(/^p-multigrid: layout field modes\.degrees has degree 0 only/);
    expect(() => createPreconditioner(sys(modes), { ...r, pMultigrid: { ...defaultPMultigrid(), levels: [2, 0] } }))
      .toThrow(/^recipe mine: pMultigrid\.levels \[2, 0\] must start at the matrix's degree 1/);
  });

  it('krylovSolve and solveSystem refuse gmres with a variable preconditioner, naming the recipe (before setup)', () => {
    const sys = { ...systemOf(a), modes };
    const gm = recipe({ name: 'sneaky', krylov: 'gmres', preconditioner: 'p-multigrid', pMultigrid: defaultPMultigrid() });
    const b = new Float64Array(18).fill(1);
    expect(() => solveSystem(sys, b, gm)).toThrow(/^recipe sneaky: preconditioner p-multigrid changes between applications \(variable: it runs an inner iterative solve\); gmres needs a fixed preconditioner, use krylov fgmres$/);
    const M = createPreconditioner(sys, gm);
    expect(M.variable).toBe(true);
    expect(M.setup().ok).toBe(true);
    expect(() => krylovSolve(bsrOperator(a), b, new Float64Array(18), gm, M)).toThrow(/^recipe sneaky: .*use krylov fgmres$/);
    // the slab preconditioner with an iterative inner solve is refused the same way
    const slab = recipe({ name: 'slabby', krylov: 'gmres', preconditioner: 'slab', inner: recipe({ preconditioner: 'block-ilu0', rtol: 1e-10 }) });
    expect(() => solveSystem(systemOf(a), b, slab)).toThrow(/^recipe slabby: preconditioner slab changes between applications/);
    // FGMRES takes it
    expect(solveSystem(sys, b, { ...gm, krylov: 'fgmres' }).result.converged).toBe(true);
  });
});

describe('option applicability (fields p-multigrid does not read are errors; results record pMultigrid)', () => {
  it('an outer field p-multigrid does not read is refused; the coarse recipe is checked the same way', () => {
    expect(() => parseRecipe({ ...fgmresPmg, sweep: 'backward' }, 'r')).toThrow(/^r\.sweep: has no effect with fgmres \+ p-multigrid/);
    expect(() => parseRecipe({ ...fgmresPmg, shift: 0.1 }, 'r')).toThrow(/^r\.shift: has no effect/);
    expect(() => parseRecipe({ ...fgmresPmg, pMultigrid: { coarse: { preconditioner: 'block-ilu0', sweep: 'forward' } } }, 'r'))
      .toThrow(/^r\.pMultigrid\.coarse\.sweep: has no effect with gmres \+ block-ilu0/);
    expect(() => recipeFromOptions({ krylov: 'fgmres', precond: 'p-multigrid', pmgCoarseSweep: 'forward' }))
      .toThrow(/^option --pmg-coarse-sweep: has no effect with gmres \+ block-ilu0/);
  });

  it('recordedRecipe keeps the pMultigrid options', () => {
    const r = parseRecipe({ ...fgmresPmg, pMultigrid: { cycle: 'w' } }, 'r');
    expect(recordedRecipe(r).pMultigrid?.cycle).toBe('w');
    expect(recordedRecipe(r)).not.toHaveProperty('sweep');
  });
});
