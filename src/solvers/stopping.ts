import type { StopReason } from './types.js';

/**
 * Stop rules and monitor voting, shared by every solver.
 *
 * Each monitor (residual test, divergence bound, user callback…) casts a vote; votes combine by
 * rank: a failure beats "continue", which beats a success, which beats an abstention. So a
 * recursive estimate that says "converged" while the recomputed true residual says "continue"
 * continues, and a non-finite value ends the run whatever else was voted.
 */
export type Vote = 'abstain' | 'continue' | StopReason;

const RANK: Record<Vote, number> = {
  abstain: 0,
  'converged-atol': 1,
  'converged-rtol': 2,
  continue: 3,
  'max-iterations': 4,
  diverged: 5,
  breakdown: 6,
  'preconditioner-failed': 7,
  'non-finite': 8,
};

/** The winning vote of two (associative and commutative, so fold any number of votes). */
export function combineVotes(a: Vote, b: Vote): Vote {
  return RANK[a] >= RANK[b] ? a : b;
}

/** True when the vote ends the run (a success or a failure). */
export function isStop(v: Vote): v is StopReason {
  return v !== 'abstain' && v !== 'continue';
}

export interface StopRule {
  rtol: number;
  atol: number;
  divergence: number;
  /** The norm relative residuals divide by (‖b‖ or ‖r₀‖, preconditioned under left preconditioning). */
  baselineNorm: number;
}

/**
 * Vote on an absolute monitored residual norm: converged-rtol when ‖r‖ ≤ rtol·baseline, else
 * converged-atol when ‖r‖ ≤ atol, diverged when ‖r‖ > divergence·baseline, non-finite for NaN/Inf.
 */
export function residualVote(rule: StopRule, residualNorm: number): Vote {
  if (!Number.isFinite(residualNorm)) return 'non-finite';
  if (residualNorm <= rule.rtol * rule.baselineNorm) return 'converged-rtol';
  if (residualNorm <= rule.atol) return 'converged-atol';
  if (residualNorm > rule.divergence * rule.baselineNorm) return 'diverged';
  return 'continue';
}

/** The user monitor's vote: true asks to stop (an iteration budget imposed by the caller). */
export function monitorVote(
  onIteration: ((it: number, rel: number) => boolean | void) | undefined, it: number, rel: number,
): Vote {
  if (!onIteration) return 'abstain';
  return onIteration(it, rel) === true ? 'max-iterations' : 'abstain';
}

/**
 * A recursive estimate and a recomputed residual "disagree" when one exceeds ten times the other
 * and the larger is above the tolerance (agreement below the tolerance is not interesting).
 */
export function residualsDisagree(estimate: number, recomputed: number, rtol: number): boolean {
  const hi = Math.max(estimate, recomputed);
  const lo = Math.min(estimate, recomputed);
  return hi > rtol && hi > 10 * lo;
}
