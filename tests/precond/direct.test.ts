import { describe, expect, it } from 'vitest';
import { createPreconditioner } from '../../src/precond/registry.js';
import { DirectPreconditioner, symbolicBlockLu } from '../../src/precond/direct.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { bsrSpmv, csrToBsr } from '../../src/sparse/bsr.js';
import { poisson2d, randomBsr, randomVector, recipe, rng, systemOf } from './helpers.js';

function generalMatrix(nb: number, bs: number, seed: number) {
  const r = rng(seed);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
  return randomBsr(nb, bs, pattern, seed);
}

describe('direct (sparse block LU after minimum-degree ordering)', () => {
  it('apply is A⁻¹ to round-off on a non-symmetric random block matrix', () => {
    const a = generalMatrix(40, 3, 5);
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'direct' }));
    expect(M.setup()).toEqual({ ok: true });
    const r = randomVector(120, 6), z = new Float64Array(120), back = new Float64Array(120);
    M.apply(r, z);
    bsrSpmv(a, z, back);
    let err = 0, scale = 0;
    for (let i = 0; i < 120; i++) { err = Math.max(err, Math.abs(back[i] - r[i])); scale = Math.max(scale, Math.abs(r[i])); }
    expect(err / scale).toBeLessThan(1e-12);
  });

  it('--krylov none: one stationary step solves to round-off; GMRES + direct: 1 iteration', () => {
    const a = generalMatrix(30, 2, 7);
    const b = randomVector(60, 8);
    const none = solveSystem(systemOf(a), b, recipe({ krylov: 'none', preconditioner: 'direct', rtol: 1e-12, maxIterations: 5 })).result;
    expect(none.iterations).toBe(1);
    expect(none.cause).toBe('relative-target');
    const gm = solveSystem(systemOf(a), b, recipe({ preconditioner: 'direct', rtol: 1e-12 })).result;
    expect(gm.iterations).toBe(1);
  });

  it('minimum degree fills a 12×12 Poisson grid less than the natural-order band (common practice)', () => {
    const m = 12, n = m * m;
    const s = symbolicBlockLu(csrToBsr(poisson2d(m), 1), 1e9);
    if ('tooLarge' in s) throw new Error('unexpected');
    // natural (banded) order fills the whole band: about 2·n·m off-diagonal entries
    expect(s.upInd.length + s.loInd.length).toBeLessThan(2 * n * m * 0.7);
    expect(s.upInd.length).toBe(s.loInd.length);
  });

  it('refuses what does not fit before factoring, naming the need and the limit', () => {
    const a = generalMatrix(20, 3, 9);
    const M = new DirectPreconditioner(systemOf(a), 0, 1000);
    const out = M.setup();
    expect(out.ok).toBe(false);
    if (!out.ok) {
      expect(out.reason).toBe('invalid');
      expect(out.message).toMatch(/direct: the block LU needs \d+ bytes .* above the limit of 1000 bytes/);
    }
    expect(M.memory()['factors (L blocks)']).toBe(0);
  });

  it('a zero diagonal block fails as zero-pivot naming the block row in the caller numbering', () => {
    const a = randomBsr(6, 2, [], 3);
    a.values.fill(0, 4 * 4, 5 * 4);
    const out = createPreconditioner(systemOf(a), recipe({ preconditioner: 'direct' })).setup();
    expect(out.ok).toBe(false);
    if (!out.ok) { expect(out.reason).toBe('zero-pivot'); expect(out.blockRow).toBe(4); }
  });
});
