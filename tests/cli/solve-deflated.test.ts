// `slabbench solve --krylov gmres-dr|gcro-dr --deflate K` end to end on a committed demo matrix.
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { runCliShort } from './cli-helpers.js';

const duct = fileURLToPath(new URL('../../matrices/demo/duct-pulse.mtx', import.meta.url));

describe('slabbench solve with the deflated GMRES variants', () => {
  it('gmres-dr and gcro-dr solve; the recipe line and --json name restart and deflate', async () => {
    const r = await runCliShort(['solve', duct, '--krylov', 'gmres-dr', '--deflate', '10', '--precond', 'block-jacobi']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/gmres-dr\(30, 10, right, mgs\)/);
    const j = await runCliShort(['solve', duct, '--krylov', 'gcro-dr', '--restart', '20', '--deflate', '5', '--json', '-']);
    expect(j.code).toBe(0);
    const doc = JSON.parse(j.out) as { method: string; recipe: Record<string, unknown>; converged: boolean; memory: { buffers: { krylov: Record<string, number> } } };
    expect(doc.method).toBe('gcro-dr');
    expect(doc.converged).toBe(true);
    expect(doc.recipe.deflate).toBe(5);
    expect(doc.recipe.side).toBeUndefined();
    expect(doc.memory.buffers.krylov.recycledU).toBeGreaterThan(0);
  });

  it('deflate not below restart, or without a deflated method, is a one-line error with exit code 2', async () => {
    const big = await runCliShort(['solve', duct, '--krylov', 'gmres-dr', '--restart', '8', '--deflate', '10']);
    expect(big.code).toBe(2);
    expect(big.err.trim()).toBe('slabbench: option --deflate: gmres-dr keeps deflate harmonic Ritz vectors of a restart-8 cycle, so deflate must be below restart; got deflate 10');
    const unused = await runCliShort(['solve', duct, '--deflate', '4']);
    expect(unused.code).toBe(2);
    expect(unused.err.trim()).toMatch(/^slabbench: option --deflate: has no effect with gmres \+ none \(read only by gmres-dr, gcro-dr\); remove it$/);
  });
});
