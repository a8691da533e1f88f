import { describe, it, expect } from 'vitest';
import { combineVotes, residualVote, residualsDisagree, type Vote } from '../../src/solvers/stopping.js';

describe('stop rules and voting', () => {
  it('failure beats continue beats success beats abstain', () => {
    const order: Vote[] = ['abstain', 'converged-atol', 'converged-rtol', 'continue', 'max-iterations',
      'diverged', 'breakdown', 'preconditioner-failed', 'non-finite'];
    for (let i = 0; i < order.length; i++) {
      for (let j = 0; j < order.length; j++) {
        expect(combineVotes(order[i], order[j])).toBe(order[Math.max(i, j)]);
      }
    }
  });

  it('residual vote: rtol first, then atol, divergence, non-finite', () => {
    const rule = { rtol: 1e-6, atol: 1e-3, divergence: 1e4, baselineNorm: 10 };
    expect(residualVote(rule, 5e-6)).toBe('converged-rtol');
    expect(residualVote(rule, 1e-3)).toBe('converged-atol');
    expect(residualVote(rule, 1)).toBe('continue');
    expect(residualVote(rule, 1e6)).toBe('diverged');
    expect(residualVote(rule, NaN)).toBe('non-finite');
    expect(residualVote(rule, Infinity)).toBe('non-finite');
  });

  it('disagreement needs a factor 10 and a value above rtol', () => {
    expect(residualsDisagree(1e-9, 1e-6, 1e-8)).toBe(true);
    expect(residualsDisagree(1e-12, 1e-10, 1e-8)).toBe(false);
    expect(residualsDisagree(1e-6, 2e-6, 1e-8)).toBe(false);
  });
});
