/**
 * Jacobian storage of generated 3D+t matrices when the degree goes from p = 2 to p = 3
 * (reference-value tier). The basis size is C(p+4, 4) = 15 → 35 (Proriol 1957, Koornwinder 1975,
 * Dubiner 1991: dimension of degree-p polynomials on a 4-simplex), the block pattern depends on the
 * mesh only (one block per element and per face neighbour; common practice for DG), so the stored
 * values grow by exactly (35/15)² ≈ 5.44 and the index arrays not at all.
 *
 * This replaces a check that compared two zero-filled arrays built in the test on one pattern:
 * here both matrices come from the generator, their values are the real DG integrals, and the
 * projection of `estimate` is compared with them.
 */
import { describe, it, expect } from 'vitest';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { bsrBytes, bsrMemory } from '../../src/sparse/bsr.js';
import { estimateMemory } from '../../src/run/estimate.js';
import type { Bsr } from '../../src/sparse/types.js';

function generated(physics: string, order: number, cells: number[]): Bsr {
  return generateSystem(parseGeneratorParams({ physics, dim: 3, order, cells, slabs: 1, jitter: 0.1 }, 'test')).bsr;
}

/** Share of stored blocks holding at least one entry with |a| > 1e-14·max|a|. */
function nonzeroBlockShare(a: Bsr): number {
  const bb = a.bs * a.bs;
  let big = 0;
  for (const v of a.values) big = Math.max(big, Math.abs(v));
  let nz = 0;
  for (let k = 0; k < a.colInd.length; k++) {
    for (let q = 0; q < bb; q++) if (Math.abs(a.values[k * bb + q]) > 1e-14 * big) { nz++; break; }
  }
  return nz / a.colInd.length;
}

describe('3D+t generated Jacobians: p = 2 → 3 multiplies the stored values by (35/15)² and keeps the pattern', () => {
  for (const [physics, m, cells] of [['advection', 1, [2, 1, 1]], ['acoustics', 4, [1, 1, 1]]] as const) {
    it(`${physics} (${m} equation${m > 1 ? 's' : ''}), cells ${cells.join('×')}`, () => {
      const a2 = generated(physics, 2, [...cells]);
      const a3 = generated(physics, 3, [...cells]);
      expect(a2.bs).toBe(15 * m);
      expect(a3.bs).toBe(35 * m);
      expect(Array.from(a3.rowPtr)).toEqual(Array.from(a2.rowPtr));
      expect(Array.from(a3.colInd)).toEqual(Array.from(a2.colInd));
      const nBlocks = a2.colInd.length;
      expect(a2.values.length).toBe(nBlocks * (15 * m) ** 2);
      expect(a3.values.length).toBe(nBlocks * (35 * m) ** 2);
      expect(a3.values.byteLength / a2.values.byteLength).toBeCloseTo((35 / 15) ** 2, 12);
      // Index arrays are the same size, so the total ratio is just below (35/15)².
      const m2 = bsrMemory(a2), m3 = bsrMemory(a3);
      expect(m3.rowPtr + m3.colInd).toBe(m2.rowPtr + m2.colInd);
      const ratio = bsrBytes(a3) / bsrBytes(a2);
      const idx = m2.rowPtr + m2.colInd;
      expect(ratio).toBeCloseTo((m3.values + idx) / (m2.values + idx), 14);
      expect(ratio).toBeLessThan((35 / 15) ** 2);
      expect(ratio).toBeGreaterThan((35 / 15) ** 2 * 0.99);
      // The stored values are real integrals: every diagonal block and most others are non-zero.
      for (const a of [a2, a3]) {
        expect(a.values.every(Number.isFinite)).toBe(true);
        expect(nonzeroBlockShare(a)).toBeGreaterThan(0.5);
      }
      // The projection of `estimate` for the same case gives the same bytes.
      for (const [order, a] of [[2, a2], [3, a3]] as const) {
        const e = estimateMemory({ spaceDim: 3, order, equations: m, cells: [...cells], layersPerSlab: 1, slabs: 1, periodic: [false, false, false], restart: 30 });
        expect(e.bs).toBe(a.bs);
        expect(e.allAtOnce.jacobian.values).toBe(a.values.byteLength);
        expect(e.allAtOnce.jacobian.total).toBe(bsrBytes(a));
      }
    });
  }
});
