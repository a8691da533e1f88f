import type { RunRecord } from '../run/results-types.js';

/**
 * Ranking rule (one matrix at a time):
 *  1. Converged runs first, fastest total time (setup + solve seconds) first; equal times are
 *     broken by fewer iterations.
 *  2. Then runs that stopped without meeting a target (outcome unsolved or failed: iteration-budget,
 *     residual-growth, method-breakdown, preconditioner-error, non-finite-value), smallest final TRUE relative residual first
 *     (a NaN residual counts as worst).
 *  3. Then runs that could not start (no result, only an error).
 * Remaining ties are broken by recipe name so the order never depends on input order.
 * The winner is the first converged run; a matrix where nothing converged has no winner.
 */
export interface RankedRun {
  /** 1-based position in the ranking. */
  rank: number;
  run: RunRecord;
  converged: boolean;
  /** setup + solve seconds (Infinity when the run has no result). */
  totalSeconds: number;
  winner: boolean;
}

function group(run: RunRecord): 0 | 1 | 2 {
  if (!run.result) return 2;
  return run.result.converged ? 0 : 1;
}

function total(run: RunRecord): number {
  if (!run.result) return Infinity;
  const t = run.result.timing.setupSeconds + run.result.timing.solveSeconds;
  return Number.isFinite(t) ? t : Infinity;
}

function residualKey(run: RunRecord): number {
  const r = run.result?.trueRelativeResidual;
  return r === undefined || Number.isNaN(r) ? Infinity : r;
}

function compare(a: RunRecord, b: RunRecord): number {
  const ga = group(a), gb = group(b);
  if (ga !== gb) return ga - gb;
  if (ga === 0) {
    const dt = total(a) - total(b);
    if (dt !== 0 && !Number.isNaN(dt)) return dt;
    const di = a.result!.iterations - b.result!.iterations;
    if (di !== 0) return di;
  } else if (ga === 1) {
    const ra = residualKey(a), rb = residualKey(b);
    if (ra !== rb) return ra < rb ? -1 : 1;
  }
  return a.recipe < b.recipe ? -1 : a.recipe > b.recipe ? 1 : 0;
}

/** Rank the runs of one matrix by the rule above. The input array is not modified. */
export function rankRuns(runs: RunRecord[]): RankedRun[] {
  const sorted = [...runs].sort(compare);
  let winnerSeen = false;
  return sorted.map((run, i) => {
    const converged = group(run) === 0;
    const winner = converged && !winnerSeen;
    if (winner) winnerSeen = true;
    return { rank: i + 1, run, converged, totalSeconds: total(run), winner };
  });
}
