import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliShort } from '../cli/cli-helpers.js';
import { writeMatrixMarket } from '../../src/sparse/matrix-market.js';
import { writeLayout } from '../../src/sparse/layout.js';
import { systemFromMatrix } from '../../src/sparse/system.js';
import { buildInspectReport, formatInspectReport, inspectReportJson } from '../../src/cli/inspect-report.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import type { Bsr } from '../../src/sparse/types.js';
import type { MatrixMarketHeader } from '../../src/sparse/matrix-market-header.js';

/**
 * 3 time slabs of 2 block rows, bs 2, block lower bidiagonal: diagonal blocks [[4, 1], [0, 4]]
 * (one explicit zero each), sub-diagonal blocks [[1, 0.5], [−1, 2]].
 */
function slabMatrix(): Bsr {
  const rowPtr = [0], colInd: number[] = [], values: number[] = [];
  for (let I = 0; I < 6; I++) {
    if (I > 0) { colInd.push(I - 1); values.push(1, 0.5, -1, 2); }
    colInd.push(I); values.push(4, 1, 0, 4);
    rowPtr.push(colInd.length);
  }
  return { nBlockRows: 6, nBlockCols: 6, bs: 2, rowPtr: Int32Array.from(rowPtr), colInd: Int32Array.from(colInd), values: Float64Array.from(values) };
}

const header: MatrixMarketHeader = { object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: 12, nCols: 12, nEntries: 44, comments: [] };

/** The numbers every test of the report checks, derived by hand in the comments. */
function expectSlabMatrixNumbers(r: ReturnType<typeof buildInspectReport>): void {
  expect(r.nRows).toBe(12);
  expect(r.nnz).toBe(44); // 11 blocks · 4
  expect(r.explicitZeros).toBe(6); // one per diagonal block
  expect(r.symmetry.patternSymmetric).toBe(false);
  expect(r.symmetry.numericallySymmetric).toBe(false);
  expect(r.symmetry.maxAsymmetry).toBe(0.5); // |2 − 0| / max|a| = 2 / 4
  expect(r.blocks).toEqual({ nBlockRows: 6, nBlocks: 11, perRow: { min: 1, mean: 11 / 6, max: 2 } });
  // D⁻¹ = [[1/4, −1/16], [0, 1/4]] → ‖D⁻¹‖∞ = 5/16; ‖off‖∞ = max(1.5, 3) = 3 → ρ = 15/16 (0 in row 0)
  expect(r.dominance.max).toBe(15 / 16);
  expect(r.dominance.mean).toBeCloseTo((5 * 15) / 16 / 6, 15);
  expect(r.dominance.nDominant).toBe(6);
  expect(r.dominance.nSingular).toBe(0);
  expect(r.components).toEqual({ nComponents: 6, largestBlockRows: 1, givenOrderBlockLowerTriangular: true, triangularUnderPermutation: true });
  expect(r.nonzeroPattern).toEqual({
    nBlocks: 11, zeroBlocks: 0, zeroBlockShare: 0, zeroDiagonalBlocks: 0,
    nComponents: 6, largestBlockRows: 1, givenOrderBlockLowerTriangular: true, triangularUnderPermutation: true,
  });
  expect(r.storage.csr).toEqual({ rowPtr: 13 * 4, colInd: 44 * 4, values: 44 * 8 });
  expect(r.storage.bsr).toEqual({ rowPtr: 7 * 4, colInd: 11 * 4, values: 44 * 8 });
  expect(r.storage.csrBytes).toBe(52 + 176 + 352);
  expect(r.storage.bsrBytes).toBe(28 + 44 + 352);
  expect(r.blockSize.detected.bs).toBe(2);
}

describe('inspect report', () => {
  it('numbers of a 3-slab block lower bidiagonal matrix (detected block size, no layout)', () => {
    const s = systemFromMatrix('slabs.mtx', header, bsrToCsr(slabMatrix()));
    const r = buildInspectReport(s);
    expectSlabMatrixNumbers(r);
    expect(r.blockSize).toMatchObject({ bs: 2, source: 'detected', layoutFile: null, fillRatio: 1 });
    expect(r.slabs).toBeNull();
  });
  it('with a layout: slabs and no block above the slab diagonal', () => {
    const s = systemFromMatrix('slabs.mtx', header, bsrToCsr(slabMatrix()), { layout: { blockSize: 2, slabOffsets: [0, 2, 4, 6] }, layoutPath: 'slabs.layout.json' });
    const r = buildInspectReport(s);
    expect(r.slabs).toEqual({ nSlabs: 3, minBlockRows: 2, maxBlockRows: 2, blocksAboveSlabDiagonal: 0, blockLowerTriangular: true });
    expect(r.blockSize).toMatchObject({ bs: 2, source: 'layout', layoutFile: 'slabs.layout.json' });
    const text = formatInspectReport(r);
    expect(text).toContain('3 slabs of 2 block rows; no block above the slab diagonal');
    expect(text).toContain('stored pattern: 6 strongly connected components, largest 1 block row; block lower triangular as given: one block forward sweep solves it');
    expect(text).toContain('zero blocks       none');
    expect(text).toContain('2 from layout slabs.layout.json, fill ratio 1');
  });
  it('JSON is machine-clean: non-finite numbers become null', () => {
    const a = slabMatrix();
    a.values.fill(0, 4 * 4, 4 * 5); // zero the diagonal block of block row 2 (block index 4): singular
    const r = buildInspectReport(systemFromMatrix('s.mtx', header, bsrToCsr(a)));
    expect(r.dominance.max).toBe(Infinity);
    const j = JSON.parse(inspectReportJson(r)) as { dominance: { max: null; nSingular: number } };
    expect(j.dominance.max).toBeNull();
    expect(j.dominance.nSingular).toBe(1);
  });
});

const run = runCliShort;

describe('slabbench inspect (command line)', () => {
  let dir = '';
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'slabbench-inspect-'));
    const csr = bsrToCsr(slabMatrix());
    await writeMatrixMarket(join(dir, 'slabs.mtx'), csr);
    writeLayout(join(dir, 'slabs.layout.json'), { blockSize: 2, slabOffsets: [0, 2, 4, 6] });
    await writeMatrixMarket(join(dir, 'bare.mtx.gz'), csr);
    writeLayout(join(dir, 'other.layout.json'), { blockSize: 4 });
    writeFileSync(join(dir, 'junk.mtx'), 'hello\n');
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('--json: machine-clean, the hand-derived numbers, layout picked up', async () => {
    const r = await run(['inspect', join(dir, 'slabs.mtx'), '--json']);
    expect(r.code).toBe(0);
    expect(r.err).toBe('');
    const j = JSON.parse(r.out) as ReturnType<typeof buildInspectReport>;
    expectSlabMatrixNumbers(j);
    expect(j.blockSize).toMatchObject({ bs: 2, source: 'layout', layoutFile: join(dir, 'slabs.layout.json') });
    expect(j.slabs).toMatchObject({ nSlabs: 3, blockLowerTriangular: true });
  });
  it('gzip file without layout: detected block size; text report', async () => {
    const r = await run(['inspect', join(dir, 'bare.mtx.gz')]);
    expect(r.code).toBe(0);
    expect(r.out).toContain('12 × 12, 44 nonzeros (6 explicit zeros)');
    expect(r.out).toContain('2 detected from the pattern');
    const j = JSON.parse((await run(['inspect', join(dir, 'bare.mtx.gz'), '--json', '--block-size', '4'])).out) as ReturnType<typeof buildInspectReport>;
    expect(j.blockSize).toMatchObject({ bs: 4, source: 'option', fillRatio: 44 / 80 }); // 5 blocks of 4×4 (hand count)
  });
  it('--layout FILE replaces the sidecar', async () => {
    const r = await run(['inspect', join(dir, 'slabs.mtx'), '--json', '--layout', join(dir, 'other.layout.json')]);
    expect(r.code).toBe(0);
    expect((JSON.parse(r.out) as { blockSize: { bs: number } }).blockSize.bs).toBe(4);
  });
  it('bad input: exit 2 with one line on stderr and nothing on stdout', async () => {
    const cases: Array<[string[], RegExp]> = [
      [['inspect', join(dir, 'slabs.mtx'), '--block-size', '3'], /option --block-size 3 disagrees with .*slabs\.layout\.json \(blockSize 2\)/],
      [['inspect', join(dir, 'bare.mtx.gz'), '--block-size', 'x'], /option --block-size: expected a positive integer, got "x"/],
      [['inspect', join(dir, 'bare.mtx.gz'), '--block-size', '5'], /bare\.mtx\.gz: block size 5 \(from --block-size\) does not divide the size 12/],
      [['inspect', join(dir, 'missing.mtx')], /missing\.mtx/],
      [['inspect', join(dir, 'junk.mtx')], /junk\.mtx/],
    ];
    for (const [args, msg] of cases) {
      const r = await run(args);
      expect(r.code).toBe(2);
      expect(r.out).toBe('');
      expect(r.err).toMatch(msg);
      expect(r.err.trim().split('\n')).toHaveLength(1);
    }
  });
  it('--help shows examples and exits 0', async () => {
    const r = await run(['inspect', '--help']);
    expect(r.code).toBe(0);
    expect(r.out + r.err).toContain('slabbench inspect duct.mtx.gz --json');
  });
});
