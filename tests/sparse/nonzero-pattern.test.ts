import { describe, it, expect } from 'vitest';
import {
  nonzeroBlockPattern, stronglyConnectedBlocks, triangularStructure, zeroBlocks,
} from '../../src/sparse/structure.js';
import { systemFromMatrix } from '../../src/sparse/system.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { buildInspectReport, formatInspectReport } from '../../src/cli/inspect-report.js';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import type { Bsr } from '../../src/sparse/types.js';
import type { MatrixMarketHeader } from '../../src/sparse/matrix-market-header.js';

/**
 * Hand-made 3 × 3 blocks, bs 2. Stored blocks: (0,0) (0,1) (1,0) (1,1) (1,2) (2,1) (2,2); blocks
 * (0,1) and (2,1) hold only zeros, the rest are [[2, 1], [1, 3]]. Stored graph: 0 ↔ 1 ↔ 2, one
 * component of 3 block rows. Nonzero graph: edges 1 → 0 and 1 → 2 only, so every component is a
 * single block row: the order 0, 2, 1 makes it block lower triangular (block row 1 last, it needs
 * x₀ and x₂), while the given order is not (block (1,2) lies above the diagonal).
 */
function handMade(): Bsr {
  const blocks: Array<[number, number, boolean]> = [[0, 0, true], [0, 1, false], [1, 0, true], [1, 1, true], [1, 2, true], [2, 1, false], [2, 2, true]];
  const rowPtr = new Int32Array(4), colInd: number[] = [], values: number[] = [];
  for (const [I, J, nz] of blocks) { colInd.push(J); values.push(...(nz ? [2, 1, 1, 3] : [0, 0, 0, 0])); rowPtr[I + 1]++; }
  for (let I = 0; I < 3; I++) rowPtr[I + 1] += rowPtr[I];
  return { nBlockRows: 3, nBlockCols: 3, bs: 2, rowPtr, colInd: Int32Array.from(colInd), values: Float64Array.from(values) };
}

describe('the numerically nonzero block pattern', () => {
  it('counts the stored blocks that hold only zeros, and finds the triangular structure they hide', () => {
    const a = handMade();
    expect(zeroBlocks(a)).toEqual({ zeroBlocks: 2, zeroDiagonalBlocks: 0 });
    const nz = nonzeroBlockPattern(a);
    expect(Array.from(nz.rowPtr)).toEqual([0, 1, 4, 5]);
    expect(Array.from(nz.colInd)).toEqual([0, 0, 1, 2, 2]);
    expect(triangularStructure(a)).toEqual({ nComponents: 1, largestComponent: 3, givenOrderBlockLowerTriangular: true, triangularUnderPermutation: false });
    expect(triangularStructure(nz)).toEqual({ nComponents: 3, largestComponent: 1, givenOrderBlockLowerTriangular: false, triangularUnderPermutation: true });
    // Tarjan's order puts block row 1 after the two it depends on
    const order = Array.from(stronglyConnectedBlocks(nz).order);
    expect(order.indexOf(1)).toBe(2);
  });

  it('a NaN entry counts as nonzero; a zero diagonal block is counted separately', () => {
    const a = handMade();
    a.values[4] = NaN; // block (0,1)
    a.values.fill(0, 3 * 4, 4 * 4); // block (1,1)
    expect(zeroBlocks(a)).toEqual({ zeroBlocks: 2, zeroDiagonalBlocks: 1 });
    expect(nonzeroBlockPattern(a).colInd.length).toBe(5);
  });

  it('inspect reports both patterns, in JSON fields and in words', () => {
    const a = handMade();
    const header: MatrixMarketHeader = { object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: 6, nCols: 6, nEntries: 28, comments: [] };
    const sys = systemFromMatrix('hand.mtx', header, bsrToCsr(a), { blockSize: 2 });
    const r = buildInspectReport(sys);
    expect(r.components).toMatchObject({ nComponents: 1, largestBlockRows: 3, triangularUnderPermutation: false });
    expect(r.nonzeroPattern).toEqual({
      nBlocks: 5, zeroBlocks: 2, zeroBlockShare: 2 / 7, zeroDiagonalBlocks: 0,
      nComponents: 3, largestBlockRows: 1, givenOrderBlockLowerTriangular: false, triangularUnderPermutation: true,
    });
    const text = formatInspectReport(r);
    expect(text).toContain('zero blocks       2 stored blocks of 7 (28.6 %) hold only zeros');
    expect(text).toContain('nonzero pattern: 3 strongly connected components, largest 1 block row; block triangular under a permutation');
    expect(text).toMatch(/stored pattern: 1 strongly connected component, largest 3 block rows; given order is block lower triangular by components/);
  });

  it('upwind DG advection with a constant velocity: the stored pattern couples each slab, the nonzero one is triangular under a permutation', () => {
    // exact upwinding H = β⁺u⁻ + β⁻u⁺ (Reed & Hill 1973; Lesaint & Raviart 1974): on an outflow face
    // the neighbour's coefficient β⁻ is 0, so the stored coupling block of the downstream element is zero
    const p = parseGeneratorParams({ physics: 'advection', dim: 2, order: 1, cells: [4, 4], slabs: 2, velocity: [1, 0.5], periodic: [false, false] }, 'test');
    const { bsr } = generateSystem(p);
    const z = zeroBlocks(bsr);
    expect(z.zeroBlocks).toBeGreaterThan(0);
    expect(z.zeroDiagonalBlocks).toBe(0);
    const stored = triangularStructure(bsr);
    expect(stored.largestComponent).toBe(bsr.nBlockRows / 2); // each slab is one component
    expect(stored.triangularUnderPermutation).toBe(false);
    const nonzero = triangularStructure(nonzeroBlockPattern(bsr));
    expect(nonzero.triangularUnderPermutation).toBe(true);
    expect(nonzero.nComponents).toBe(bsr.nBlockRows);
  });
});
