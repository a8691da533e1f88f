/**
 * Symmetric block Gauss–Seidel / block SSOR against outside references (reference-value tier).
 *
 * One symmetric sweep from x = 0 (forward then backward) applies M_SSOR⁻¹ with
 *   M_SSOR = (D + ωL) D⁻¹ (D + ωU) / (ω(2 − ω)),
 * D the block diagonal, L and U the strictly lower and upper block parts (Saad, Iterative Methods
 * for Sparse Linear Systems, 2nd ed. 2003, §4.1, eq. 4.13 and §10.2; Young, Iterative Solution of
 * Large Linear Systems, 1971). The test builds M_SSOR densely from that formula and solves with
 * its own Gaussian elimination, independent of src/precond. k sweeps are k steps of the
 * stationary iteration x ← x + M_SSOR⁻¹(r − A x) from 0 (derived).
 *
 * Convergence factor: /work/shared/references.md lists no published SSOR factor, so the measured
 * rate of x ← x + M⁻¹(b − Ax) is compared with the spectral radius of I − M_SSOR⁻¹A computed
 * densely from the formula (ml-matrix eigenvalues), on the 1D and 2D model problems whose Jacobi
 * and Gauss–Seidel factors stationary-rates.test.ts checks against the published values.
 *
 * Guards against: the symmetric sweep reduced to a forward sweep (src/precond/block-gs.ts, apply):
 * every check below then fails (the hand-computed two-block case gives 0.25 instead of 0.225).
 */
import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { createBlockGs } from '../../src/precond/block-gs.js';
import type { Bsr, Csr } from '../../src/sparse/types.js';
import { bsrToDense, poisson1d, poisson2d, randomBsr, randomVector, recipe, rng, systemOf, systemOfCsr, csrMatVec } from './helpers.js';

/** Solve the dense n×n system M z = r by Gaussian elimination with partial pivoting (copies M). */
function denseSolve(Min: Float64Array, n: number, r: Float64Array): Float64Array {
  const M = Min.slice();
  const z = r.slice();
  for (let c = 0; c < n; c++) {
    let p = c;
    for (let i = c + 1; i < n; i++) if (Math.abs(M[i * n + c]) > Math.abs(M[p * n + c])) p = i;
    if (p !== c) {
      for (let j = 0; j < n; j++) { const t = M[c * n + j]; M[c * n + j] = M[p * n + j]; M[p * n + j] = t; }
      const t = z[c]; z[c] = z[p]; z[p] = t;
    }
    for (let i = c + 1; i < n; i++) {
      const m = M[i * n + c] / M[c * n + c];
      if (m === 0) continue;
      for (let j = c; j < n; j++) M[i * n + j] -= m * M[c * n + j];
      z[i] -= m * z[c];
    }
  }
  for (let i = n - 1; i >= 0; i--) {
    let s = z[i];
    for (let j = i + 1; j < n; j++) s -= M[i * n + j] * z[j];
    z[i] = s / M[i * n + i];
  }
  return z;
}

function matMul(A: Float64Array, B: Float64Array, n: number): Float64Array {
  const C = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let k = 0; k < n; k++) {
    const a = A[i * n + k];
    if (a !== 0) for (let j = 0; j < n; j++) C[i * n + j] += a * B[k * n + j];
  }
  return C;
}

/** Dense M_SSOR = (D + ωL) D⁻¹ (D + ωU) / (ω(2 − ω)) for block size bs (Saad 2003, §4.1). */
function ssorMatrix(A: Float64Array, n: number, bs: number, omega: number): Float64Array {
  const blk = (i: number): number => Math.floor(i / bs);
  const DL = new Float64Array(n * n), DU = new Float64Array(n * n), Dd = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    const a = A[i * n + j];
    if (blk(i) === blk(j)) { DL[i * n + j] = a; DU[i * n + j] = a; Dd[i * n + j] = a; }
    else if (blk(j) < blk(i)) DL[i * n + j] = omega * a;
    else DU[i * n + j] = omega * a;
  }
  // D⁻¹ (D + ωU), column by column.
  const X = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    const col = new Float64Array(n);
    for (let i = 0; i < n; i++) col[i] = DU[i * n + j];
    const s = denseSolve(Dd, n, col);
    for (let i = 0; i < n; i++) X[i * n + j] = s[i];
  }
  const M = matMul(DL, X, n);
  const c = 1 / (omega * (2 - omega));
  for (let i = 0; i < M.length; i++) M[i] *= c;
  return M;
}

function denseMatVec(A: Float64Array, n: number, x: Float64Array): Float64Array {
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) { let s = 0; for (let j = 0; j < n; j++) s += A[i * n + j] * x[j]; y[i] = s; }
  return y;
}

function maxRel(a: Float64Array, b: Float64Array): number {
  let d = 0, s = 0;
  for (let i = 0; i < a.length; i++) { d = Math.max(d, Math.abs(a[i] - b[i])); s = Math.max(s, Math.abs(b[i])); }
  return d / s;
}

describe('symmetric block Gauss–Seidel, hand-computed two-block case (derived by hand)', () => {
  // A = [[4, 1], [2, 5]], bs = 1, r = (1, 1), ω = 1:
  // forward  x1 = 1/4,              x2 = (1 − 2·x1)/5 = 0.1
  // backward x2 = (1 − 2·x1)/5 = 0.1, x1 = (1 − 1·x2)/4 = 0.225
  const a: Bsr = { nBlockRows: 2, nBlockCols: 2, bs: 1, rowPtr: Int32Array.from([0, 2, 4]), colInd: Int32Array.from([0, 1, 0, 1]), values: Float64Array.from([4, 1, 2, 5]) };
  it('one symmetric sweep gives z = (0.225, 0.1); a forward sweep would give (0.25, 0.1)', () => {
    const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'symmetric' }));
    expect(M.setup().ok).toBe(true);
    const z = new Float64Array(2);
    M.apply(Float64Array.from([1, 1]), z);
    expect(z[0]).toBeCloseTo(0.225, 15);
    expect(z[1]).toBeCloseTo(0.1, 15);
    const F = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'forward' }));
    F.setup();
    F.apply(Float64Array.from([1, 1]), z);
    expect(z[0]).toBeCloseTo(0.25, 15);
    expect(z[1]).toBeCloseTo(0.1, 15);
  });
  it('with ω = 1.5 the last row is relaxed twice: x2 = ω(2 − ω)·(1 − 2·x1)/5 (derived from the sweep)', () => {
    // forward  x1 = 1.5/4 = 0.375, t = (1 − 0.75)/5 = 0.05, x2 = 1.5·0.05 = 0.075
    // backward x2 = −0.5·0.075 + 1.5·0.05 = 0.0375, x1 = −0.5·0.375 + 1.5·(1 − 0.0375)/4 = 0.1734375
    const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.5 }));
    M.setup();
    const z = new Float64Array(2);
    M.apply(Float64Array.from([1, 1]), z);
    expect(z[1]).toBeCloseTo(0.0375, 15);
    expect(z[0]).toBeCloseTo(0.1734375, 15);
  });
});

describe('symmetric block Gauss–Seidel equals M_SSOR⁻¹ built densely from (D + ωL) D⁻¹ (D + ωU)/(ω(2 − ω)) (Saad 2003, §4.1; Young 1971)', () => {
  const nb = 9;
  const r = rng(71);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
  for (const bs of [1, 3]) {
    const a = randomBsr(nb, bs, pattern, 72 + bs);
    const n = nb * bs;
    const A = bsrToDense(a);
    for (const omega of [1, 0.7, 1.4]) {
      for (const blockInverse of ['inverse', 'lu'] as const) {
        it(`random non-symmetric blocks, bs ${bs}, ω ${omega}, ${blockInverse} blocks`, () => {
          const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega, blockInverse }));
          expect(M.setup().ok).toBe(true);
          const S = ssorMatrix(A, n, bs, omega);
          const rhs = randomVector(n, 73);
          const z = new Float64Array(n);
          M.apply(rhs, z);
          expect(maxRel(z, denseSolve(S, n, rhs))).toBeLessThan(1e-12);
        });
      }
    }
    it(`two sweeps are two SSOR steps x ← x + M⁻¹(r − A x) from 0 (bs ${bs}, ω 1.2; derived)`, () => {
      const omega = 1.2;
      const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega, sweeps: 2 }));
      expect(M.setup().ok).toBe(true);
      const S = ssorMatrix(A, n, bs, omega);
      const rhs = randomVector(n, 74);
      const x1 = denseSolve(S, n, rhs);
      const res = denseMatVec(A, n, x1);
      for (let i = 0; i < n; i++) res[i] = rhs[i] - res[i];
      const dx = denseSolve(S, n, res);
      const want = x1.map((v, i) => v + dx[i]);
      const z = new Float64Array(n);
      M.apply(rhs, z);
      expect(maxRel(z, want)).toBeLessThan(1e-12);
    });
  }
});

/** ‖e_{k+1}‖/‖e_k‖ of x ← x + M⁻¹(−A x) after `steps` steps (power iteration on I − M⁻¹A). */
function measuredRate(A: Csr, apply: (r: Float64Array, z: Float64Array) => void, steps: number): number {
  const n = A.nRows;
  const x = randomVector(n, 99);
  const z = new Float64Array(n);
  let rate = 0;
  for (let k = 0; k < steps; k++) {
    const before = Math.hypot(...x);
    const res = csrMatVec(A, x);
    for (let i = 0; i < n; i++) res[i] = -res[i];
    apply(res, z);
    for (let i = 0; i < n; i++) x[i] += z[i];
    const after = Math.hypot(...x);
    rate = after / before;
    for (let i = 0; i < n; i++) x[i] /= after;
  }
  return rate;
}

/** Spectral radius of I − M_SSOR⁻¹ A from the dense formula (ml-matrix eigenvalues). */
function ssorSpectralRadius(A: Float64Array, n: number, bs: number, omega: number): number {
  const S = ssorMatrix(A, n, bs, omega);
  const G: number[][] = [];
  for (let i = 0; i < n; i++) G.push(new Array(n).fill(0));
  for (let j = 0; j < n; j++) {
    const col = new Float64Array(n);
    for (let i = 0; i < n; i++) col[i] = A[i * n + j];
    const s = denseSolve(S, n, col);
    for (let i = 0; i < n; i++) G[i][j] = (i === j ? 1 : 0) - s[i];
  }
  const e = new EigenvalueDecomposition(new Matrix(G));
  let rho = 0;
  for (let i = 0; i < n; i++) rho = Math.max(rho, Math.hypot(e.realEigenvalues[i], e.imaginaryEigenvalues[i]));
  return rho;
}

function csrDense(c: Csr): Float64Array {
  const n = c.nRows;
  const d = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let k = c.rowPtr[i]; k < c.rowPtr[i + 1]; k++) d[i * n + c.colInd[k]] = c.values[k];
  return d;
}

describe('symmetric Gauss–Seidel convergence factor equals ρ(I − M_SSOR⁻¹A) of the dense formula (model problems of stationary-rates.test.ts)', () => {
  it('1D Poisson T_21, bs 1, ω = 1 and 1.5', () => {
    const A = poisson1d(21);
    for (const omega of [1, 1.5]) {
      const M = createBlockGs(systemOfCsr(A, 1), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega }));
      expect(M.setup().ok).toBe(true);
      const rho = ssorSpectralRadius(csrDense(A), 21, 1, omega);
      expect(rho).toBeLessThan(1);
      // The forward-sweep factor of the same problem, cos²(πh) = 0.9797464868 (Young 1971), differs.
      if (omega === 1) expect(Math.abs(rho - 0.9797464868)).toBeGreaterThan(1e-3);
      expect(measuredRate(A, (res, z) => M.apply(res, z), 1500)).toBeCloseTo(rho, 7);
    }
  });
  it('2D 5-point Laplacian m = 4 with line blocks (bs 4 = one grid line per block), ω = 1.2', () => {
    const A = poisson2d(4);
    const M = createBlockGs(systemOfCsr(A, 4), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.2 }));
    expect(M.setup().ok).toBe(true);
    const rho = ssorSpectralRadius(csrDense(A), 16, 4, 1.2);
    expect(rho).toBeLessThan(1);
    expect(measuredRate(A, (res, z) => M.apply(res, z), 400)).toBeCloseTo(rho, 8);
  });
});

describe('forward and backward block SOR sweeps equal (D + ωL)⁻¹ω and (D + ωU)⁻¹ω built densely (Saad 2003, §4.1)', () => {
  const nb = 7, bs = 2;
  const r = rng(81);
  const pattern: Array<[number, number]> = [];
  for (let I = 0; I < nb; I++) for (let t = 0; t < 3; t++) pattern.push([I, Math.floor(r() * nb)]);
  const a = randomBsr(nb, bs, pattern, 82);
  const n = nb * bs;
  const A = bsrToDense(a);
  for (const sweep of ['forward', 'backward'] as const) {
    for (const omega of [1, 0.6, 1.7]) {
      it(`${sweep}, ω ${omega}: one sweep is M⁻¹ with M = D/ω + ${sweep === 'forward' ? 'L' : 'U'}; two sweeps are two steps with that M`, () => {
        const M = new Float64Array(n * n);
        for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
          const I = Math.floor(i / bs), J = Math.floor(j / bs);
          if (I === J) M[i * n + j] = A[i * n + j] / omega;
          else if (sweep === 'forward' ? J < I : J > I) M[i * n + j] = A[i * n + j];
        }
        const rhs = randomVector(n, 83);
        const one = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep, omega }));
        expect(one.setup().ok).toBe(true);
        const z = new Float64Array(n);
        one.apply(rhs, z);
        const x1 = denseSolve(M, n, rhs);
        expect(maxRel(z, x1)).toBeLessThan(1e-12);
        const two = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep, omega, sweeps: 2, blockInverse: 'lu' }));
        expect(two.setup().ok).toBe(true);
        two.apply(rhs, z);
        const res = denseMatVec(A, n, x1);
        for (let i = 0; i < n; i++) res[i] = rhs[i] - res[i];
        const dx = denseSolve(M, n, res);
        expect(maxRel(z, x1.map((v, i) => v + dx[i]))).toBeLessThan(1e-12);
      });
    }
  }
});

describe('block-gs reports exact memory and statistics (derived from what it stores)', () => {
  const nb = 6, bs = 3, bb = 9;
  const a = randomBsr(nb, bs, [[1, 0], [2, 1], [4, 5]], 91);
  it('inverse blocks: nb·bs² doubles, workspace (2bs + bs²) doubles + bs Int32 pivots; setup flops nb·2bs³', () => {
    const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', sweep: 'symmetric', omega: 1.1, sweeps: 2 }));
    expect(M.setup().ok).toBe(true);
    // symmetric sweeps in the natural order also keep each row's partial sum (n doubles), see block-gs.ts
    expect(M.memory()).toEqual({ 'inverse blocks': nb * bb * 8, workspace: (2 * bs + bb) * 8 + bs * 4, 'row prefixes (symmetric sweeps)': nb * bs * 8 });
    expect(M.stats!()).toEqual({
      sweep: 'symmetric', sweeps: 2, omega: 1.1, ordering: 'natural', blockInverse: 'inverse', shift: 0, shiftedPivots: 0,
      setupFlops: nb * 2 * bs ** 3, // LU (2bs³/3) + inverse from the factors (4bs³/3); common practice
    });
  });
  it('LU blocks: nb·bs² doubles of factors, nb·bs Int32 pivots, bs doubles of workspace; setup flops nb·2bs³/3; shift counted on every pivot', () => {
    const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', blockInverse: 'lu', shift: 0.5 }));
    expect(M.setup().ok).toBe(true);
    expect(M.memory()).toEqual({ 'factors (diagonal-block LU)': nb * bb * 8, pivots: nb * bs * 4, workspace: bs * 8 });
    const s = M.stats!();
    expect(s.setupFlops).toBeCloseTo((nb * 2 * bs ** 3) / 3, 10);
    expect(s.shiftedPivots).toBe(nb * bs);
    expect(s.shift).toBe(0.5);
  });
  it('accepts ω just inside (0, 2) and rejects the ends and a fractional sweep count', () => {
    const sys = systemOf(a);
    for (const omega of [1e-9, 1.999]) expect(() => createBlockGs(sys, recipe({ preconditioner: 'block-gs', omega }))).not.toThrow();
    for (const omega of [0, 2, -1]) expect(() => createBlockGs(sys, recipe({ preconditioner: 'block-gs', omega }))).toThrow(/omega .* is outside \(0, 2\)/);
    expect(() => createBlockGs(sys, recipe({ preconditioner: 'block-gs', sweeps: 1.5 }))).toThrow(/sweeps 1.5 is not a positive integer/);
  });
  it('a shift is added to every diagonal block: with A = D only, z = (D + shift·I)⁻¹ r', () => {
    const d = randomBsr(3, 2, [], 92);
    const shift = 0.75;
    const M = createBlockGs(systemOf(d), recipe({ preconditioner: 'block-gs', shift }));
    expect(M.setup().ok).toBe(true);
    const D = bsrToDense(d);
    for (let i = 0; i < 6; i++) D[i * 6 + i] += shift;
    const rhs = randomVector(6, 93);
    const z = new Float64Array(6);
    M.apply(rhs, z);
    expect(maxRel(z, denseSolve(D, 6, rhs))).toBeLessThan(1e-13);
  });
});

describe('block-gs without a stored diagonal block: the shifted zero block is used (shift·I), in both block modes', () => {
  // Block row 2 stores no diagonal block; with a shift the factor is shift·I, so one forward sweep is
  // M⁻¹r with M = (block diagonal with shift·I in row 2) + strictly lower part (derived from the sweep).
  const bs = 2, nb = 4, n = 8;
  const pattern: Array<[number, number]> = [[1, 0], [2, 1], [3, 2], [0, 3]];
  const full = randomBsr(nb, bs, pattern, 95);
  // Drop block (2, 2) from the pattern.
  const keep: number[] = [];
  for (let k = 0; k < full.colInd.length; k++) if (!(k >= full.rowPtr[2] && k < full.rowPtr[3] && full.colInd[k] === 2)) keep.push(k);
  const rowPtr = new Int32Array(nb + 1);
  for (const k of keep) { let I = 0; while (k >= full.rowPtr[I + 1]) I++; rowPtr[I + 1]++; }
  for (let I = 0; I < nb; I++) rowPtr[I + 1] += rowPtr[I];
  const a: Bsr = {
    nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd: Int32Array.from(keep.map((k) => full.colInd[k])),
    values: Float64Array.from(keep.flatMap((k) => Array.from(full.values.subarray(k * 4, k * 4 + 4)))),
  };
  for (const blockInverse of ['inverse', 'lu'] as const) {
    it(`${blockInverse} blocks`, () => {
      const shift = 3;
      const without = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', blockInverse }));
      const fail = without.setup();
      expect(fail.ok).toBe(false);
      if (!fail.ok) expect(fail.blockRow).toBe(2);
      const M = createBlockGs(systemOf(a), recipe({ preconditioner: 'block-gs', blockInverse, shift }));
      expect(M.setup().ok).toBe(true);
      const A = bsrToDense(a);
      const S = new Float64Array(n * n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
        const I = Math.floor(i / bs), J = Math.floor(j / bs);
        if (J < I) S[i * n + j] = A[i * n + j];
        else if (J === I) S[i * n + j] = A[i * n + j] + (i === j ? shift : 0);
      }
      const rhs = randomVector(n, 96);
      const z = new Float64Array(n);
      M.apply(rhs, z);
      expect(maxRel(z, denseSolve(S, n, rhs))).toBeLessThan(1e-13);
    });
  }
  it('is a fixed linear operator named block-gs (not variable: plain GMRES may use it)', () => {
    const M = createBlockGs(systemOf(full), recipe({ preconditioner: 'block-gs' }));
    expect(M.name).toBe('block-gs');
    expect(M.variable).toBe(false);
  });
});
