import { describe, expect, it } from 'vitest';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { blockGraph, describePartition, partitionBlocks } from '../../src/sparse/partition.js';
import { permutationProblem } from '../../src/sparse/permute.js';
import { csrFromTriplets, poisson2d, tridiag } from './model-matrices.js';

describe('partitionBlocks (recursive bisection of the block graph)', () => {
  it('a path of 16 blocks in 4 parts: contiguous parts of 4, cut 6 blocks (3 interfaces × 2 directions)', () => {
    const a = csrToBsr(tridiag(16, -1, 2, -1), 1);
    const p = partitionBlocks(a, 4);
    expect(p.sizes).toEqual([4, 4, 4, 4]);
    expect(p.edgeCut).toBe(6);
    // every part is a contiguous run of the path (the level structure of a path is the path)
    for (let q = 0; q < 4; q++) {
      const rows = Array.from(p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]));
      expect(rows[rows.length - 1] - rows[0]).toBe(3);
    }
    expect(permutationProblem(p.perm, 16)).toBeUndefined();
    // halo: end parts see one outside block, middle parts two (8 bytes each at bs 1)
    expect([...p.haloBytesPerPart].sort()).toEqual([16, 16, 8, 8]);
  });

  it('a 16×16 grid (Poisson) in 2, 4, 8 parts: balanced, cut near the straight-line optimum', () => {
    const a = csrToBsr(poisson2d(16), 1);
    for (const P of [2, 4, 8]) {
      const p = partitionBlocks(a, P);
      expect(Math.max(...p.sizes) - Math.min(...p.sizes)).toBeLessThanOrEqual(1);
      expect(p.sizes.reduce((s, v) => s + v, 0)).toBe(256);
      // a straight cut of the 16×16 grid crosses 16 edges (32 stored blocks); P parts by
      // straight lines need about (P−1)·16 edges for strips; allow twice that of the best
      const best = { 2: 16, 4: 32, 8: 64 }[P]!;
      expect(p.edgeCut / 2).toBeLessThanOrEqual(2 * best);
      expect(permutationProblem(p.perm, 256)).toBeUndefined();
    }
  });

  it('disconnected graphs and P = number of block rows work', () => {
    const a = csrToBsr(csrFromTriplets(6, [0, 1, 2, 3, 4, 5].map((i) => [i, i, 1] as [number, number, number])), 1); // diagonal: no edges
    const p = partitionBlocks(a, 6);
    expect(p.sizes).toEqual([1, 1, 1, 1, 1, 1]);
    expect(p.edgeCut).toBe(0);
    expect(() => partitionBlocks(a, 7)).toThrow(/from 1 to 6/);
  });

  it("slabs 'within': every part lies inside one slab, parts shared by slab size", () => {
    const a = csrToBsr(tridiag(30, -1, 2, 0), 1);
    const offs = Int32Array.of(0, 10, 30);
    const p = partitionBlocks(a, 3, { slabs: 'within', slabOffsets: offs });
    for (let q = 0; q < 3; q++) {
      const rows = Array.from(p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]));
      const slab = (I: number) => (I < 10 ? 0 : 1);
      expect(new Set(rows.map(slab)).size).toBe(1);
    }
    expect([...p.sizes].sort((x, y) => x - y)).toEqual([10, 10, 10]);
    expect(() => partitionBlocks(a, 1, { slabs: 'within', slabOffsets: offs })).toThrow(/one part per slab/);
  });

  it('describePartition counts cut, halo and neighbours of a given assignment', () => {
    const a = csrToBsr(tridiag(4, -1, 2, -1), 1);
    const d = describePartition(a, Int32Array.of(0, 1, 0, 1), 2);
    expect(d.edgeCut).toBe(6);
    expect(d.haloBlocksPerPart).toEqual([2, 2]);
    expect(d.neighboursPerPart).toEqual([1, 1]);
    expect(Array.from(d.perm)).toEqual([0, 2, 1, 3]);
    expect(Array.from(blockGraph(a).adj)).toEqual([1, 0, 2, 1, 3, 2]);
  });
});
