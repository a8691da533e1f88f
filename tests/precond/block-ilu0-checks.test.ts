/**
 * Contracts of src/precond/block-ilu0.ts that ilu0.test.ts, interface.test.ts and work-counts.test.ts
 * do not pin (found by mutation testing, README "Mutation testing"):
 *  - tier 2 (reference values): the factors and the apply on a pattern where fill is dropped,
 *    against a plain dense block ILU(0) written here (Saad, Iterative Methods for Sparse Linear
 *    Systems, 2nd ed. 2003, Algorithm 10.4, IKJ variant, applied block-wise) with ml-matrix's
 *    inverse for D_K⁻¹; the setup and apply work counts, memory and stats by hand (README "Work
 *    model", src/solvers/work.ts);
 *  - tier 1 (interface): each setup refusal (diagonal block absent, non-finite matrix, factors
 *    that overflow) with its reason, block row and message;
 *  - tier 3 (fast against slow): apply in kernel memory (WebAssembly) against the TypeScript
 *    sweeps, bit for bit, with and without an ordering, and with vectors outside kernel memory.
 */
import { describe, expect, it } from 'vitest';
import { inverse, Matrix } from 'ml-matrix';
import { BlockIlu0Preconditioner, createBlockIlu0 } from '../../src/precond/block-ilu0.js';
import type { Bsr } from '../../src/sparse/types.js';
import type { OrderingName } from '../../src/solvers/recipe.js';
import { bsrToDense, maxAbsDiff, randomBsr, randomVector, recipe, systemOf } from './helpers.js';
import { bsrInArena, firstDifference, inArena, withArena } from '../kernels/helpers.js';

const MiB = 1 << 20;

function make(a: Bsr, ordering: OrderingName = 'natural', shift = 0): BlockIlu0Preconditioner {
  return createBlockIlu0(systemOf(a), recipe({ preconditioner: 'block-ilu0', ordering, shift })) as BlockIlu0Preconditioner;
}

/**
 * Pattern P (nb 3): row 0 = {0, 2}, row 1 = {0, 1}, row 2 = {1, 2}. Eliminating (1, 0) would
 * create fill at (1, 2), which is outside the pattern and dropped; row 2 meets a row 1 without U blocks.
 */
function patternP(bs: number, seed: number): Bsr {
  return randomBsr(3, bs, [[0, 2], [1, 0], [2, 1]], seed);
}

/** Block (I, J) of a dense row-major n×n matrix as an ml-matrix Matrix. */
function blockOf(d: Float64Array, n: number, bs: number, I: number, J: number): Matrix {
  const rows: number[][] = [];
  for (let i = 0; i < bs; i++) rows.push(Array.from(d.subarray((I * bs + i) * n + J * bs, (I * bs + i) * n + J * bs + bs)));
  return new Matrix(rows);
}

/**
 * Plain block ILU(0) (Saad 2003, Alg. 10.4 block-wise): for I = 1..nb−1, for stored K < I:
 * A_IK ← A_IK·A_KK⁻¹, then A_IJ −= A_IK·A_KJ for stored (K, J), (I, J) with J > K. Returns the
 * blocks in pattern order with D_I⁻¹ in place of the diagonal block (the layout of factorValues).
 */
function referenceFactors(a: Bsr): Float64Array {
  const { nBlockRows: nb, bs, rowPtr, colInd } = a;
  const n = nb * bs;
  const stored = (I: number, J: number): boolean => {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) if (colInd[k] === J) return true;
    return false;
  };
  const blocks = new Map<string, Matrix>();
  const d = bsrToDense(a);
  for (let I = 0; I < nb; I++) for (let J = 0; J < nb; J++) if (stored(I, J)) blocks.set(`${I},${J}`, blockOf(d, n, bs, I, J));
  for (let I = 1; I < nb; I++) {
    for (let K = 0; K < I; K++) {
      if (!stored(I, K)) continue;
      const L = blocks.get(`${I},${K}`)!.mmul(inverse(blocks.get(`${K},${K}`)!));
      blocks.set(`${I},${K}`, L);
      for (let J = K + 1; J < nb; J++) {
        if (stored(I, J) && stored(K, J)) blocks.set(`${I},${J}`, blocks.get(`${I},${J}`)!.sub(L.mmul(blocks.get(`${K},${J}`)!)));
      }
    }
  }
  const out = new Float64Array(colInd.length * bs * bs);
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      const J = colInd[k];
      const m = J === I ? inverse(blocks.get(`${I},${I}`)!) : blocks.get(`${I},${J}`)!;
      out.set(m.to1DArray(), k * bs * bs);
    }
  }
  return out;
}

/** z = (L U)⁻¹ r from factorValues: unit block-lower L, then U with D_I⁻¹ on the diagonal, densely. */
function referenceApply(a: Bsr, f: Float64Array, r: Float64Array): Float64Array {
  const { nBlockRows: nb, bs, rowPtr, colInd } = a;
  const bb = bs * bs;
  const y = Float64Array.from(r);
  const mv = (k: number, x: Float64Array, xo: number): number[] => {
    const out: number[] = [];
    for (let i = 0; i < bs; i++) { let s = 0; for (let j = 0; j < bs; j++) s += f[k * bb + i * bs + j] * x[xo + j]; out.push(s); }
    return out;
  };
  for (let I = 0; I < nb; I++) {
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      if (colInd[k] >= I) continue;
      const v = mv(k, y, colInd[k] * bs);
      for (let i = 0; i < bs; i++) y[I * bs + i] -= v[i];
    }
  }
  for (let I = nb - 1; I >= 0; I--) {
    let dk = -1;
    for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
      if (colInd[k] === I) { dk = k; continue; }
      if (colInd[k] < I) continue;
      const v = mv(k, y, colInd[k] * bs);
      for (let i = 0; i < bs; i++) y[I * bs + i] -= v[i];
    }
    const v = mv(dk, y, I * bs);
    for (let i = 0; i < bs; i++) y[I * bs + i] = v[i];
  }
  return y;
}

describe('block ILU(0) against a plain dense block ILU(0) (Saad 2003, Alg. 10.4 block-wise)', () => {
  for (const bs of [1, 2, 3, 5]) {
    it(`bs = ${bs}, pattern with dropped fill: factors and apply`, () => {
      const a = patternP(bs, 40 + bs);
      const M = make(a);
      expect(M.setup()).toEqual({ ok: true });
      const f = M.factorValues(), want = referenceFactors(a);
      let scale = 0;
      for (const v of want) scale = Math.max(scale, Math.abs(v));
      expect(maxAbsDiff(f, want)).toBeLessThan(1e-13 * scale);
      const r = randomVector(3 * bs, 7 + bs), z = new Float64Array(3 * bs);
      M.apply(r, z);
      const zr = referenceApply(a, want, r);
      let zs = 0;
      for (const v of zr) zs = Math.max(zs, Math.abs(v));
      expect(maxAbsDiff(z, zr)).toBeLessThan(1e-12 * zs);
    });
  }
});

describe('block ILU(0) work, memory and stats by hand (README "Work model")', () => {
  // pattern P with bs 2 (bb 4, 8-byte values, 4-byte indices), nb 3, 6 stored blocks, 2 per row
  it('setup: 2284 bytes and 89 flops; setupFlops 80', () => {
    const M = make(patternP(2, 3));
    expect(M.setup()).toEqual({ ok: true });
    // symbolic pass: row pointers 4·(3 + 1) + column indices 4·6 = 40 B
    // each row (len 2): column indices read twice 2·2·4 = 16; scan 2·32 = 64 and copy 2·64 = 128 of
    // the row's blocks; D copied out 64; factorBlock 3 scans 96 + LU (2·32 + 2·4) 72 = 168; inverse
    // 72; the one U/L block copied out 64; the row scanned for finiteness 2·32 = 64: 640 B
    // row 1 eliminates (1,0): copy 64 + C = A·B 96 + row 0's one U column index 4 = 164 (its fill
    // at (1,2) is dropped: no C −= A·B); row 2 eliminates (2,1): 64 + 96 + 0 (row 1 has no U block) = 160
    const w = M.work().setup;
    expect(w.bytes).toBe(40 + 640 + (640 + 164) + (640 + 160));
    // flops: per row LU 5 + inverse 14 (src/solvers/work.ts); L₁₀ and L₂₁ one C = A·B each, 16
    expect(w.flops).toBe(3 * 19 + 2 * 16);
    expect(w.matvecs).toBe(0);
    // the benchmark's count (denseFlops): inverse 2bs³ = 16 per row, C = A·B 2bs³ = 16 per L block
    expect(M.stats()).toEqual({ ordering: 'natural', shift: 0, shiftedPivots: 0, setupFlops: 3 * 16 + 2 * 16 });
  });

  it('a kept update counts its C −= A·B in both counts (all four blocks of a 2×2-block matrix, bs 2)', () => {
    const M = make(randomBsr(2, 2, [[0, 1], [1, 0]], 3));
    expect(M.setup()).toEqual({ ok: true });
    // denseFlops: two inverses 16 each, L₁₀ 16, A₁₁ −= L₁₀U₀₁ 16
    expect(M.stats().setupFlops).toBe(64);
    // bytes: symbolic 4·3 + 4·4 = 28; rows as above with len 2: 640 each; row 1 eliminates (1,0):
    // copy 64 + C = A·B 96 + one U column index 4 + C −= A·B 4·32 = 128
    expect(M.work().setup.bytes).toBe(28 + 640 + 640 + 64 + 96 + 4 + 128);
  });

  it('stats name the shift and count the shifted pivots (nb·bs when shift ≠ 0)', () => {
    const M = make(patternP(2, 3), 'natural', 0.5);
    expect(M.setup()).toEqual({ ok: true });
    expect(M.stats()).toMatchObject({ ordering: 'natural', shift: 0.5, shiftedPivots: 6 });
    expect(M.name).toBe('block-ilu0');
    expect(M.variable).toBe(false);
  });

  it('memory: factors, factor pattern, permutation and workspace in bytes, with and without an ordering', () => {
    const a = patternP(2, 3);
    const N = make(a);
    expect(N.setup()).toEqual({ ok: true });
    // factors: 6 blocks · 4 · 8 = 192; pattern: lowerPtr 16 + lowerCol 2·4 + upperPtr 16 + upperCol 4·4 = 56; t: bs·8 = 16
    expect(N.memory()).toEqual({ 'factors (L, U and inverse diagonal blocks)': 192, 'factor pattern': 56, workspace: 16 });
    const R = make(a, 'rcm');
    expect(R.setup()).toEqual({ ok: true });
    // the same number of blocks and pointers; plus the permutation 3·4 and the permuted vector 6·8
    expect(R.memory()).toEqual({
      'factors (L, U and inverse diagonal blocks)': 192, 'factor pattern': 56, permutation: 12, workspace: 48 + 16,
    });
  });

  it('apply work with an ordering: two block permutations instead of the copy z ← r', () => {
    const a = patternP(2, 3);
    const N = make(a), R = make(a, 'rcm');
    expect(N.setup()).toEqual({ ok: true });
    expect(R.setup()).toEqual({ ok: true });
    const r = randomVector(6, 1), z = new Float64Array(6);
    N.apply(r, z);
    R.apply(r, z);
    R.apply(r, z);
    // sweeps over all 6 blocks: 2·6·4 = 48 fl; 6·(32 + 4) + 2·(4·4 row pointers + 2·6·8 vector) = 440 B,
    // minus 3·4 (no column index read for D⁻¹). Natural: z ← r 2·6·8 = 96 B. Ordered: gather and
    // scatter 2·(2·6·8 + 3·4) = 216 B.
    expect(N.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 1, innerIterations: 0, flops: 48, bytes: 96 + 440 - 12 });
    expect(R.work().apply).toEqual({ matvecs: 0, preconditionerApplies: 2, innerIterations: 0, flops: 96, bytes: 2 * (216 + 440 - 12) });
  });
});

describe('block ILU(0) setup refusals', () => {
  it('a block row without its diagonal block (an upper block only): zero-pivot naming that row', () => {
    // rows: 0 = {0}, 1 = {0, 2} (no (1,1)), 2 = {2}
    const a = randomBsr(3, 2, [[1, 0], [1, 2]], 5);
    const keep = [0, 1, 3, 4]; // drop block (1,1), stored 3rd (index 2)
    const cut: Bsr = {
      ...a, rowPtr: Int32Array.of(0, 1, 3, 4), colInd: Int32Array.from(keep, (k) => a.colInd[k]),
      values: Float64Array.from(keep.flatMap((k) => Array.from(a.values.subarray(k * 4, k * 4 + 4)))),
    };
    expect(Array.from(cut.colInd)).toEqual([0, 0, 2, 2]);
    expect(make(cut).setup()).toEqual({
      ok: false, reason: 'zero-pivot', blockRow: 1,
      message: 'block-ilu0: diagonal block of block row 1 is absent from the pattern; a diagonal shift (recipe shift > 0) avoids it only when the block is stored',
    });
  });

  it('a NaN in the last entry of an off-diagonal block: non-finite in the matrix blocks', () => {
    const a = patternP(2, 9);
    a.values[4 * 4 - 1] = NaN; // block (1,1) is stored 4th: last entry of row 1's last block
    expect(make(a).setup()).toEqual({
      ok: false, reason: 'non-finite', blockRow: 1, message: 'block-ilu0: non-finite value (NaN or Inf) in the matrix blocks of block row 1',
    });
  });

  it('an L block that overflows (finite matrix): non-finite in the factors, row 1', () => {
    // bs 2, rows 0 = {0}, 1 = {0, 1}: D₀ = 1e-300·I passes the relative pivot test; L₁₀ = A₁₀·D₀⁻¹
    // = diag(1, 1e10)·1e300 has entry (0,0) = 1e300 (finite) and entry (1,1) = Inf; D₁⁻¹ = I
    const a: Bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2, rowPtr: Int32Array.of(0, 1, 3), colInd: Int32Array.of(0, 0, 1),
      values: Float64Array.of(1e-300, 0, 0, 1e-300, 1, 0, 0, 1e10, 1, 0, 0, 1),
    };
    expect(make(a).setup()).toEqual({
      ok: false, reason: 'non-finite', blockRow: 1, message: 'block-ilu0: non-finite value (NaN or Inf) in the factors of block row 1',
    });
  });

  it('a D⁻¹ that overflows behind a finite U block: non-finite in the factors, row 0', () => {
    // bs 2, rows 0 = {0, 1}, 1 = {1}: D₀ = diag(1e-300, 1e-310) passes (1e-310 > 1e-14·1e-300) and
    // D₀⁻¹ = diag(1e300, Inf): its entry (0,0) is finite, the infinity sits in the last entry
    const a: Bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2, rowPtr: Int32Array.of(0, 2, 3), colInd: Int32Array.of(0, 1, 1),
      values: Float64Array.of(1e-300, 0, 0, 1e-310, 1, 2, 3, 4, 1, 0, 0, 1),
    };
    expect(make(a).setup()).toEqual({
      ok: false, reason: 'non-finite', blockRow: 0, message: 'block-ilu0: non-finite value (NaN or Inf) in the factors of block row 0',
    });
  });
});

describe('block ILU(0) apply in kernel memory against the TypeScript sweeps', () => {
  for (const ordering of ['natural', 'rcm'] as const) {
    for (const bs of [2, 5]) {
      it(`bs ${bs}, ${ordering}: bit-identical, dispatched, applies counted; vectors outside kernel memory take the TypeScript path`, () => {
        const a = randomBsr(9, bs, [[0, 4], [1, 0], [2, 1], [3, 8], [4, 2], [5, 4], [6, 5], [7, 3], [8, 6]], 60 + bs);
        const n = 9 * bs;
        const r = randomVector(n, 2);
        const ref = make(a, ordering);
        expect(ref.setup()).toEqual({ ok: true });
        const want = new Float64Array(n);
        ref.apply(r, want);
        withArena(4 * MiB, (arena) => {
          const M = make(bsrInArena(arena, a), ordering);
          expect(M.setup()).toEqual({ ok: true });
          const R = inArena(arena, r), z = inArena(arena, new Float64Array(n));
          const before = arena.dispatched;
          M.apply(R, z);
          // the whole apply (gather, both sweeps, scatter) is handed over at once: fewer hand-overs
          // than block rows, not one per block as the TypeScript sweeps' kernels would count from bs 4 up
          expect(arena.dispatched).toBeGreaterThan(before);
          expect(arena.dispatched - before).toBeLessThan(9);
          expect(firstDifference(z, want)).toBeUndefined();
          expect(firstDifference(R, r)).toBeUndefined();
          M.apply(R, z);
          const plain = new Float64Array(n);
          M.apply(r, plain); // r and plain are not in kernel memory
          expect(firstDifference(plain, want)).toBeUndefined();
          expect(M.work().apply).toEqual({ ...ref.work().apply, flops: 3 * ref.work().apply.flops, bytes: 3 * ref.work().apply.bytes, preconditionerApplies: 3 });
        });
      });
    }
  }
});
