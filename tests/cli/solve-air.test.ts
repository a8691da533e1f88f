// `slabbench solve --precond air` end to end on a committed demo matrix (2D+t advection, 2 slabs).
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { runCliShort } from './cli-helpers.js';

const tank = fileURLToPath(new URL('../../matrices/demo/stirred-tank.mtx', import.meta.url));

describe('slabbench solve --precond air', () => {
  it('solves, prints the levels line, and --json carries the AIR options and per-level statistics', async () => {
    const r = await runCliShort(['solve', tank, '--precond', 'air', '--air-distance', '1', '--air-relax', 'fcf']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/air \(V-cycle, θ 0\.25, distance 1, one-point, post fcf ×1, coarsest ≤ 256, scaling block-diagonal\)/);
    expect(r.out).toMatch(/levels +\d+ \(block rows 768 \/ \d+/);
    const j = await runCliShort(['solve', tank, '--precond', 'air', '--json', '-']);
    expect(j.code).toBe(0);
    const doc = JSON.parse(j.out) as { recipe: { air: Record<string, unknown> }; preconditionerStats: { levels: number; perLevel: unknown[]; operatorComplexity: number } };
    expect(doc.recipe.air.distance).toBe(2);
    expect(doc.preconditionerStats.levels).toBe(doc.preconditionerStats.perLevel.length);
    expect(doc.preconditionerStats.operatorComplexity).toBeGreaterThan(1);
  });

  it('a bad or misplaced AIR option is a one-line error with exit code 2', async () => {
    const bad = await runCliShort(['solve', tank, '--precond', 'air', '--air-cycle', 'F']);
    expect(bad.code).toBe(2);
    expect(bad.err.trim()).toBe('slabbench: option --air-cycle: expected one of V, W, got "F"');
    const misplaced = await runCliShort(['solve', tank, '--precond', 'block-jacobi', '--air-sweeps', '2']);
    expect(misplaced.code).toBe(2);
    expect(misplaced.err.trim()).toBe('slabbench: option --air-sweeps: AIR options are only used with --precond air');
  });
});
