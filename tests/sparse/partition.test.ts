import { describe, expect, it } from 'vitest';
import { csrToBsr } from '../../src/sparse/bsr.js';
import { blockGraph, describePartition, partitionBlocks } from '../../src/sparse/partition.js';
import { permutationProblem } from '../../src/sparse/permute.js';
import { csrFromTriplets, poisson2d, tridiag } from './model-matrices.js';
import type { Centroids } from '../../src/sparse/types.js';
import { mulberry32 } from '../../src/util/random.js';

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

/** Grid point (k mod m, ⌊k / m⌋) of block row k of poisson2d(m) (neighbours k ± 1 and k ± m). */
function gridPoints(m: number): Centroids {
  const values = new Float64Array(2 * m * m);
  for (let k = 0; k < m * m; k++) { values[2 * k] = k % m; values[2 * k + 1] = Math.floor(k / m); }
  return { nCoordinates: 2, values };
}

describe("partitionBlocks method 'coordinates' (recursive coordinate bisection, Berger & Bokhari 1987)", () => {
  const m = 16, a = csrToBsr(poisson2d(m), 1), pts = gridPoints(m);
  const boxOf = (p: ReturnType<typeof partitionBlocks>, q: number) => {
    const rows = Array.from(p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]));
    const xs = rows.map((k) => k % m), ys = rows.map((k) => Math.floor(k / m));
    return [Math.min(...xs), Math.max(...xs), Math.min(...ys), Math.max(...ys)];
  };

  it('a 16×16 grid: 2 halves, 4 quadrants, 8 boxes of 4×8 — exactly the straight cuts', () => {
    // P = 2: one cut across x (the first of two equally wide axes) crossing 16 edges = 32 stored blocks
    const p2 = partitionBlocks(a, 2, { method: 'coordinates', centroids: pts });
    expect(p2.method).toBe('coordinates');
    expect(p2.sizes).toEqual([128, 128]);
    expect(p2.edgeCut).toBe(32);
    expect([boxOf(p2, 0), boxOf(p2, 1)]).toEqual([[0, 7, 0, 15], [8, 15, 0, 15]]);
    // P = 4: then across y in each half: quadrants, cut lines x = 7.5 and y = 7.5 (32 edges)
    const p4 = partitionBlocks(a, 4, { method: 'coordinates', centroids: pts });
    expect(p4.sizes).toEqual([64, 64, 64, 64]);
    expect(p4.edgeCut).toBe(64);
    expect([0, 1, 2, 3].map((q) => boxOf(p4, q))).toEqual([[0, 7, 0, 7], [0, 7, 8, 15], [8, 15, 0, 7], [8, 15, 8, 15]]);
    // a quadrant receives 8 + 8 outside points (8 bytes each at bs 1) from its 2 edge neighbours
    expect(p4.haloBytesPerPart).toEqual([128, 128, 128, 128]);
    expect(p4.neighboursPerPart).toEqual([2, 2, 2, 2]);
    // P = 8: 8×8 quadrants cut across x again: 4×8 boxes, cut lines x = 3.5, 7.5, 11.5 and y = 7.5 (64 edges)
    const p8 = partitionBlocks(a, 8, { method: 'coordinates', centroids: pts });
    expect(p8.sizes).toEqual(new Array(8).fill(32));
    expect(p8.edgeCut).toBe(128);
    expect(boxOf(p8, 0)).toEqual([0, 3, 0, 7]);
    expect(permutationProblem(p8.perm, 256)).toBeUndefined();
  });

  it('P need not be a power of two: shares proportional to the parts each side gets (±1 block row)', () => {
    for (const P of [3, 5, 7]) {
      const p = partitionBlocks(a, P, { method: 'coordinates', centroids: pts });
      expect(Math.max(...p.sizes) - Math.min(...p.sizes)).toBeLessThanOrEqual(1);
      expect(p.sizes.reduce((s, v) => s + v, 0)).toBe(256);
    }
  });

  it('follows the points, not the numbering: renumbered rows give the same parts (no ties)', () => {
    // points in general position (distinct coordinates on every axis), rows renumbered by a shuffle
    const n = 40, rand = mulberry32(7);
    const values = new Float64Array(3 * n);
    for (let i = 0; i < 3 * n; i++) values[i] = rand() * (i % 3 === 0 ? 4 : 1);
    const chain = csrToBsr(tridiag(n, -1, 2, -1), 1);
    const p = partitionBlocks(chain, 4, { method: 'coordinates', centroids: { nCoordinates: 3, values } });
    const perm = Int32Array.from({ length: n }, (_v, i) => i); // new → old, a seeded Fisher–Yates shuffle
    for (let i = n - 1; i > 0; i--) { const j = Math.floor(rand() * (i + 1)); [perm[i], perm[j]] = [perm[j], perm[i]]; }
    const moved = new Float64Array(3 * n);
    for (let i = 0; i < n; i++) moved.set(values.subarray(3 * perm[i], 3 * perm[i] + 3), 3 * i);
    const q = partitionBlocks(chain, 4, { method: 'coordinates', centroids: { nCoordinates: 3, values: moved } });
    for (let i = 0; i < n; i++) expect(q.part[i]).toBe(p.part[perm[i]]);
    // the first cut is across the widest axis (0, spread 4): part 0 ∪ 1 lies left of part 2 ∪ 3
    let leftMax = -Infinity, rightMin = Infinity;
    for (let i = 0; i < n; i++) {
      if (p.part[i] < 2) leftMax = Math.max(leftMax, values[3 * i]); else rightMin = Math.min(rightMin, values[3 * i]);
    }
    expect(leftMax).toBeLessThan(rightMin);
  });

  it('ties are broken by block row: identical points give contiguous runs', () => {
    const chain = csrToBsr(tridiag(12, -1, 2, -1), 1);
    const p = partitionBlocks(chain, 3, { method: 'coordinates', centroids: { nCoordinates: 1, values: new Float64Array(12) } });
    expect(Array.from(p.part)).toEqual([0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2]);
  });

  it("slabs 'within': every part inside one slab, each slab bisected on its own", () => {
    // two slabs of the 16×16 grid: rows 0..127 and 128..255 (y < 8 and y ≥ 8)
    const offs = Int32Array.of(0, 128, 256);
    const p = partitionBlocks(a, 4, { method: 'coordinates', centroids: pts, slabs: 'within', slabOffsets: offs });
    for (let q = 0; q < 4; q++) {
      const rows = Array.from(p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]));
      expect(new Set(rows.map((I) => (I < 128 ? 0 : 1))).size).toBe(1);
    }
    // each 16×8 slab is cut across x (its wider axis)
    expect([0, 1, 2, 3].map((q) => boxOf(p, q))).toEqual([[0, 7, 0, 7], [8, 15, 0, 7], [0, 7, 8, 15], [8, 15, 8, 15]]);
  });

  it('needs one point per block row', () => {
    expect(() => partitionBlocks(a, 2, { method: 'coordinates' })).toThrow(/coordinate bisection needs one point per block row \(256 block rows, no centroids\)/);
    expect(() => partitionBlocks(a, 2, { method: 'coordinates', centroids: { nCoordinates: 2, values: new Float64Array(10) } })).toThrow(/256 block rows, 5 points/);
  });
});
