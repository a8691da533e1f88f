import type { ResultsDoc, RunRecord } from '../run/results-types.js';
import { modeledSeconds, runWork } from '../run/probe.js';
import { relativeSpread, timingNoise } from '../run/timing.js';

/**
 * The one ranking rule (one matrix at a time); sweep, report and check call it.
 *
 *  1. Converged runs first. "Converged" means the solver said so AND the final TRUE relative
 *     residual ‖b − Ax‖/‖b‖ (or /‖r₀‖) meets the recipe's rtol (or its atol), whatever the watched
 *     norm said: a left-preconditioned run that met rtol in ‖M⁻¹r‖ but not in ‖r‖ ranks as not
 *     converged (`trueResidualMissed`).
 *     Converged runs are ordered by the cost named by `by`:
 *       time        median setup + solve seconds over the timed repeats (the default);
 *       modeled     modeled setup + solve seconds (bytes / bandwidth + flops / flop rate);
 *       work        bytes moved, setup + solve (work counters), then flops;
 *       iterations  inner iterations.
 *     Equal costs are broken by fewer iterations, then by recipe name.
 *  2. Then runs that stopped without meeting a target (outcome unsolved or failed) or met it only in the
 *     watched norm, smallest final true relative residual first (NaN last).
 *  3. Then runs that could not start (no result, only an error).
 *
 * Ties (time only; the other costs are exact, so only equal values tie): a converged run shares the
 * rank of the leader of the group above it when their timed ranges [min, max] overlap, or when its
 * median exceeds the leader's by no more than the noise × the leader's median. The noise is the
 * sweep's own: the median over every repeated run of the sweep of (max − min) / median of setup +
 * solve seconds (timingNoise); without repeats it is 0 and only overlapping ranges (equal times) tie.
 * The first-place set is every converged run of rank 1; a winner (★) is declared only when that set
 * has one member — it beat the runner-up beyond noise — and every expected recipe ran.
 *
 * Different tolerances on one matrix: the runs are compared at the loosest common tolerance (the
 * largest rtol). Each run's cost to reach it is read from its residual history: with k the first
 * iteration whose monitored relative residual is ≤ that tolerance and N its iterations, the solve
 * part of the cost is scaled by k / N (setup is paid in full); iterations rank as k.
 */
export type RankBy = 'time' | 'modeled' | 'work' | 'iterations';
export const RANK_BY: readonly RankBy[] = ['time', 'modeled', 'work', 'iterations'];

export interface RankOptions {
  /** Cost to order converged runs by (default time). */
  by?: RankBy;
  /** Relative timing noise of the sweep (timingNoise of all its runs); default 0. */
  noise?: number;
  /** Every recipe that should have run on this matrix: a missing one makes the ranking partial (no winner). */
  expectedRecipes?: string[];
  /** The results are not complete (partial or interrupted sweep): no winner. */
  incomplete?: boolean;
  /** Rates for modeled time; default: each run's stored `modeled` seconds. */
  rates?: { bandwidthGBs: number; flopRateGFLOPs: number };
}

export interface RankedRun {
  /** 1-based rank; tied runs share the rank of their group's leader. */
  rank: number;
  run: RunRecord;
  /** Converged by the solver's own test and by the final true residual. */
  converged: boolean;
  /** setup + solve seconds: the median over repeats when there were repeats (Infinity without a result). */
  totalSeconds: number;
  /** The single clear winner of the matrix (never set when first place is shared). */
  winner: boolean;
  /** The cost compared (seconds, modeled seconds, bytes or iterations; at the common tolerance when
   *  tolerances differ); Infinity when the run has no value for it. */
  cost: number;
  /** Timed range of the cost over the repeats (by time only). */
  range?: [number, number];
  /** Shares its rank with at least one other run. */
  tied: boolean;
  /** The solver reported convergence but the true residual misses the tolerance. */
  trueResidualMissed: boolean;
  /** Repeats did not compute the same thing (iterations, stop or history differed). */
  inconsistent: boolean;
}

export interface MatrixRanking {
  by: RankBy;
  ranked: RankedRun[];
  /** Converged recipes sharing rank 1 (empty when nothing converged). */
  firstPlace: string[];
  /** The winner when first place is not shared and the ranking is complete; otherwise null. */
  winner: string | null;
  /** Some expected recipes did not run (or the sweep did not finish): no winner is declared. */
  partial: boolean;
  missing: string[];
  /** The loosest common tolerance, when the runs' rtols differ. */
  commonTolerance?: number;
  noise: number;
  /** Warnings and explanations for the table and the JSON summary. */
  notes: string[];
}

/** Converged by the solver AND by the final true residual against rtol (or atol). */
export function convergedByTrueResidual(run: RunRecord): boolean {
  const r = run.result;
  if (!r || !r.converged) return false;
  const rel = r.trueRelativeResidual;
  const p = run.recipeParams;
  if (rel <= p.rtol) return true;
  const base = r.trueReferenceNorm ?? r.referenceNorm;
  return p.atol > 0 && rel * base <= p.atol;
}

/** First iteration whose monitored relative residual is ≤ tol (the run's iterations when none is). */
export function iterationsToReach(run: RunRecord, tol: number): number {
  const r = run.result!;
  const h = r.history;
  for (let k = 0; k < h.length; k++) if (h[k] <= tol) return Math.min(k, r.iterations);
  return r.iterations;
}

interface Costed { run: RunRecord; cost: number; range?: [number, number]; converged: boolean; missed: boolean }

function costOf(run: RunRecord, by: RankBy, fraction: number, rates: RankOptions['rates']): { cost: number; range?: [number, number] } {
  const r = run.result!;
  const f = fraction;
  if (by === 'time') {
    const rep = run.repeats;
    if (rep && rep.count > 0) {
      const totals = rep.setupSeconds.map((s, i) => s + f * rep.solveSeconds[i]).sort((a, b) => a - b);
      const m = totals.length >> 1;
      const med = totals.length % 2 ? totals[m] : (totals[m - 1] + totals[m]) / 2;
      return { cost: med, range: [totals[0], totals[totals.length - 1]] };
    }
    const t = r.timing.setupSeconds + f * r.timing.solveSeconds;
    return { cost: Number.isFinite(t) ? t : Infinity, range: Number.isFinite(t) ? [t, t] : undefined };
  }
  if (by === 'iterations') return { cost: f === 1 ? r.iterations : Math.round(f * r.iterations) };
  if (by === 'modeled') {
    let m = run.modeled;
    const w = runWork(r);
    if (rates && w) m = modeledSeconds(w, rates);
    if (!m) return { cost: Infinity };
    return { cost: m.setupSeconds + f * m.solveSeconds };
  }
  const w = runWork(r);
  if (!w) return { cost: Infinity };
  return { cost: w.setup.bytes + f * w.solve.bytes };
}

function flopsOf(run: RunRecord): number {
  const w = runWork(run.result);
  return w ? w.setup.flops + w.solve.flops : Infinity;
}

function byName(a: RunRecord, b: RunRecord): number {
  return a.recipe < b.recipe ? -1 : a.recipe > b.recipe ? 1 : 0;
}

function total(run: RunRecord): number {
  if (!run.result) return Infinity;
  if (run.repeats) return run.repeats.median.totalSeconds;
  const t = run.result.timing.setupSeconds + run.result.timing.solveSeconds;
  return Number.isFinite(t) ? t : Infinity;
}

function residualKey(run: RunRecord): number {
  const r = run.result?.trueRelativeResidual;
  return r === undefined || Number.isNaN(r) ? Infinity : r;
}

function tied(leader: Costed, x: Costed, by: RankBy, noise: number): boolean {
  if (x.cost === leader.cost) return Number.isFinite(x.cost);
  if (by !== 'time') return false;
  if (leader.range && x.range && x.range[0] <= leader.range[1] && leader.range[0] <= x.range[1]) return true;
  return x.cost - leader.cost <= noise * leader.cost;
}

/** Rank the runs of one matrix by the rule above. The input array is not modified. */
export function rankMatrix(runs: RunRecord[], opts: RankOptions = {}): MatrixRanking {
  const by = opts.by ?? 'time';
  const noise = opts.noise !== undefined && Number.isFinite(opts.noise) && opts.noise > 0 ? opts.noise : 0;
  const notes: string[] = [];

  const withResult = runs.filter((r) => r.result);
  const rtols = [...new Set(withResult.map((r) => r.recipeParams.rtol))].sort((a, b) => a - b);
  const commonTolerance = rtols.length > 1 ? rtols[rtols.length - 1] : undefined;
  if (commonTolerance !== undefined) {
    notes.push(`recipes use different tolerances (rtol ${rtols.join(', ')}): compared at the loosest common one, ${commonTolerance}, `
      + 'with the cost to reach it read from the residual histories (solve cost scaled by the share of iterations)');
  }

  const converged: Costed[] = [];
  const failed: RunRecord[] = [];
  const notRun: RunRecord[] = [];
  for (const run of runs) {
    if (!run.result) { notRun.push(run); continue; }
    const ok = convergedByTrueResidual(run);
    const missed = run.result.converged && !ok;
    if (missed) {
      notes.push(`${run.recipe}: the solver reported convergence (${run.result.watched === 'plain' ? 'watched residual' : 'watched left-preconditioned residual'}) `
        + `but the true relative residual ${run.result.trueRelativeResidual.toExponential(2)} misses rtol ${run.recipeParams.rtol}: ranked as not converged`);
    }
    if (!ok) { failed.push(run); continue; }
    let fraction = 1;
    if (commonTolerance !== undefined && run.result.iterations > 0) {
      fraction = iterationsToReach(run, commonTolerance) / run.result.iterations;
    }
    converged.push({ run, converged: true, missed: false, ...costOf(run, by, fraction, opts.rates) });
  }
  const costMissing = converged.filter((c) => !Number.isFinite(c.cost)).map((c) => c.run.recipe);
  if (costMissing.length && by !== 'time') {
    notes.push(`no ${by === 'modeled' ? 'modeled time' : 'work counters'} for ${costMissing.join(', ')}: ranked after the others`);
  }
  converged.sort((a, b) => {
    if (a.cost !== b.cost) return a.cost < b.cost ? -1 : 1;
    if (by === 'work') { const d = flopsOf(a.run) - flopsOf(b.run); if (d !== 0 && !Number.isNaN(d)) return d; }
    const di = a.run.result!.iterations - b.run.result!.iterations;
    return di !== 0 ? di : byName(a.run, b.run);
  });
  failed.sort((a, b) => {
    const ra = residualKey(a), rb = residualKey(b);
    return ra !== rb ? (ra < rb ? -1 : 1) : byName(a, b);
  });
  notRun.sort(byName);

  const ranked: RankedRun[] = [];
  let leader: Costed | undefined;
  let leaderRank = 0;
  converged.forEach((c, i) => {
    let rank = i + 1;
    if (leader && tied(leader, c, by, noise)) rank = leaderRank;
    else { leader = c; leaderRank = rank; }
    ranked.push({
      rank, run: c.run, converged: true, totalSeconds: total(c.run), winner: false, cost: c.cost,
      ...(c.range ? { range: c.range } : {}), tied: false, trueResidualMissed: false, inconsistent: c.run.repeats?.consistent === false,
    });
  });
  for (const run of [...failed, ...notRun]) {
    ranked.push({
      rank: ranked.length + 1, run, converged: false, totalSeconds: total(run), winner: false, cost: Infinity, tied: false,
      trueResidualMissed: !!run.result?.converged, inconsistent: run.repeats?.consistent === false,
    });
  }
  const perRank = new Map<number, number>();
  for (const r of ranked) if (r.converged) perRank.set(r.rank, (perRank.get(r.rank) ?? 0) + 1);
  for (const r of ranked) r.tied = r.converged && (perRank.get(r.rank) ?? 0) > 1;

  const firstPlace = ranked.filter((r) => r.converged && r.rank === 1).map((r) => r.run.recipe);
  const present = new Set(runs.map((r) => r.recipe));
  const missing = (opts.expectedRecipes ?? []).filter((n) => !present.has(n));
  const partial = missing.length > 0 || opts.incomplete === true;
  if (missing.length) notes.push(`partial results: ${missing.join(', ')} did not run on this matrix, so no winner is declared`);
  else if (opts.incomplete) notes.push('the sweep did not finish: no winner is declared');
  const winner = !partial && firstPlace.length === 1 ? firstPlace[0] : null;
  if (winner) ranked.find((r) => r.run.recipe === winner)!.winner = true;
  for (const r of ranked) {
    if (r.inconsistent) notes.push(`${r.run.recipe}: repeats differed (${(r.run.repeats?.differences ?? []).join('; ')}): not deterministic, times not averaged`);
  }
  return { by, ranked, firstPlace, winner, partial, missing, ...(commonTolerance !== undefined ? { commonTolerance } : {}), noise, notes };
}

/** Rank the runs of one matrix (see rankMatrix); the ranked list only. */
export function rankRuns(runs: RunRecord[], opts: RankOptions = {}): RankedRun[] {
  return rankMatrix(runs, opts).ranked;
}

/**
 * Ranking options for one matrix of a results document: its rankBy (unless `by` is given), the
 * sweep's noise and the expected recipes (suite.recipeNames; a matrix missing some has no winner).
 */
export function rankOptionsFor(doc: ResultsDoc, by?: RankBy): RankOptions {
  const noise = timingNoise(doc.runs);
  return {
    by: by ?? doc.parameters.rankBy ?? 'time',
    ...(noise !== undefined ? { noise } : {}),
    // Completeness is judged per matrix: in a partial or interrupted sweep, a matrix on which every
    // recipe ran still has a winner; one missing recipes has none.
    ...(doc.suite.recipeNames ? { expectedRecipes: doc.suite.recipeNames } : {}),
  };
}

/** Noise in percent for messages. */
function pct(x: number): string {
  return `${(x * 100).toPrecision(2)}%`;
}

const COST_WORDS: Record<RankBy, string> = {
  time: 'median setup + solve time',
  modeled: 'modeled setup + solve time',
  work: 'bytes moved',
  iterations: 'iterations',
};

/** A cost value with its unit, three significant digits. */
export function costText(by: RankBy, cost: number): string {
  if (!Number.isFinite(cost)) return '–';
  const sig = (x: number): string => String(Number(x.toPrecision(3)));
  if (by === 'iterations') return `${cost} iterations`;
  if (by === 'work') return cost >= 1e9 ? `${sig(cost / 1e9)} GB` : cost >= 1e6 ? `${sig(cost / 1e6)} MB` : cost >= 1e3 ? `${sig(cost / 1e3)} kB` : `${cost} B`;
  return cost >= 1 ? `${sig(cost)} s` : cost >= 1e-3 ? `${sig(cost * 1e3)} ms` : `${sig(cost * 1e6)} µs`;
}

/** One sentence on the verdict: the winner, the tied first-place set, or why there is none. */
export function verdictLine(m: MatrixRanking, mark = '★'): string {
  const how = COST_WORDS[m.by];
  if (m.firstPlace.length === 0) return 'no recipe converged on this matrix (by the true residual)';
  if (m.winner) {
    const w = m.ranked.find((r) => r.winner)!;
    const next = m.ranked.find((r) => r.converged && !r.winner);
    const vs = next && Number.isFinite(next.cost) ? `; next ${next.run.recipe} ${costText(m.by, next.cost)}` : '';
    return `${mark} winner: ${m.winner} (converged, least ${how}: ${costText(m.by, w.cost)}${vs}; ahead beyond noise)`;
  }
  if (m.firstPlace.length > 1) {
    const why = m.by === 'time' ? `within the timing noise of this sweep (${pct(m.noise)}) or with overlapping timed ranges` : `equal ${how}`;
    const costs = m.ranked.filter((r) => r.converged && r.rank === 1).map((r) => `${r.run.recipe} ${costText(m.by, r.cost)}`);
    return `first place shared, no winner: ${costs.join(', ')} (${why})${m.partial ? '; results are partial' : ''}`;
  }
  return `leading: ${m.firstPlace[0]}, but no winner is declared: results are partial`;
}

/** Spread of a run's repeats in percent ("±", for tables), or undefined without repeats. */
export function spreadText(run: RunRecord): string | undefined {
  const s = relativeSpread(run.repeats);
  return s === undefined ? undefined : pct(s);
}
