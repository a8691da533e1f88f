import { describe, it, expect } from 'vitest';
import { blockPattern } from '../../src/report/pattern.js';
import type { Bsr } from '../../src/sparse/types.js';
import { slabBsr } from './fixture.js';

const sum = (a: number[]): number => a.reduce((s, v) => s + v, 0);

describe('blockPattern', () => {
  it('counts blocks per cell on a hand-built 5×5 block matrix', () => {
    // Blocks at (0,0) (0,4) (1,1) (2,0) (2,2) (3,3) (4,3) (4,4); bs = 2 (values unused).
    const colInd = Int32Array.from([0, 4, 1, 0, 2, 3, 3, 4]);
    const a: Bsr = {
      nBlockRows: 5, nBlockCols: 5, bs: 2, rowPtr: Int32Array.from([0, 2, 3, 5, 6, 8]), colInd,
      values: new Float64Array(colInd.length * 4),
    };
    // 2 block rows per cell → 3×3 cells; cell rows {0,1},{2,3},{4}.
    const p = blockPattern(a, Int32Array.from([0, 2, 5]), 3);
    expect(p.cells).toBe(3);
    expect(p.blockRowsPerCell).toBe(2);
    expect(p.counts).toEqual([
      2, 0, 1,
      1, 2, 0,
      0, 1, 1,
    ]);
    expect(p.slabOffsets).toEqual([0, 2, 5]);
    expect(p.nBlockRows).toBe(5);
  });

  it('sums to the number of stored blocks for every grid size', () => {
    const { bsr, slabOffsets } = slabBsr(5, 23, 3);
    for (const cells of [1, 7, 50, 96, 115, 500]) {
      const p = blockPattern(bsr, slabOffsets, cells);
      expect(p.counts).toHaveLength(p.cells * p.cells);
      expect(sum(p.counts)).toBe(bsr.colInd.length);
      expect(p.cells).toBeLessThanOrEqual(Math.min(cells, bsr.nBlockRows));
      expect(p.cells * p.blockRowsPerCell).toBeGreaterThanOrEqual(bsr.nBlockRows);
    }
    // default: up to 96 cells
    const d = blockPattern(bsr, slabOffsets);
    expect(d.cells).toBeLessThanOrEqual(96);
    expect(sum(d.counts)).toBe(bsr.colInd.length);
  });

  it('keeps slab lower triangular structure: nothing above the slab diagonal', () => {
    const { bsr, slabOffsets } = slabBsr(4, 10, 2);
    const p = blockPattern(bsr, slabOffsets, 4); // one cell = 10 block rows = one slab
    for (let i = 0; i < 4; i++) for (let j = i + 1; j < 4; j++) expect(p.counts[i * 4 + j]).toBe(0);
    expect(p.counts[0]).toBe(10 + 2 * 9); // diagonal + two neighbours inside slab 0
    expect(p.counts[1 * 4 + 0]).toBe(10); // coupling to the previous slab
  });

  it('defaults slab offsets to one slab and rejects bad input', () => {
    const { bsr } = slabBsr(2, 4, 1);
    expect(blockPattern(bsr, undefined).slabOffsets).toEqual([0, 8]);
    expect(() => blockPattern(bsr, Int32Array.from([0, 3]))).toThrow(/slab offsets/);
    expect(() => blockPattern(bsr, undefined, 0)).toThrow(/cells/);
  });
});
