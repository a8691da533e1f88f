import { describe, it, expect } from 'vitest';
import { rankRuns } from '../../src/report/rank.js';
import type { RunRecord } from '../../src/run/results-types.js';
import { isSolved, outcomeOf, type Cause } from '../../src/solvers/types.js';
import { makeResults } from './fixture.js';

/** A run with only the fields the ranking reads filled meaningfully (the rest from the fixture). */
function run(recipe: string, cause: Cause, setup: number, solve: number, iterations: number, trueRes: number): RunRecord {
  const base = makeResults().runs[0];
  const r = structuredClone(base);
  r.recipe = recipe;
  const res = r.result!;
  res.cause = cause;
  res.outcome = outcomeOf(cause);
  res.converged = isSolved(cause);
  res.timing.setupSeconds = setup;
  res.timing.solveSeconds = solve;
  res.iterations = iterations;
  res.trueRelativeResidual = trueRes;
  return r;
}

describe('rankRuns', () => {
  it('puts converged runs first by setup + solve time, then the rest by true residual', () => {
    const runs = [
      run('slow-ok', 'relative-target', 0.5, 1.0, 10, 1e-9), // total 1.5
      run('stuck-close', 'iteration-budget', 0.0, 0.1, 1000, 1e-5),
      run('fast-ok', 'relative-target', 0.9, 0.2, 50, 1e-9), // total 1.1: wins despite more iterations
      run('residual-growth', 'residual-growth', 0.0, 0.01, 5, 1e4),
      run('stuck-far', 'iteration-budget', 0.0, 0.1, 1000, 1e-2),
    ];
    const ranked = rankRuns(runs);
    expect(ranked.map((r) => r.run.recipe)).toEqual(['fast-ok', 'slow-ok', 'stuck-close', 'stuck-far', 'residual-growth']);
    expect(ranked.map((r) => r.rank)).toEqual([1, 2, 3, 4, 5]);
    expect(ranked.map((r) => r.winner)).toEqual([true, false, false, false, false]);
    expect(ranked[0].totalSeconds).toBeCloseTo(1.1, 12);
  });

  it('breaks equal total time by fewer iterations, then by recipe name', () => {
    const ranked = rankRuns([
      run('b', 'relative-target', 0.25, 0.75, 30, 1e-9),
      run('a-more-its', 'absolute-target', 0.5, 0.5, 31, 1e-9),
      run('a', 'relative-target', 0.5, 0.5, 30, 1e-9),
    ]);
    expect(ranked.map((r) => r.run.recipe)).toEqual(['a', 'b', 'a-more-its']);
  });

  it('has no winner when nothing converged, ranks a NaN residual and unstarted runs last', () => {
    const noResult: RunRecord = { matrix: 'm', recipe: 'broken', recipeParams: makeResults().runs[0].recipeParams, error: 'invalid recipe' };
    const ranked = rankRuns([
      noResult,
      run('nan', 'non-finite-value', 0, 0.1, 3, NaN),
      run('pf', 'preconditioner-error', 0.1, 0, 0, 1),
    ]);
    expect(ranked.map((r) => r.run.recipe)).toEqual(['pf', 'nan', 'broken']);
    expect(ranked.some((r) => r.winner)).toBe(false);
    expect(ranked[2].totalSeconds).toBe(Infinity);
  });

  it('does not depend on input order and leaves the input unmodified', () => {
    const runs = makeResults().runs.filter((r) => r.matrix === 'tank-stir');
    const before = JSON.stringify(runs);
    const a = rankRuns(runs).map((r) => r.run.recipe);
    const b = rankRuns([...runs].reverse()).map((r) => r.run.recipe);
    expect(a).toEqual(b);
    expect(a).toEqual(['gmres-bilu0', 'gmres-bjacobi', 'bicgstab-jacobi']);
    expect(JSON.stringify(runs)).toBe(before);
  });
});
