/**
 * Field-major numbering (all unknowns of equation 1, then equation 2, …): detection from the
 * pattern and `convert --fields K`, which must give back the element-block matrix exactly.
 * The reference is derived: a field-major matrix is P B Pᵀ of the block matrix B for the
 * scalar permutation of fieldMajorToBlocks, so interleaving must undo it bit for bit.
 */
import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { randomBsr } from './random-sparse.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { permuteCsrBlocks, inversePermutation } from '../../src/sparse/permute.js';
import { fieldMajorToBlocks, detectFieldMajor, blockCountUnder } from '../../src/sparse/field-major.js';
import { bsrBlockCount } from '../../src/sparse/bsr.js';
import { writeMatrixMarket, readMatrixMarket } from '../../src/sparse/matrix-market.js';
import { convertMatrix } from '../../src/cli/convert.js';
import { runCli } from '../cli/cli-helpers.js';
import { mulberry32 } from '../../src/util/random.js';

/** An element-block matrix with bs = nFields·nModes and its field-major twin. */
function twins(nBlockRows: number, nFields: number, nModes: number, seed: number) {
  const bs = nFields * nModes;
  const blocks = bsrToCsr(randomBsr(mulberry32(seed), nBlockRows, nBlockRows, bs, 3));
  const n = blocks.nRows;
  const toBlocks = fieldMajorToBlocks(n, bs, nFields); // new (blocked) → old (field-major)
  const fieldMajor = permuteCsrBlocks(blocks, inversePermutation(toBlocks), 1);
  return { bs, blocks, fieldMajor };
}

describe('field-major numbering', () => {
  it('the permutation puts (field f, element e, mode a) at e·bs + f·nb + a', () => {
    // n = 12, bs = 6, K = 3 fields of nb = 2 modes, 2 elements: field-major index f·4 + e·2 + a
    expect(Array.from(fieldMajorToBlocks(12, 6, 3))).toEqual([0, 1, 4, 5, 8, 9, 2, 3, 6, 7, 10, 11]);
  });

  it('counts blocks under a permutation as the permuted matrix stores them', () => {
    const { bs, fieldMajor } = twins(9, 3, 2, 5);
    const toBlocks = fieldMajorToBlocks(fieldMajor.nRows, bs, 3);
    const oldToNew = inversePermutation(toBlocks);
    expect(blockCountUnder(fieldMajor, bs)).toBe(bsrBlockCount(fieldMajor, bs));
    expect(blockCountUnder(fieldMajor, bs, oldToNew)).toBe(bsrBlockCount(permuteCsrBlocks(fieldMajor, toBlocks, 1), bs));
  });

  for (const [K, nb] of [[2, 3], [3, 2], [4, 1], [5, 4]] as const) {
    it(`detects ${K} fields of ${nb} modes and convert --fields ${K} restores the blocks exactly`, async () => {
      const { bs, blocks, fieldMajor } = twins(12, K, nb, 10 * K + nb);
      const det = detectFieldMajor(fieldMajor, bs);
      expect(det?.nFields).toBe(K);
      expect(det!.fillRatioInterleaved).toBe(1);
      expect(detectFieldMajor(blocks, bs)).toBeUndefined();

      const dir = mkdtempSync(join(tmpdir(), 'slabbench-fields-'));
      await writeMatrixMarket(join(dir, 'fm.mtx'), fieldMajor);
      const s = await convertMatrix(join(dir, 'fm.mtx'), join(dir, 'blocked.mtx'), { blockSize: bs, fields: K });
      expect(s.interleaved).toEqual({ nFields: K, blockSize: bs });
      const back = (await readMatrixMarket(join(dir, 'blocked.mtx'))).csr;
      expect(Array.from(back.rowPtr)).toEqual(Array.from(blocks.rowPtr));
      expect(Array.from(back.colInd)).toEqual(Array.from(blocks.colInd));
      expect(Array.from(back.values)).toEqual(Array.from(blocks.values));
      expect((JSON.parse(readFileSync(join(dir, 'blocked.layout.json'), 'utf8')) as { blockSize: number }).blockSize).toBe(bs);
    });
  }

  it('inspect names a field-major file when the block size is given, and convert checks its options', async () => {
    const { bs, fieldMajor } = twins(10, 3, 2, 77);
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-fields-'));
    await writeMatrixMarket(join(dir, 'fm.mtx'), fieldMajor);
    const r = await runCli(['inspect', join(dir, 'fm.mtx'), '--block-size', String(bs), '--json']);
    expect(r.code).toBe(0);
    expect((JSON.parse(r.stdout) as { fieldMajor: { nFields: number } }).fieldMajor.nFields).toBe(3);
    const text = await runCli(['inspect', join(dir, 'fm.mtx'), '--block-size', String(bs)]);
    expect(text.stdout).toMatch(/looks field-major with 3 fields .* convert --fields 3/);

    const noBs = await runCli(['convert', join(dir, 'fm.mtx'), join(dir, 'o.mtx'), '--fields', '3']);
    expect(noBs.code).toBe(2);
    expect(noBs.stderr).toMatch(/option --fields: needs the element block size/);
    const bad = await runCli(['convert', join(dir, 'fm.mtx'), join(dir, 'o.mtx'), '--fields', '4', '--block-size', '6']);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/option --fields: 4 fields do not divide the block size 6/);
    const one = await runCli(['convert', join(dir, 'fm.mtx'), join(dir, 'o.mtx'), '--fields', '1', '--block-size', '6']);
    expect(one.stderr).toMatch(/option --fields: expected an integer of at least 2/);
  });
});
