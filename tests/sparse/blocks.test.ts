import { describe, it, expect } from 'vitest';
import { diagonalBlockIndex, extractDiagonalBlocks } from '../../src/sparse/blocks.js';
import type { Bsr } from '../../src/sparse/types.js';
import { rng, randomBsr, bsrDense } from './random-sparse.js';

describe('diagonal blocks', () => {
  it('finds the diagonal block of each block row and copies it row-major', () => {
    const a = randomBsr(rng(4), 30, 30, 3, 5);
    const idx = diagonalBlockIndex(a);
    const d = extractDiagonalBlocks(a);
    const dense = bsrDense(a);
    for (let I = 0; I < 30; I++) {
      expect(a.colInd[idx[I]]).toBe(I);
      for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(d[I * 9 + i * 3 + j]).toBe(dense.get(I * 3 + i, I * 3 + j));
    }
  });
  it('a missing diagonal block gives index −1 and a zero block', () => {
    // block row 1 holds only block (1, 0)
    const a: Bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2, rowPtr: Int32Array.from([0, 2, 3]), colInd: Int32Array.from([0, 1, 0]),
      values: Float64Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]),
    };
    expect(Array.from(diagonalBlockIndex(a))).toEqual([0, -1]);
    expect(Array.from(extractDiagonalBlocks(a))).toEqual([1, 2, 3, 4, 0, 0, 0, 0]);
  });
  it('rectangular: block rows past the last block column have no diagonal', () => {
    const a = randomBsr(rng(5), 6, 4, 2, 4);
    const idx = diagonalBlockIndex(a);
    expect(Array.from(idx.subarray(4))).toEqual([-1, -1]);
  });
});
