import { describe, expect, it } from 'vitest';
import type { Bsr } from '../../src/sparse/types.js';
import { PRECONDITIONER_NAMES } from '../../src/solvers/recipe.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import type { Preconditioner } from '../../src/precond/types.js';
import { tridiag } from '../sparse/model-matrices.js';
import { randomBsr, randomVector, recipe, systemOf, systemOfCsr } from './helpers.js';

// Hand counts under the work model of README "Work model" (src/solvers/work.ts).

function ready(M: Preconditioner): Preconditioner {
  expect(M.setup()).toEqual({ ok: true });
  return M;
}

function applyTimes(M: Preconditioner, times: number): void {
  const r = randomVector(M.n, 5);
  const z = new Float64Array(M.n);
  for (let t = 0; t < times; t++) M.apply(r, z);
}

/** bs 2, nb 3: blocks (0,0) (0,1) (1,0) (1,1) (2,1) (2,2): two below the diagonal, one above. */
function bidiagonalPlus(): Bsr {
  return randomBsr(3, 2, [[0, 1], [1, 0], [2, 1]], 11);
}

describe('work counts of each preconditioner', () => {
  it('block ILU(0) on a 2×2-block matrix (bs 2, every block stored): setup 70 flops, apply 32 flops and 352 bytes', () => {
    const M = ready(createPreconditioner(systemOf(randomBsr(2, 2, [[0, 1], [1, 0]], 3)), recipe({ preconditioner: 'block-ilu0' })));
    // row 0: factor D₀ (LU 5) and invert it (14) = 19
    // row 1: L₁₀ = A₁₀·D₀⁻¹ (C = A·B: 2·bs³ = 16), A₁₁ −= L₁₀·U₀₁ (16), then LU 5 + inverse 14 = 51
    expect(M.work().setup.flops).toBe(19 + 51);
    expect(M.work().setup.matvecs).toBe(0);
    applyTimes(M, 1);
    // z ← r: 2·4·8 = 64 B. forward over 1 L block: 2·bs² = 8 fl; 36 B (block + column) + 3·4 (row pointers) + 64 (y read and written) = 112 B
    // backward over 1 U block and 2 D⁻¹ blocks: 24 fl; 3·36 + 12 + 64 − 2·4 (no column index read for D⁻¹) = 176 B
    expect(M.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 1, innerIterations: 0, flops: 32, bytes: 64 + 112 + 176 });
    applyTimes(M, 2);
    expect(M.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 3, innerIterations: 0, flops: 96, bytes: 3 * 352 });
  });

  it('point Jacobi and ILU(0) on tridiag(4): setup and apply by hand', () => {
    const a = tridiag(4, -1, 4, -1); // n 4, nnz 10
    const J = ready(createPreconditioner(systemOfCsr(a), recipe({ preconditioner: 'jacobi' })));
    // setup: a shift addition and a reciprocal per row (8 fl); two passes over values and columns 2·10·12,
    // the row pointers twice 2·5·4, the inverse diagonal written 4·8: 240 + 40 + 32 = 312 B
    expect(J.work().setup).toEqual({ matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 8, bytes: 312 });
    applyTimes(J, 1);
    expect(J.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 1, innerIterations: 0, flops: 4, bytes: 96 });

    const L = ready(createPreconditioner(systemOfCsr(a), recipe({ preconditioner: 'ilu0' })));
    // rows 1..3: one multiplier (1 division) and one update of the pivot (2 fl) each = 9, plus 4 shift additions
    expect(L.work().setup.flops).toBe(13);
    applyTimes(L, 1);
    // 2 fl per off-diagonal entry (6) and a division per row: 12 + 4 = 16
    expect(L.work().apply.flops).toBe(16);
  });

  it('block Jacobi: LU factors vs inverse blocks', () => {
    const a = bidiagonalPlus();
    const lu = ready(createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-jacobi', blockInverse: 'lu' })));
    const inv = ready(createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-jacobi', blockInverse: 'inverse' })));
    expect(lu.work().setup.flops).toBe(3 * 5); // nb · LU(2)
    expect(inv.work().setup.flops).toBe(3 * (5 + 14)); // nb · (LU(2) + inverse(2))
    applyTimes(lu, 1);
    applyTimes(inv, 1);
    expect(lu.work().apply.flops).toBe(3 * 6); // nb · LU solve (2bs² − bs)
    expect(inv.work().apply.flops).toBe(3 * 8); // nb · block mat-vec (2bs²)
  });

  it('block Gauss–Seidel: the first pass from zero uses only the visited side', () => {
    const a = bidiagonalPlus(); // 2 blocks below, 1 above the diagonal
    const flopsOf = (over: Parameters<typeof recipe>[0]): number => {
      const M = ready(createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-gs', ...over })));
      applyTimes(M, 1);
      return M.work().apply.flops;
    };
    // forward: 2 lower blocks · 8 + 3 inverse-block mat-vecs · 8 = 40
    expect(flopsOf({ sweep: 'forward' })).toBe(40);
    // backward from zero: 1 upper block · 8 + 24 = 32
    expect(flopsOf({ sweep: 'backward' })).toBe(32);
    // symmetric (natural order): forward from zero (40), then backward starting from the forward
    // pass's row prefixes, so only the 1 upper block (8 + 24) = 72
    expect(flopsOf({ sweep: 'symmetric' })).toBe(72);
    // two forward sweeps: 40, then all 3 off-diagonal blocks: 48
    expect(flopsOf({ sweep: 'forward', sweeps: 2 })).toBe(88);
    // ω ≠ 1 adds 4 flops per entry for the relaxation: 40 + 4·6
    expect(flopsOf({ sweep: 'forward', omega: 1.5 })).toBe(64);
    // LU diagonal blocks: 2·8 + 3 LU solves · 6 = 34
    expect(flopsOf({ sweep: 'forward', blockInverse: 'lu' })).toBe(34);
  });

  it('slab: the inner solves\' iterations, products and applies are the slab apply\'s work', () => {
    const a = randomBsr(6, 2, [[1, 0], [2, 1], [4, 3], [5, 4], [3, 1]], 21);
    const M = ready(createPreconditioner(systemOf(a, Int32Array.of(0, 3, 6)), recipe({ preconditioner: 'slab', inner: { ...recipe({ preconditioner: 'block-jacobi', rtol: 1e-12 }) } })));
    expect(M.work().setup.flops).toBeGreaterThan(0); // the inner block-jacobi setups of both slabs
    expect(M.work().setup.matvecs).toBe(0);
    applyTimes(M, 1);
    const once = M.work().apply;
    const stats = M.stats!() as { innerIterationsTotal: number };
    expect(once.innerIterations).toBe(stats.innerIterationsTotal);
    expect(once.innerIterations).toBeGreaterThan(0);
    // each inner GMRES: start residual, one product per iteration, one true residual per cycle
    expect(once.matvecs).toBeGreaterThanOrEqual(once.innerIterations + 2 * 2);
    // its own application plus each inner GMRES's applies (one per iteration and one per cycle)
    expect(once.preconditionerApplies).toBeGreaterThanOrEqual(1 + once.innerIterations + 2);
    applyTimes(M, 1);
    const twice = M.work().apply;
    expect(twice).toEqual({
      matvecs: 2 * once.matvecs, preconditionerApplies: 2 * once.preconditionerApplies,
      innerIterations: 2 * once.innerIterations, flops: 2 * once.flops, bytes: 2 * once.bytes,
    });
  });

  for (const name of PRECONDITIONER_NAMES) {
    it(`${name}: apply work starts at zero after setup, counts each apply, and setup() resets it`, () => {
      const a = randomBsr(8, 3, [[1, 0], [3, 2], [7, 5], [2, 6]], 4);
      // modes: p-multigrid needs them (one equation, degrees 0, 1, 1); the others ignore them
      const sys = { ...systemOf(a, Int32Array.of(0, 4, 8)), modes: { nEquations: 1, arrangement: 'equation-major' as const, degrees: [0, 1, 1] } };
      const M = ready(createPreconditioner(sys, recipe({ preconditioner: name })));
      const setup = M.work().setup;
      expect(M.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 0, bytes: 0 });
      applyTimes(M, 3);
      const w = M.work().apply;
      if (name === 'slab' || name === 'p-multigrid' || name === 'schwarz') expect(w.preconditionerApplies).toBeGreaterThan(3); // nested applies
      else expect(w.preconditionerApplies).toBe(3);
      expect(w.bytes).toBeGreaterThan(0);
      if (name === 'none') expect(w.flops).toBe(0); else expect(w.flops).toBeGreaterThan(0);
      for (const v of Object.values(w)) expect(Number.isInteger(v)).toBe(true);
      ready(M);
      expect(M.work().apply.preconditionerApplies).toBe(0);
      expect(M.work().setup).toEqual(setup);
    });
  }

  it('a failed setup counts the block rows it attempted', () => {
    const a = randomBsr(4, 2, [], 9);
    a.values.fill(0, 2 * 4, 3 * 4); // block row 2's diagonal block is zero
    const M = createPreconditioner(systemOf(a), recipe({ preconditioner: 'block-jacobi', blockInverse: 'lu' }));
    expect(M.setup().ok).toBe(false);
    // rows 0 and 1 factored, row 2 attempted: the model counts an attempted row in full (3 · LU(2) = 15)
    expect(M.work().setup.flops).toBe(3 * 5);
  });
});

