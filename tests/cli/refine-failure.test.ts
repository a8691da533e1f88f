// `slabbench refine` when a mesh's slab solve fails: the finished rows stay on stdout, stderr
// names the mesh and why, exit code 1. The slab solve is made to fail from the second mesh on.
import { describe, it, expect, vi } from 'vitest';
import { runCli } from './cli-helpers.js';

const state = vi.hoisted(() => ({ calls: 0 }));

vi.mock('../../src/dg/slab-solve.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../src/dg/slab-solve.js')>();
  return {
    ...real,
    solveBySlabs: (...args: Parameters<typeof real.solveBySlabs>) => {
      const out = real.solveBySlabs(...args);
      state.calls++;
      if (state.calls < 2) return out;
      return { ...out, converged: false, failure: { slab: 2, message: 'slab 3 of 8 (96 unknowns): gmres + block-ilu0 stopped (iteration-budget) after 5000 iterations at relative residual 1.00e-9 (target 1e-12)' } };
    },
  };
});

describe('slabbench refine: a failing mesh', () => {
  it('keeps the finished rows, names the mesh and the reason, exits 1', async () => {
    state.calls = 0;
    const r = await runCli(['refine', '--physics', 'advection', '--dim', '1', '--sizes', '8,16,32']);
    expect(r.code).toBe(1);
    const lines = r.stdout.trim().split('\n');
    expect(lines[0]).toMatch(/^refinement study: advection 1D\+t/);
    expect(lines).toHaveLength(3); // title, heads, the 8-cell row
    expect(lines[2].trim().split(/\s+/)[0]).toBe('8');
    expect(r.stderr).toBe('slabbench: refine: the 16-cell mesh failed: slab 3 of 8 (96 unknowns): gmres + block-ilu0 stopped (iteration-budget) after 5000 iterations at relative residual 1.00e-9 (target 1e-12)\n');
    state.calls = 0;
    const j = await runCli(['refine', '--physics', 'advection', '--dim', '1', '--sizes', '8,16', '--json']);
    expect(j.code).toBe(1);
    const doc = JSON.parse(j.stdout) as { rows: unknown[]; failure: { cells: number[] } };
    expect(doc.rows).toHaveLength(1);
    expect(doc.failure.cells).toEqual([16]);
  });
});
