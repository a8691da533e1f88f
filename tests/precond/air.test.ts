// AIR (reduction-based AMG with approximate ideal restriction): options, polite failures, the
// exactness of ideal restriction on block triangular matrices, and mesh-robustness on upwind DG.
import { describe, expect, it } from 'vitest';
import type { Bsr } from '../../src/sparse/types.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { AirPreconditioner } from '../../src/precond/air.js';
import { rugeStubenSplitting, strengthGraph, transposeGraph, C_POINT, F_POINT } from '../../src/precond/air-setup.js';
import {
  DEFAULT_AIR_OPTIONS, DEFAULT_RECIPE, parseRecipe, recipeFromOptions, recordedRecipe, type AirOptions, type Recipe,
} from '../../src/solvers/recipe.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { bsrSpmv, bsrToCsr } from '../../src/sparse/bsr.js';
import { UserError } from '../../src/util/errors.js';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { isFailure } from '../../src/precond/common.js';
import { maxAbsDiff, randomBsr, randomVector, systemOf, systemOfCsr } from './helpers.js';
import { tridiag } from '../sparse/model-matrices.js';

function airRecipe(air: Partial<AirOptions> = {}, over: Partial<Recipe> = {}): Recipe {
  return { ...DEFAULT_RECIPE, name: 'air-test', preconditioner: 'air', air: { ...DEFAULT_AIR_OPTIONS, ...air }, ...over };
}

/**
 * Upwind-like block matrix on an m×m grid: block (x, y) depends on (x−1, y), (x, y−1) and
 * (x−1, y−1) (no periodic wrap), random non-symmetric bs×bs blocks. Block lower triangular in the natural
 * order, so it has no cycles.
 */
function triangularGrid(m: number, bs: number, seed: number): Bsr {
  const pattern: Array<[number, number]> = [];
  for (let y = 0; y < m; y++) {
    for (let x = 0; x < m; x++) {
      const i = y * m + x;
      if (x > 0) pattern.push([i, i - 1]);
      if (y > 0) pattern.push([i, i - m]);
      if (x > 0 && y > 0) pattern.push([i, i - m - 1]);
    }
  }
  return randomBsr(m * m, bs, pattern, seed, 3 * bs);
}

/** max |M⁻¹(A x) − x| / max |x|. */
function inverseError(M: { apply(r: Float64Array, z: Float64Array): void }, a: Bsr, seed: number): number {
  const n = a.nBlockRows * a.bs;
  const x = randomVector(n, seed);
  const ax = new Float64Array(n), z = new Float64Array(n);
  bsrSpmv(a, x, ax);
  M.apply(ax, z);
  return maxAbsDiff(z, x) / Math.max(...Array.from(x, Math.abs));
}

describe('air: options (suite files and command line)', () => {
  it('a suite recipe fills the defaults; each field is checked with its path', () => {
    const r = parseRecipe({ preconditioner: 'air', air: { strength: 0.5, distance: 1 } }, 'suite.json: recipes[0]');
    expect(r.air).toEqual({ ...DEFAULT_AIR_OPTIONS, strength: 0.5, distance: 1 });
    expect(parseRecipe({ preconditioner: 'air' }, 'w').air).toEqual(DEFAULT_AIR_OPTIONS);
    expect(() => parseRecipe({ preconditioner: 'air', air: { distance: 0 } }, 'suite.json: recipes[0]'))
      .toThrow('suite.json: recipes[0].air.distance: expected an integer from 1 to 8, got 0');
    expect(() => parseRecipe({ preconditioner: 'air', air: { strength: 1 } }, 'r')).toThrow('r.air.strength: expected a finite number ≥ 0 and < 1, got 1');
    expect(() => parseRecipe({ preconditioner: 'air', air: { relaxation: 'gs' } }, 'r')).toThrow(/r\.air\.relaxation: expected one of f, ff, fc, ffc, fcf, cf/);
    expect(() => parseRecipe({ preconditioner: 'air', air: { thresh: 0.2 } }, 'r')).toThrow(/r\.air: unknown field "thresh"/);
    expect(() => parseRecipe({ preconditioner: 'air', air: [1] }, 'r')).toThrow(/r\.air: expected an object/);
    expect(() => parseRecipe({ preconditioner: 'block-jacobi', air: {} }, 'r')).toThrow('r.air: AIR options are only used by preconditioner air');
  });

  it('air reads no top-level preconditioner field: a shift or sweeps with air is refused; results record the air object', () => {
    expect(() => parseRecipe({ preconditioner: 'air', shift: 0.1 }, 'r')).toThrow(/^r\.shift: has no effect with gmres \+ air/);
    expect(() => parseRecipe({ preconditioner: 'air', sweeps: 2 }, 'r')).toThrow(/^r\.sweeps: has no effect with gmres \+ air/);
    expect(() => recipeFromOptions({ precond: 'air', shift: '0.1' })).toThrow(/--shift: has no effect with gmres \+ air/);
    const rec = recordedRecipe(parseRecipe({ preconditioner: 'air', air: { distance: 1 } }, 'r'));
    expect(rec.air).toEqual({ ...DEFAULT_AIR_OPTIONS, distance: 1 });
    expect(rec.shift).toBeUndefined();
  });

  it('an inner slab recipe can use air with its own options', () => {
    const r = parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { preconditioner: 'air', air: { cycle: 'W' } } }, 'r');
    expect(r.inner?.air?.cycle).toBe('W');
  });

  it('--air-* flags: validated, refused without --precond air; --inner-air-* for the slab inner recipe', () => {
    const r = recipeFromOptions({ precond: 'air', airStrength: '0.1', airDistance: '1', airRelax: 'fc', airCycle: 'W' });
    expect(r.air).toEqual({ ...DEFAULT_AIR_OPTIONS, strength: 0.1, distance: 1, relaxation: 'fc', cycle: 'W' });
    expect(recipeFromOptions({ precond: 'air' }).air).toEqual(DEFAULT_AIR_OPTIONS);
    expect(() => recipeFromOptions({ precond: 'air', airDistance: '2.5' })).toThrow('option --air-distance: expected an integer from 1 to 8, got "2.5"');
    expect(() => recipeFromOptions({ precond: 'block-gs', airStrength: '0.3' })).toThrow('option --air-strength: AIR options are only used with --precond air');
    const s = recipeFromOptions({ krylov: 'fgmres', precond: 'slab', innerPrecond: 'air', innerAirSweeps: '2' });
    expect(s.inner?.air?.sweeps).toBe(2);
    expect(() => recipeFromOptions({ precond: 'air', innerAirSweeps: '2' })).toThrow(/--inner-air-sweeps: inner options are only used with --precond slab/);
    expect(() => recipeFromOptions({ krylov: 'fgmres', precond: 'slab', innerAirSweeps: '2' })).toThrow(/--inner-air-sweeps: AIR options are only used with --inner-precond air/);
  });
});

describe('air: refusals and polite setup failures', () => {
  it('a non-square matrix is refused with a one-line UserError', () => {
    const a: Bsr = { nBlockRows: 2, nBlockCols: 3, bs: 1, rowPtr: Int32Array.of(0, 1, 2), colInd: Int32Array.of(0, 2), values: Float64Array.of(1, 1) };
    expect(() => createPreconditioner(systemOf(a), airRecipe())).toThrow(UserError);
    expect(() => createPreconditioner(systemOf(a), airRecipe())).toThrow(/needs a square matrix/);
  });

  for (const scaling of ['block-diagonal', 'none'] as const) {
    it(`a zero diagonal block is a zero-pivot outcome naming the block row (scaling ${scaling}), not an exception`, () => {
      const a = triangularGrid(6, 2, 7);
      // zero the diagonal block of block row 20
      for (let p = a.rowPtr[20]; p < a.rowPtr[21]; p++) if (a.colInd[p] === 20) a.values.fill(0, p * 4, p * 4 + 4);
      const M = createPreconditioner(systemOf(a), airRecipe({ scaling, coarsest: 1 }));
      const out = M.setup();
      expect(isFailure(out)).toBe(true);
      if (isFailure(out)) {
        expect(out.reason).toBe('zero-pivot');
        expect(out.blockRow).toBe(20);
        expect(out.message).toMatch(/^air: zero or tiny pivot in block row 20/);
      }
      expect(() => M.apply(new Float64Array(72), new Float64Array(72))).toThrow(/setup/);
    });
  }

  it('a singular coarsest matrix is a zero-pivot outcome (dense LU), and solveSystem reports it as a failed run', () => {
    // [[1, 1], [1, 1]]: nonsingular diagonal, singular matrix; 2 unknowns ≤ coarsest, so the dense LU sees it
    const a: Bsr = { nBlockRows: 2, nBlockCols: 2, bs: 1, rowPtr: Int32Array.of(0, 2, 4), colInd: Int32Array.of(0, 1, 0, 1), values: Float64Array.of(1, 1, 1, 1) };
    const M = new AirPreconditioner(systemOf(a), { ...DEFAULT_AIR_OPTIONS, scaling: 'none' });
    const out = M.setup();
    expect(out.ok).toBe(false);
    if (!out.ok) { expect(out.reason).toBe('zero-pivot'); expect(out.message).toMatch(/dense LU of the coarsest matrix/); }
    const { result } = solveSystem(systemOf(a), Float64Array.of(1, 2), airRecipe({ scaling: 'none' }));
    expect(result.outcome).toBe('failed');
    expect(result.iterations).toBe(0);
  });

  it('a non-finite matrix entry is a non-finite outcome', () => {
    const a = triangularGrid(4, 2, 8);
    a.values[a.values.length - 1] = Number.NaN;
    const out = createPreconditioner(systemOf(a), airRecipe({ scaling: 'none' })).setup();
    expect(out.ok).toBe(false);
    if (!out.ok) expect(out.reason).toBe('non-finite');
  });
});

describe('air: ideal restriction is exact on block triangular matrices', () => {
  // Derivation (Manteuffel, Ruge & Southworth, SIAM J. Sci. Comput. 40(6), 2018, §2; the shared
  // references' "ideal restriction" entry). Order A by F then C points:
  //   A = [A_FF A_FC; A_CF A_CC],  ideal R = [−A_CF A_FF⁻¹, I],  P = [W; I] (any W).
  // Then R A = [0, S] with S = A_CC − A_CF A_FF⁻¹ A_FC, so R A P = S whatever W is. For the error
  // e = (e_F, e_C) the coarse correction solves S δ = R A e = S e_C, so e_C ← 0 and e_F ← e_F − W e_C.
  // An exact F-relaxation then sets e_F ← e_F − A_FF⁻¹(A_FF e_F + A_FC·0) = 0: the two-level cycle is
  // a direct solve. When A is block lower triangular (upwind transport without cycles), A_FF is
  // block triangular too, so (a) Z_i = −A_{i,F} A_FF⁻¹ is supported on the F points upstream of i,
  // which the ℓAIR neighbourhood contains once `distance` reaches the longest F path and every
  // connection is strong (θ = 0): the local solve then returns the ideal row exactly; and (b) block
  // Jacobi on A_FF is exact after (longest F path + 1) sweeps (its iteration matrix is nilpotent).
  // S is again block triangular in the same order, so the argument repeats level by level down to
  // the dense LU of the coarsest matrix: the whole V-cycle is A⁻¹ and GMRES stops after 1 iteration.
  const m = 4, bs = 2;
  const a = triangularGrid(m, bs, 11);
  const exact: Partial<AirOptions> = { strength: 0, distance: 2 * m, relaxation: 'f', sweeps: 2 * m, coarsest: 1 };

  for (const prolongation of ['one-point', 'injection'] as const) {
    for (const maxLevels of [2, 25]) {
      it(`${prolongation}, ${maxLevels === 2 ? 'two levels' : 'all levels'}: M⁻¹A x = x to rounding and GMRES needs one iteration`, () => {
        const M = createPreconditioner(systemOf(a), airRecipe({ ...exact, prolongation, maxLevels }));
        expect(M.setup()).toEqual({ ok: true });
        const st = M.stats!() as { levels: number };
        expect(st.levels).toBe(maxLevels === 2 ? 2 : st.levels);
        expect(st.levels).toBeGreaterThanOrEqual(2);
        expect(inverseError(M, a, 3)).toBeLessThan(1e-10);
        const b = randomVector(m * m * bs, 4);
        const { result } = solveSystem(systemOf(a), b, airRecipe({ ...exact, prolongation, maxLevels }));
        expect(result.outcome).toBe('solved');
        expect(result.iterations).toBe(1);
      });
    }
  }

  it('a 1D upwind chain needs distance 1 only: the splitting alternates C/F, A_FF is block diagonal, one F sweep is exact', () => {
    const n = 40;
    const pattern: Array<[number, number]> = [];
    for (let i = 1; i < n; i++) pattern.push([i, i - 1]);
    const chain = randomBsr(n, 3, pattern, 5, 9);
    const s = strengthGraph(chain, 0.25);
    const type = rugeStubenSplitting(s, transposeGraph(s, n), n);
    for (let i = 0; i < n; i++) expect(type[i]).toBe(i % 2 === 0 ? C_POINT : F_POINT);
    const M = createPreconditioner(systemOf(chain), airRecipe({ distance: 1, relaxation: 'f', coarsest: 1 }));
    expect(M.setup()).toEqual({ ok: true });
    expect(inverseError(M, chain, 6)).toBeLessThan(1e-10);
  });

  it('not exact with a short neighbourhood on the grid (the check above can fail), yet a contraction', () => {
    const M = createPreconditioner(systemOf(a), airRecipe({ strength: 0, distance: 1, relaxation: 'f', sweeps: 1, coarsest: 1 }));
    expect(M.setup()).toEqual({ ok: true });
    const err = inverseError(M, a, 3);
    expect(err).toBeGreaterThan(1e-6);
    expect(err).toBeLessThan(1);
  });
});

describe('air: statistics and memory', () => {
  it('levels, block rows, operator and grid complexity agree with the per-level figures; memory is by level', () => {
    const a = triangularGrid(10, 2, 12);
    const M = createPreconditioner(systemOf(a), airRecipe({ coarsest: 8 }));
    expect(M.setup()).toEqual({ ok: true });
    const st = M.stats!() as { levels: number; operatorComplexity: number; gridComplexity: number; perLevel: Array<{ blockRows: number; nnzBlocks: number; cPoints: number; bytes: number }> };
    expect(st.levels).toBe(st.perLevel.length);
    expect(st.levels).toBeGreaterThan(2);
    const pl = st.perLevel;
    expect(pl[0].blockRows).toBe(100);
    for (let l = 1; l < pl.length; l++) expect(pl[l].blockRows).toBe(pl[l - 1].cPoints);
    expect(st.operatorComplexity).toBeCloseTo(pl.reduce((s, l) => s + l.nnzBlocks, 0) / pl[0].nnzBlocks, 12);
    expect(st.gridComplexity).toBeCloseTo(pl.reduce((s, l) => s + l.blockRows, 0) / 100, 12);
    const mem = M.memory();
    expect(Object.keys(mem)).toContain('level 1 matrix');
    expect(Object.keys(mem)).toContain('level 0 restriction Z');
    expect(Object.keys(mem)).toContain('coarsest dense LU');
    expect(pl.every((l) => l.bytes > 0)).toBe(true);
  });
});

describe('air: work of one application (kernel formulas)', () => {
  it('zero before setup; an extra F step adds 2bs² flops per stored block and per D⁻¹ block of the F rows of each non-coarsest level; W costs more than V', () => {
    const a = triangularGrid(10, 2, 13);
    const base: Partial<AirOptions> = { coarsest: 8, relaxation: 'f' };
    const Mf = new AirPreconditioner(systemOf(a), { ...DEFAULT_AIR_OPTIONS, ...base });
    expect(Mf.cycleWork()).toEqual({ flops: 0, bytes: 0 });
    expect(Mf.setup()).toEqual({ ok: true });
    const Mff = new AirPreconditioner(systemOf(a), { ...DEFAULT_AIR_OPTIONS, ...base, relaxation: 'ff' });
    expect(Mff.setup()).toEqual({ ok: true });
    // the same hierarchy (relaxation does not enter the setup of an F-only pattern)
    expect((Mff.stats() as { perLevel: unknown[] }).perLevel.length).toBe((Mf.stats() as { perLevel: unknown[] }).perLevel.length);
    // one more F sweep per non-coarsest level: Σ_l 2bs²(blocks in F rows + F rows), counted from A_l directly
    let extra = 0;
    const levels = (Mf as unknown as { levels: Array<{ a: Bsr; fPoints: Int32Array }> }).levels;
    for (let l = 0; l < levels.length - 1; l++) {
      const { a: al, fPoints } = levels[l];
      for (const f of fPoints) extra += 2 * 4 * (al.rowPtr[f + 1] - al.rowPtr[f] + 1);
    }
    expect(Mff.cycleWork().flops - Mf.cycleWork().flops).toBeCloseTo(extra, 6);
    const Mw = new AirPreconditioner(systemOf(a), { ...DEFAULT_AIR_OPTIONS, ...base, cycle: 'W' });
    expect(Mw.setup()).toEqual({ ok: true });
    expect(Mw.cycleWork().flops).toBeGreaterThan(Mf.cycleWork().flops);
    expect(Mw.cycleWork().bytes).toBeGreaterThan(Mf.cycleWork().bytes);
  });
});

describe('air: work counts (README "Work model")', () => {
  it('a matrix at or below the coarsest size: scaling plus one dense LU, by hand', () => {
    // tridiag(−1, 4, −1), n = 3, bs 1, 7 stored entries; level 0 is the coarsest (3 ≤ 256 unknowns)
    const M = createPreconditioner(systemOfCsr(tridiag(3, -1, 4, -1)), airRecipe());
    expect(M.setup()).toEqual({ ok: true });
    // setup: D⁻¹ per row (LU of a 1×1 block 1 fl + inverse 2 fl) = 9; D⁻¹A: 7 products of 2 fl = 14;
    // dense LU of the 3×3 coarsest matrix: 3 reciprocals + 3 multipliers + 2·(2² + 1²) = 16
    expect(M.work().setup.flops).toBe(9 + 14 + 16);
    M.apply(randomVector(3, 1), new Float64Array(3));
    M.apply(randomVector(3, 2), new Float64Array(3));
    // apply: D⁻¹ r (3 block mat-vecs of 2 fl = 6) + LU solve (2n² − n = 15) + x += correction (3) = 24
    // bytes: D⁻¹ r 3·(8 + 16) = 72; copy 48; LU solve 72 + 12 + 48 = 132; update 72 → 324
    expect(M.work().apply).toEqual({ preconditionerApplies: 2, matvecs: 0, innerIterations: 0, flops: 48, bytes: 648 });
  });
});

describe('air on upwind DG advection with cycles (periodic in space), refined in space and time', () => {
  // Published behaviour: ℓAIR-preconditioned GMRES iteration counts stay nearly constant under
  // refinement of upwind DG advection (Manteuffel, Münzenmaier, Ruge & Southworth, SIAM J. Sci.
  // Comput. 41(5), 2019; Sivas, Southworth & Rhebergen, SIAM J. Sci. Comput. 43(5), 2021 for
  // space-time), while single-level block Jacobi's grow. Periodic boundaries make the flow graph
  // cyclic, so no ordering makes the matrix triangular (no one-sweep Gauss–Seidel shortcut).
  // h and the slab thickness are halved together on [0, 1]² × [0, 1]; the full three-refinement
  // study is in bench/air.bench.ts.
  function caseAt(cells: number, slabs: number): { bsr: Bsr; rhs: Float64Array } {
    const g = generateSystem(parseGeneratorParams({
      physics: 'advection', dim: 2, order: 1, cells: [cells, cells], extent: [1, 1], slabs, layersPerSlab: 1,
      cfl: null, slabThickness: 1 / slabs, periodic: [true, true], velocity: [1, 0.5],
      initial: 'sin(2*pi*x)', ordering: 'natural',
    }, 'test'));
    return { bsr: g.bsr, rhs: g.rhs };
  }
  it('one refinement (8² × 2 slabs → 16² × 4 slabs): AIR grows by at most 25%, block Jacobi by over 50%', () => {
    const iters: Record<string, number[]> = { air: [], 'block-jacobi': [] };
    for (const [cells, slabs] of [[8, 2], [16, 4]]) {
      const { bsr, rhs } = caseAt(cells, slabs);
      const system = { bsr, csr: bsrToCsr(bsr) };
      for (const pc of ['air', 'block-jacobi'] as const) {
        const recipe = pc === 'air' ? airRecipe() : { ...DEFAULT_RECIPE, preconditioner: pc };
        const { result } = solveSystem(system, rhs, recipe);
        expect(result.outcome).toBe('solved');
        iters[pc].push(result.iterations);
        if (pc === 'air') {
          const st = result.preconditionerStats as { operatorComplexity: number };
          // bounded operator complexity: below 3 here (the papers report roughly 1.5–3 for ℓAIR on DG
          // advection; from memory)
          expect(st.operatorComplexity).toBeLessThan(3);
        }
      }
    }
    expect(iters.air[1]).toBeLessThanOrEqual(Math.floor(1.25 * iters.air[0]));
    expect(iters['block-jacobi'][1]).toBeGreaterThan(1.5 * iters['block-jacobi'][0]);
    expect(iters.air[1] * 5).toBeLessThan(iters['block-jacobi'][1]);
  });

  it('W-cycle, two refinements (8² × 1 → 16² × 2 → 32² × 4 slabs, T = 0.5): iterations grow by at most 20% per refinement', () => {
    // The V-cycle default grows 8 → 9 → 11 → 14 over three refinements (13–27%, README); with
    // γ = 2 the counts seen are 6 → 7 → 8 → 8 (bench/air.bench.ts to 64²), nearly constant as the
    // papers above report, at about three times the V-cycle's solve flops.
    const iters: number[] = [];
    for (const [cells, slabs] of [[8, 1], [16, 2], [32, 4]]) {
      const g = generateSystem(parseGeneratorParams({
        physics: 'advection', dim: 2, order: 1, cells: [cells, cells], extent: [1, 1], slabs, layersPerSlab: 1,
        cfl: null, slabThickness: 0.5 / slabs, periodic: [true, true], velocity: [1, 0.5],
        initial: 'sin(2*pi*x)', ordering: 'natural',
      }, 'test'));
      const recipe = airRecipe();
      const { result } = solveSystem({ bsr: g.bsr, csr: bsrToCsr(g.bsr) }, g.rhs, { ...recipe, rtol: 1e-8, air: { ...recipe.air!, cycle: 'W' } });
      expect(result.outcome).toBe('solved');
      iters.push(result.iterations);
    }
    for (let k = 1; k < iters.length; k++) expect(iters[k], `iterations ${iters.join(' → ')}`).toBeLessThanOrEqual(Math.floor(1.2 * iters[k - 1]));
  });

  it('as the inner recipe of the slab preconditioner (FGMRES outside)', () => {
    const { bsr, rhs } = caseAt(8, 2);
    const recipe = parseRecipe({ krylov: 'fgmres', preconditioner: 'slab', inner: { preconditioner: 'air', rtol: 1e-10 } }, 'r');
    const system = { bsr, csr: bsrToCsr(bsr), slabOffsets: Int32Array.of(0, bsr.nBlockRows / 2, bsr.nBlockRows) };
    const { result } = solveSystem(system, rhs, recipe);
    expect(result.outcome).toBe('solved');
    expect(result.iterations).toBeLessThanOrEqual(2);
  });
});
