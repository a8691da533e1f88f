import { describe, it, expect } from 'vitest';
import { costText, iterationsToReach, rankMatrix, rankOptionsFor, rankRuns, verdictLine } from '../../src/report/rank.js';
import { timingNoise } from '../../src/run/timing.js';
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

/** Attach timed repeats (setup 0, solve = each value) to a run. */
function repeated(r: RunRecord, solves: number[]): RunRecord {
  const setups = solves.map(() => 0);
  const sorted = [...solves].sort((a, b) => a - b);
  const med = sorted.length % 2 ? sorted[sorted.length >> 1] : (sorted[sorted.length / 2 - 1] + sorted[sorted.length / 2]) / 2;
  r.repeats = {
    count: solves.length, warmup: true, gc: true, setupSeconds: setups, solveSeconds: [...solves],
    median: { setupSeconds: 0, solveSeconds: med, totalSeconds: med },
    min: { setupSeconds: 0, solveSeconds: sorted[0], totalSeconds: sorted[0] },
    max: { setupSeconds: 0, solveSeconds: sorted[sorted.length - 1], totalSeconds: sorted[sorted.length - 1] },
    stored: 0, consistent: true,
  };
  r.result!.timing.setupSeconds = 0;
  r.result!.timing.solveSeconds = med;
  return r;
}

const ok = (name: string, solves: number[], iterations = 10): RunRecord => repeated(run(name, 'relative-target', 0, 0, iterations, 1e-9), solves);

describe('rankMatrix: ties, noise, true residual, tolerances, partial results', () => {
  it('overlapping timed ranges share first place and no winner is declared; a clear gap gives a winner', () => {
    const m = rankMatrix([ok('a', [1.0, 1.1, 1.3]), ok('b', [1.2, 1.25, 1.4]), ok('c', [2.0, 2.1, 2.2])]);
    expect(m.ranked.map((r) => [r.run.recipe, r.rank, r.tied])).toEqual([['a', 1, true], ['b', 1, true], ['c', 3, false]]);
    expect(m.firstPlace).toEqual(['a', 'b']);
    expect(m.winner).toBeNull();
    expect(m.ranked.some((r) => r.winner)).toBe(false);
    expect(verdictLine(m)).toBe('first place shared, no winner: a 1.1 s, b 1.25 s (within the timing noise of this sweep (0.0%) or with overlapping timed ranges)');
    const clear = rankMatrix([ok('a', [1.0, 1.05, 1.1]), ok('c', [2.0, 2.1, 2.2])]);
    expect(clear.winner).toBe('a');
    expect(clear.firstPlace).toEqual(['a']);
    expect(clear.ranked[0].winner).toBe(true);
    expect(verdictLine(clear)).toBe('★ winner: a (converged, least median setup + solve time: 1.05 s; next c 2.1 s; ahead beyond noise)');
    expect(costText('work', 1.5e6)).toBe('1.5 MB');
    expect(costText('modeled', 2.5e-4)).toBe('250 µs');
    expect(costText('iterations', 12)).toBe('12 iterations');
  });

  it('medians closer than the noise tie even when the ranges do not overlap; beyond the noise they do not', () => {
    const runs = [ok('a', [1.0, 1.0, 1.0]), ok('b', [1.08, 1.08, 1.08])];
    expect(rankMatrix(runs, { noise: 0.1 }).firstPlace).toEqual(['a', 'b']); // 8% < 10%
    expect(rankMatrix(runs, { noise: 0.05 }).firstPlace).toEqual(['a']); // 8% > 5%
    expect(rankMatrix(runs, { noise: 0.05 }).winner).toBe('a');
  });

  it('the noise of a sweep is the median relative spread of its repeated runs', () => {
    // spreads: (1.2−1)/1.1, (3−1)/2, (1.1−0.9)/1 → 0.1818, 1, 0.2 → median 0.2
    const runs = [ok('a', [1, 1.1, 1.2]), ok('b', [1, 2, 3]), ok('c', [0.9, 1, 1.1]), run('single', 'relative-target', 0, 1, 1, 1e-9)];
    expect(timingNoise(runs)).toBeCloseTo(0.2, 12);
    expect(timingNoise([run('single', 'relative-target', 0, 1, 1, 1e-9)])).toBeUndefined();
  });

  it('a run the solver calls converged whose true residual misses rtol ranks as not converged, and the notes say so', () => {
    const fast = ok('left-fast', [0.1, 0.1, 0.1]);
    fast.result!.trueRelativeResidual = 3e-8; // rtol of the fixture recipe is 1e-8
    fast.result!.watched = 'left-preconditioned';
    const m = rankMatrix([fast, ok('honest', [1, 1, 1])]);
    expect(m.ranked.map((r) => r.run.recipe)).toEqual(['honest', 'left-fast']);
    expect(m.ranked[1]).toMatchObject({ converged: false, trueResidualMissed: true, rank: 2 });
    expect(m.winner).toBe('honest');
    expect(m.notes.join('\n')).toMatch(/left-fast: the solver reported convergence \(watched left-preconditioned residual\) but the true relative residual 3\.00e-8 misses rtol 1e-8: ranked as not converged/);
  });

  it('different tolerances: compares the cost of reaching the loosest common tolerance, read from the histories', () => {
    // tight: rtol 1e-10, 10 iterations in 1 s, reaches 1e-6 after 4 of them → 0.4 s at the common tolerance.
    const tight = ok('tight', [1, 1, 1], 10);
    tight.recipeParams = { ...tight.recipeParams, rtol: 1e-10 };
    tight.result!.history = [1, 1e-2, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9, 1e-9, 1e-10, 5e-11];
    tight.result!.trueRelativeResidual = 5e-11;
    const loose = ok('loose', [0.6, 0.6, 0.6], 3);
    loose.recipeParams = { ...loose.recipeParams, rtol: 1e-6 };
    loose.result!.history = [1, 1e-3, 1e-5, 9e-7];
    loose.result!.trueRelativeResidual = 9e-7;
    expect(iterationsToReach(tight, 1e-6)).toBe(4);
    const m = rankMatrix([tight, loose]);
    expect(m.commonTolerance).toBe(1e-6);
    expect(m.ranked.map((r) => r.run.recipe)).toEqual(['tight', 'loose']);
    expect(m.ranked[0].cost).toBeCloseTo(0.4, 12);
    expect(m.notes[0]).toMatch(/^recipes use different tolerances \(rtol 1e-10, 0\.000001\)|^recipes use different tolerances \(rtol 1e-10, 1e-6\)/);
    expect(rankMatrix([tight, loose], { by: 'iterations' }).ranked.map((r) => [r.run.recipe, r.cost])).toEqual([['loose', 3], ['tight', 4]]);
  });

  it('partial results (an expected recipe missing, or an unfinished sweep) declare no winner', () => {
    const runs = [ok('a', [1, 1, 1]), ok('b', [5, 5, 5])];
    expect(rankMatrix(runs, { expectedRecipes: ['a', 'b'] }).winner).toBe('a');
    const partial = rankMatrix(runs, { expectedRecipes: ['a', 'b', 'c'] });
    expect(partial).toMatchObject({ winner: null, partial: true, missing: ['c'], firstPlace: ['a'] });
    expect(verdictLine(partial)).toBe('leading: a, but no winner is declared: results are partial');
    expect(rankMatrix(runs, { incomplete: true }).winner).toBeNull();
  });

  it('rank-by work and iterations use exact counts: only equal values tie', () => {
    const a = ok('a', [3, 3, 3], 20), b = ok('b', [1, 1, 1], 20), c = ok('c', [2, 2, 2], 5);
    const work = (r: RunRecord, setup: number, solve: number) => {
      (r.result as unknown as { work: unknown }).work = {
        setup: { matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 10, bytes: setup },
        solve: { matvecs: 1, preconditionerApplies: 1, innerIterations: 0, flops: 10, bytes: solve },
      };
    };
    work(a, 100, 900); work(b, 500, 600); work(c, 100, 900);
    const byWork = rankMatrix([a, b, c], { by: 'work' });
    expect(byWork.ranked.map((r) => [r.run.recipe, r.rank, r.cost])).toEqual([['c', 1, 1000], ['a', 1, 1000], ['b', 3, 1100]]);
    expect(byWork.firstPlace).toEqual(['c', 'a']); // equal cost: listed by fewer iterations
    expect(verdictLine(byWork)).toBe('first place shared, no winner: c 1 kB, a 1 kB (equal bytes moved)');
    const byIt = rankMatrix([a, b, c], { by: 'iterations' });
    expect(byIt.ranked.map((r) => [r.run.recipe, r.rank])).toEqual([['c', 1], ['a', 2], ['b', 2]]);
    expect(byIt.winner).toBe('c');
    // modeled with rates: bytes / 1e9 B/s + flops / 1e9 flop/s
    const byModel = rankMatrix([a, b, c], { by: 'modeled', rates: { bandwidthGBs: 1, flopRateGFLOPs: 1 } });
    expect(byModel.ranked[0].cost).toBeCloseTo((1000 + 20) / 1e9, 20);
  });

  it('rankOptionsFor reads rank-by, expected recipes and noise from the document', () => {
    const doc = makeResults();
    doc.parameters.rankBy = 'iterations';
    doc.status = 'partial';
    doc.suite.recipeNames = ['gmres-bilu0', 'gmres-bjacobi'];
    const o = rankOptionsFor(doc);
    expect(o).toMatchObject({ by: 'iterations', expectedRecipes: ['gmres-bilu0', 'gmres-bjacobi'] });
    expect(o.incomplete).toBeUndefined(); // judged per matrix through the expected recipes
    expect(rankOptionsFor(doc, 'work').by).toBe('work');
  });

  it('flags runs whose repeats differed', () => {
    const r = ok('flaky', [1, 1, 1]);
    r.repeats!.consistent = false;
    r.repeats!.differences = ['repeat 2: 9 iterations, repeat 1: 10'];
    const m = rankMatrix([r]);
    expect(m.ranked[0].inconsistent).toBe(true);
    expect(m.notes.join('\n')).toContain('flaky: repeats differed (repeat 2: 9 iterations, repeat 1: 10)');
  });
});
