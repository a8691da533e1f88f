import type { Cause } from './types.js';

/**
 * Stop rules and monitor voting, shared by every solver.
 *
 * Each monitor (residual test, divergence bound, user callback…) casts a vote; votes combine by
 * rank: a failure beats "continue", which beats a success, which beats an abstention. So a
 * recursive estimate that says "solved" while the recomputed true residual says "continue"
 * continues, and a non-finite value ends the run whatever else was voted.
 */
export type Vote = 'abstain' | 'continue' | Cause;

const RANK: Record<Vote, number> = {
  abstain: 0,
  'absolute-target': 1,
  'relative-target': 2,
  continue: 3,
  'iteration-budget': 4,
  'residual-growth': 5,
  'method-breakdown': 6,
  'preconditioner-error': 7,
  'non-finite-value': 8,
};

/** The winning vote of two (associative and commutative, so fold any number of votes). */
export function combineVotes(a: Vote, b: Vote): Vote {
  return RANK[a] >= RANK[b] ? a : b;
}

/** True when the vote ends the run (a success or a failure). */
export function isStop(v: Vote): v is Cause {
  return v !== 'abstain' && v !== 'continue';
}

export interface StopRule {
  rtol: number;
  atol: number;
  divergence: number;
  /** The norm relative residuals divide by (‖b‖ or ‖r₀‖, preconditioned under left preconditioning). */
  referenceNorm: number;
}

/**
 * Vote on an absolute watched residual norm: relative-target when ‖r‖ ≤ rtol·reference, else
 * absolute-target when ‖r‖ ≤ atol, residual-growth when ‖r‖ > divergence·reference,
 * non-finite-value for NaN/Inf.
 */
export function residualVote(rule: StopRule, residualNorm: number): Vote {
  if (!Number.isFinite(residualNorm)) return 'non-finite-value';
  if (residualNorm <= rule.rtol * rule.referenceNorm) return 'relative-target';
  if (residualNorm <= rule.atol) return 'absolute-target';
  if (residualNorm > rule.divergence * rule.referenceNorm) return 'residual-growth';
  return 'continue';
}

/** The user monitor's vote: true asks to stop (an iteration budget imposed by the caller). */
export function monitorVote(
  onIteration: ((it: number, rel: number) => boolean | void) | undefined, it: number, rel: number,
): Vote {
  if (!onIteration) return 'abstain';
  return onIteration(it, rel) === true ? 'iteration-budget' : 'abstain';
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
