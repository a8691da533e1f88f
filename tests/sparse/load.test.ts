import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadSystem } from '../../src/sparse/load.js';
import { writeMatrixMarket } from '../../src/sparse/matrix-market.js';
import { writeLayout } from '../../src/sparse/layout.js';
import { systemFromMatrix } from '../../src/sparse/system.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';
import { UserError } from '../../src/util/errors.js';
import type { MatrixMarketHeader } from '../../src/sparse/matrix-market-header.js';
import type { Csr } from '../../src/sparse/types.js';
import { rng, randomBsr, randomCsr, snapshot } from './random-sparse.js';

function header(nRows: number, nCols: number, object: 'matrix' | 'vector' = 'matrix'): MatrixMarketHeader {
  return { object, format: 'coordinate', field: 'real', symmetry: 'general', nRows, nCols, nEntries: 0, comments: [] };
}

function userError(f: () => unknown): string {
  try { f(); } catch (e) {
    expect(e).toBeInstanceOf(UserError);
    const msg = (e as Error).message;
    expect(msg).not.toContain('\n');
    return msg;
  }
  throw new Error('expected a UserError');
}

describe('systemFromMatrix (the checks behind loadSystem)', () => {
  const blocked = bsrToCsr(randomBsr(rng(1), 10, 10, 3, 3)); // 30×30 made of dense 3×3 blocks

  it('detects the block size when nothing else is known, and leaves the CSR untouched', () => {
    const before = snapshot(blocked);
    const s = systemFromMatrix('A.mtx', header(30, 30), blocked);
    expect(s.bs).toBe(3);
    expect(s.blockSizeSource).toBe('detected');
    expect(s.fillRatio).toBe(1);
    expect(s.detection?.bs).toBe(3);
    expect(s.bsr.nBlockRows).toBe(10);
    expect(s.slabOffsets).toBeUndefined();
    expect(snapshot(blocked)).toBe(before);
  });
  it('no blocks found: bs 1, source none', () => {
    const s = systemFromMatrix('B.mtx', header(31, 31), randomCsr(rng(2), 31, 31, 4));
    expect(s.bs).toBe(1);
    expect(s.blockSizeSource).toBe('none');
  });
  it('--block-size wins over detection and may leave blocks partly filled', () => {
    const s = systemFromMatrix('A.mtx', header(30, 30), blocked, { blockSize: 6 });
    expect(s.blockSizeSource).toBe('option');
    expect(s.bs).toBe(6);
    expect(s.fillRatio).toBeLessThan(1);
    expect(s.detection).toBeUndefined();
  });
  it('a layout gives bs and slab offsets (block rows)', () => {
    const s = systemFromMatrix('A.mtx', header(30, 30), blocked, {
      layout: { blockSize: 3, slabOffsets: [0, 4, 10] }, layoutPath: 'A.layout.json',
    });
    expect(s.blockSizeSource).toBe('layout');
    expect(Array.from(s.slabOffsets ?? [])).toEqual([0, 4, 10]);
    expect(s.layoutPath).toBe('A.layout.json');
    const same = systemFromMatrix('A.mtx', header(30, 30), blocked, { blockSize: 3, layout: { blockSize: 3 }, layoutPath: 'A.layout.json' });
    expect(same.blockSizeSource).toBe('layout');
  });
  it('a layout with centroids gives one point per block row; a wrong count names the field', () => {
    const values = Array.from({ length: 20 }, (_v, i) => i / 4);
    const s = systemFromMatrix('A.mtx', header(30, 30), blocked, { layout: { blockSize: 3, centroids: { nCoordinates: 2, values } }, layoutPath: 'A.layout.json' });
    expect(s.centroids?.nCoordinates).toBe(2);
    expect(Array.from(s.centroids!.values)).toEqual(values);
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { layout: { blockSize: 3, centroids: { nCoordinates: 3, values } }, layoutPath: 'A.layout.json' })))
      .toBe('A.layout.json: centroids.values: expected 10 points (one per block row) × 3 coordinates = 30 numbers, found 20 (of A.mtx)');
  });
  it('one-line errors naming the file, option or layout field', () => {
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { blockSize: 7 })))
      .toBe('A.mtx: block size 7 (from --block-size) does not divide the size 30');
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { layout: { blockSize: 4 }, layoutPath: 'A.layout.json' })))
      .toBe('A.mtx: block size 4 (from A.layout.json) does not divide the size 30');
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { blockSize: 6, layout: { blockSize: 3 }, layoutPath: 'A.layout.json' })))
      .toBe('option --block-size 6 disagrees with A.layout.json (blockSize 3)');
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { layout: { blockSize: 3, slabOffsets: [0, 4, 9] }, layoutPath: 'A.layout.json' })))
      .toBe('A.layout.json: slabOffsets ends at 9, expected the number of block rows 10 (of A.mtx)');
    expect(userError(() => systemFromMatrix('A.mtx', header(30, 30), blocked, { blockSize: 0 })))
      .toMatch(/^option --block-size: expected a positive integer, got 0$/);
    expect(userError(() => systemFromMatrix('v.mtx', header(30, 1, 'vector'), randomCsr(rng(3), 30, 1, 1))))
      .toBe('v.mtx: holds a vector, expected a matrix');
    expect(userError(() => systemFromMatrix('R.mtx', header(30, 20), randomCsr(rng(3), 30, 20, 2))))
      .toBe('R.mtx: matrix is 30×20, expected a square system matrix');
  });
  it('refuses a block size whose dense blocks cannot be stored, before allocating them', () => {
    const n = 65536; // identity; one 65536×65536 block would need 2^32 values
    const eye: Csr = {
      nRows: n, nCols: n, rowPtr: Int32Array.from({ length: n + 1 }, (_, i) => i),
      colInd: Int32Array.from({ length: n }, (_, i) => i), values: new Float64Array(n).fill(1),
    };
    expect(userError(() => systemFromMatrix('I.mtx', header(n, n), eye, { blockSize: n })))
      .toMatch(/^I\.mtx: block size 65536 \(from --block-size\) needs 4294967296 stored values \(fill ratio 0\.0000153\), more than 2147483647$/);
  });
});

describe('loadSystem (files)', () => {
  let dir = '';
  const blocked = bsrToCsr(randomBsr(rng(8), 10, 10, 3, 3));
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'slabbench-load-'));
    await writeMatrixMarket(join(dir, 'A.mtx.gz'), blocked);
    writeLayout(join(dir, 'A.layout.json'), { blockSize: 3, slabOffsets: [0, 5, 10], provenance: { note: 'test' } });
    await writeMatrixMarket(join(dir, 'B.mtx'), blocked);
    writeLayout(join(dir, 'wrong.layout.json'), { blockSize: 4 });
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('picks up the sidecar of a gzipped matrix and reads the same matrix back', async () => {
    const s = await loadSystem(join(dir, 'A.mtx.gz'));
    expect(s.blockSizeSource).toBe('layout');
    expect(s.layoutPath).toBe(join(dir, 'A.layout.json'));
    expect(Array.from(s.slabOffsets ?? [])).toEqual([0, 5, 10]);
    expect(s.layout?.provenance).toEqual({ note: 'test' });
    expect(snapshot(s.csr)).toBe(snapshot(blocked));
    expect(s.header.symmetry).toBe('general');
  });
  it('without a sidecar: option, else detection; --layout overrides', async () => {
    expect((await loadSystem(join(dir, 'B.mtx'))).blockSizeSource).toBe('detected');
    expect((await loadSystem(join(dir, 'B.mtx'), { blockSize: 5 })).bs).toBe(5);
    await expect(loadSystem(join(dir, 'B.mtx'), { layoutPath: join(dir, 'wrong.layout.json') }))
      .rejects.toThrow(`${join(dir, 'B.mtx')}: block size 4 (from ${join(dir, 'wrong.layout.json')}) does not divide the size 30`);
    await expect(loadSystem(join(dir, 'B.mtx'), { layoutPath: join(dir, 'none.layout.json') })).rejects.toThrow(/none\.layout\.json: no such file/);
  });
});
