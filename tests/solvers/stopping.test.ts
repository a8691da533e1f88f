import { describe, it, expect } from 'vitest';
import { combineVotes, residualVote, residualsDisagree, type Vote } from '../../src/solvers/stopping.js';

describe('stop rules and voting', () => {
  it('failure beats continue beats success beats abstain', () => {
    const order: Vote[] = ['abstain', 'absolute-target', 'relative-target', 'continue', 'iteration-budget',
      'residual-growth', 'method-breakdown', 'preconditioner-error', 'non-finite-value'];
    for (let i = 0; i < order.length; i++) {
      for (let j = 0; j < order.length; j++) {
        expect(combineVotes(order[i], order[j])).toBe(order[Math.max(i, j)]);
      }
    }
  });

  it('residual vote: rtol first, then atol, divergence, non-finite', () => {
    const rule = { rtol: 1e-6, atol: 1e-3, divergence: 1e4, referenceNorm: 10 };
    expect(residualVote(rule, 5e-6)).toBe('relative-target');
    expect(residualVote(rule, 1e-3)).toBe('absolute-target');
    expect(residualVote(rule, 1)).toBe('continue');
    expect(residualVote(rule, 1e6)).toBe('residual-growth');
    expect(residualVote(rule, NaN)).toBe('non-finite-value');
    expect(residualVote(rule, Infinity)).toBe('non-finite-value');
  });

  it('disagreement needs a factor 10 and a value above rtol', () => {
    expect(residualsDisagree(1e-9, 1e-6, 1e-8)).toBe(true);
    expect(residualsDisagree(1e-12, 1e-10, 1e-8)).toBe(false);
    expect(residualsDisagree(1e-6, 2e-6, 1e-8)).toBe(false);
  });
});
