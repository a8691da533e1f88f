import { describe, expect, it } from 'vitest';
import type { Bsr } from '../../src/sparse/types.js';
import { PRECONDITIONER_NAMES, ORDERING_NAMES, type Recipe } from '../../src/solvers/recipe.js';
import { createPreconditioner, preconditionerNames, registerPreconditioner } from '../../src/precond/registry.js';
import { createNone } from '../../src/precond/none.js';
import { UserError } from '../../src/util/errors.js';
import { bsrSpmv } from '../../src/sparse/bsr.js';
import { permuteBsr } from '../../src/sparse/permute.js';
import { maxAbsDiff, randomBsr, randomVector, recipe, rng, systemOf } from './helpers.js';

const nb = 10, bs = 3, n = nb * bs;
/** Layout section modes for bs = 3 (one equation, degrees 0, 1, 1): p-multigrid needs it, the others ignore it. */
const modes3 = { nEquations: 1, arrangement: 'equation-major', degrees: [0, 1, 1] } as const;

function generalMatrix(seed: number): Bsr {
  const r = rng(seed);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
  return randomBsr(nb, bs, pattern, seed);
}

/** Block-diagonal matrix; block `zeroRow` (if any) is stored but zero. */
function blockDiagonal(seed: number, zeroRow = -1): Bsr {
  const a = randomBsr(nb, bs, [], seed);
  if (zeroRow >= 0) a.values.fill(0, zeroRow * bs * bs, (zeroRow + 1) * bs * bs);
  return a;
}

describe('every registered preconditioner: interface', () => {
  it('the registry serves exactly the recipe names and rejects duplicate registration', () => {
    expect([...preconditionerNames()].sort()).toEqual([...PRECONDITIONER_NAMES].sort());
    expect(() => registerPreconditioner('jacobi', createNone)).toThrow(/already registered/);
  });

  it('an unknown name is a one-line UserError naming the recipe', () => {
    const bad = { ...recipe(), name: 'mine', preconditioner: 'magic' } as unknown as Recipe;
    expect(() => createPreconditioner(systemOf(generalMatrix(1)), bad)).toThrow(UserError);
    expect(() => createPreconditioner(systemOf(generalMatrix(1)), bad)).toThrow(/recipe mine: unknown preconditioner 'magic'/);
  });

  for (const name of PRECONDITIONER_NAMES) {
    it(`${name}: r is never modified, z is finite, lengths and r ≠ z are checked, memory is by named buffer`, () => {
      const a = generalMatrix(2);
      const M = createPreconditioner({ ...systemOf(a, Int32Array.of(0, 5, 10)), modes: modes3 }, recipe({ preconditioner: name }));
      expect(M.n).toBe(n);
      expect(M.setup()).toEqual({ ok: true });
      const r = randomVector(n, 3);
      const copy = r.slice();
      const z = new Float64Array(n);
      M.apply(r, z);
      expect(r).toEqual(copy);
      for (const v of z) expect(Number.isFinite(v)).toBe(true);
      expect(() => M.apply(r, r)).toThrow(/different arrays/);
      expect(() => M.apply(new Float64Array(n - 1), z)).toThrow(/length/);
      expect(() => M.apply(r, new Float64Array(n + 1))).toThrow(/length/);
      for (const [k, v] of Object.entries(M.memory())) {
        expect(typeof k).toBe('string');
        expect(Number.isInteger(v) && v >= 0).toBe(true);
      }
      // apply is repeatable: same input, same output (variable preconditioners included here,
      // since the inner solves are deterministic)
      const z2 = new Float64Array(n);
      M.apply(r, z2);
      expect(maxAbsDiff(z, z2)).toBe(0);
    });
  }

  for (const name of PRECONDITIONER_NAMES.filter((p) => p !== 'none')) {
    it(`${name}: apply before a successful setup throws`, () => {
      const M = createPreconditioner({ ...systemOf(generalMatrix(2)), modes: modes3 }, recipe({ preconditioner: name }));
      expect(() => M.apply(new Float64Array(n), new Float64Array(n))).toThrow(/setup/);
    });
  }
});

describe('exact where exact: M⁻¹(A x) = x for a block-diagonal A (derived: these methods invert the diagonal blocks exactly)', () => {
  const a = blockDiagonal(4);
  const x = randomVector(n, 5);
  const ax = new Float64Array(n);
  bsrSpmv(a, x, ax);
  const cases: Array<[string, Partial<Recipe>, number]> = [
    ['block-jacobi (lu)', { preconditioner: 'block-jacobi', blockInverse: 'lu' }, 1e-13],
    ['block-jacobi (inverse)', { preconditioner: 'block-jacobi', blockInverse: 'inverse' }, 1e-13],
    ['slab, exact one-step inner (block-jacobi)', { preconditioner: 'slab',
      inner: recipe({ krylov: 'none', preconditioner: 'block-jacobi', maxIterations: 1 }) }, 1e-13],
    ['slab, default inner (GMRES + block ILU(0), rtol 1e-10)', { preconditioner: 'slab' }, 1e-9],
  ];
  for (const sweep of ['forward', 'backward', 'symmetric'] as const) {
    for (const blockInverse of ['lu', 'inverse'] as const) {
      cases.push([`block-gs ${sweep} (${blockInverse})`, { preconditioner: 'block-gs', sweep, blockInverse }, 1e-13]);
    }
  }
  for (const ordering of ORDERING_NAMES) {
    cases.push([`block-ilu0, ${ordering} ordering`, { preconditioner: 'block-ilu0', ordering }, 1e-13]);
    cases.push([`block-gs, ${ordering} ordering`, { preconditioner: 'block-gs', ordering }, 1e-13]);
  }
  for (const [label, over, tol] of cases) {
    it(label, () => {
      const M = createPreconditioner(systemOf(a, Int32Array.of(0, 4, 10)), recipe(over));
      expect(M.setup()).toEqual({ ok: true });
      const z = new Float64Array(n);
      M.apply(ax, z);
      expect(maxAbsDiff(z, x)).toBeLessThan(tol);
    });
  }
});

describe('failures are polite and name the block row', () => {
  const zeroRow = 3;
  for (const name of ['jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'slab'] as const) {
    it(`${name}: a zero diagonal block fails with zero-pivot at block row ${zeroRow}; shift 1 avoids it and is counted`, () => {
      const a = blockDiagonal(6, zeroRow);
      const M = createPreconditioner(systemOf(a), recipe({ preconditioner: name }));
      const out = M.setup();
      expect(out.ok).toBe(false);
      if (!out.ok) {
        expect(out.reason).toBe('zero-pivot');
        expect(out.blockRow).toBe(zeroRow);
        expect(out.message).toMatch(new RegExp(`block row ${zeroRow}\\b`));
      }
      const S = createPreconditioner(systemOf(a), recipe({ preconditioner: name, shift: 1 }));
      expect(S.setup()).toEqual({ ok: true });
      if (name === 'slab') expect((S.stats!().inner as { shift: number }).shift).toBe(1);
      // Every pivot is shifted when a shift is given (one per unknown: nb·bs).
      else expect(S.stats!().shiftedPivots).toBe(a.nBlockRows * a.bs);
    });
  }

  for (const ordering of ['rcm', 'downstream', 'mdf'] as const) {
    it(`block-ilu0 and block-gs under ${ordering} ordering name the block row in the caller's numbering`, () => {
      // scramble a matrix with coupling so the ordering is not the identity
      const base = generalMatrix(8);
      base.values.fill(0, base.rowPtr[zeroRow] * bs * bs, base.rowPtr[zeroRow + 1] * bs * bs); // whole block row zero
      for (const p of ['block-ilu0', 'block-gs'] as const) {
        const M = createPreconditioner(systemOf(base), recipe({ preconditioner: p, ordering }));
        const out = M.setup();
        expect(out.ok).toBe(false);
        if (!out.ok) expect(out.blockRow).toBe(zeroRow);
      }
    });
  }

  it('block-jacobi: a diagonal block absent from the pattern is a zero pivot at that block row', () => {
    const pattern: Array<[number, number]> = [];
    const a = randomBsr(nb, bs, pattern, 9);
    // drop the diagonal block of row 5 by renumbering: permute rows 5 ↔ 6 only in colInd of row 5
    const colInd = a.colInd.slice();
    colInd[5] = 6; // row 5 now stores block (5, 6) instead of (5, 5)
    const b: Bsr = { ...a, colInd };
    const M = createPreconditioner(systemOf(b), recipe({ preconditioner: 'block-jacobi' }));
    const out = M.setup();
    expect(out.ok).toBe(false);
    if (!out.ok) { expect(out.reason).toBe('zero-pivot'); expect(out.blockRow).toBe(5); }
  });

  for (const name of ['jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0'] as const) {
    it(`${name}: NaN in the matrix ends setup with non-finite at its block row`, () => {
      const a = blockDiagonal(10);
      a.values[7 * bs * bs + 4] = NaN;
      const M = createPreconditioner(systemOf(a), recipe({ preconditioner: name }));
      const out = M.setup();
      expect(out.ok).toBe(false);
      if (!out.ok) { expect(out.reason).toBe('non-finite'); expect(out.blockRow).toBe(7); }
    });
  }

  it('block-gs rejects omega outside (0, 2) and a non-integer sweep count with a UserError naming the recipe', () => {
    const sys = systemOf(blockDiagonal(1));
    expect(() => createPreconditioner(sys, recipe({ name: 'r1', preconditioner: 'block-gs', omega: 2 }))).toThrow(/recipe r1: block-gs omega/);
    expect(() => createPreconditioner(sys, recipe({ name: 'r2', preconditioner: 'block-gs', sweeps: 0 }))).toThrow(/recipe r2: block-gs sweeps/);
  });

  it('slab rejects a slab inner recipe', () => {
    const sys = systemOf(blockDiagonal(1));
    expect(() => createPreconditioner(sys, recipe({ preconditioner: 'slab', inner: recipe({ preconditioner: 'slab' }) }))).toThrow(UserError);
  });
});

describe('orderings are invisible to the caller', () => {
  it('block-ilu0 under every ordering solves the same block lower triangular system exactly after a random renumbering with downstream', () => {
    // upper-triangular-free pattern, then scrambled: downstream recovers a triangular order
    const r = rng(12);
    const pattern: Array<[number, number]> = [];
    for (let I = 1; I < nb; I++) for (let t = 0; t < 2; t++) pattern.push([I, Math.floor(r() * I)]);
    const tri = randomBsr(nb, bs, pattern, 13);
    const perm = Int32Array.from([7, 2, 9, 0, 4, 1, 8, 3, 6, 5]);
    const a = permuteBsr(tri, perm);
    const x = randomVector(n, 14);
    const ax = new Float64Array(n);
    bsrSpmv(a, x, ax);
    for (const p of ['block-ilu0', 'block-gs'] as const) {
      const M = createPreconditioner(systemOf(a), recipe({ preconditioner: p, ordering: 'downstream' }));
      expect(M.setup().ok).toBe(true);
      const z = new Float64Array(n);
      M.apply(ax, z);
      expect(maxAbsDiff(z, x)).toBeLessThan(1e-12);
    }
  });
});
