import { describe, it, expect } from 'vitest';
import { bsrSpmv, bsrToCsr, csrToBsr } from '../../src/sparse/bsr.js';
import { csrSpmv } from '../../src/sparse/csr.js';
import type { Bsr } from '../../src/sparse/types.js';

describe('bsr basics', () => {
  it('bsr and csr spmv agree on a non-symmetric 2x2-block matrix', () => {
    // [[1 2 | 0 0],[3 4 | 0 5],[0 0 | 6 7],[0 0 | 8 9]] as 2x2 blocks, hand-computed product
    const a: Bsr = {
      nBlockRows: 2, nBlockCols: 2, bs: 2,
      rowPtr: Int32Array.from([0, 2, 3]), colInd: Int32Array.from([0, 1, 1]),
      values: Float64Array.from([1, 2, 3, 4, 0, 0, 0, 5, 6, 7, 8, 9]),
    };
    const x = Float64Array.from([1, -1, 2, 3]);
    const y = new Float64Array(4);
    bsrSpmv(a, x, y);
    expect(Array.from(y)).toEqual([-1, -1 + 15, 12 + 21, 16 + 27]);
    const c = bsrToCsr(a);
    const y2 = new Float64Array(4);
    csrSpmv(c, x, y2);
    expect(Array.from(y2)).toEqual(Array.from(y));
    const back = csrToBsr(c, 2);
    expect(Array.from(back.values)).toEqual(Array.from(a.values));
    expect(Array.from(back.colInd)).toEqual([0, 1, 1]);
  });
});
