import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gunzipSync } from 'node:zlib';
import type { Csr } from '../../src/sparse/types.js';
import { UserError } from '../../src/util/errors.js';
import {
  readMatrixMarket, readMatrixMarketColumns, readMatrixMarketVector, writeMatrixMarket, writeMatrixMarketColumns,
  writeMatrixMarketVector, formatValue,
} from '../../src/sparse/matrix-market.js';
import { tempDir, expectValidCsr } from './matrix-market-helpers.js';

const dir = tempDir('slabbench-mmw-');

// NISTIR 5935 (Boisvert, Pozo & Remington 1996) 5×5 example, as CSR.
const SPEC: Csr = {
  nRows: 5, nCols: 5,
  rowPtr: Int32Array.from([0, 2, 3, 4, 7, 8]),
  colInd: Int32Array.from([0, 3, 1, 2, 1, 3, 4, 4]),
  values: Float64Array.from([1, 6, 10.5, 0.015, 250.5, -280, 33.32, 12]),
};

function sameCsr(a: Csr, b: Csr): void {
  expect([a.nRows, a.nCols]).toEqual([b.nRows, b.nCols]);
  expect(Buffer.from(a.rowPtr.buffer, a.rowPtr.byteOffset, a.rowPtr.byteLength)
    .equals(Buffer.from(b.rowPtr.buffer, b.rowPtr.byteOffset, b.rowPtr.byteLength)), 'rowPtr').toBe(true);
  expect(Buffer.from(a.colInd.buffer, a.colInd.byteOffset, a.colInd.byteLength)
    .equals(Buffer.from(b.colInd.buffer, b.colInd.byteOffset, b.colInd.byteLength)), 'colInd').toBe(true);
  expect(a.values.length).toBe(b.values.length);
  let bad = -1;
  for (let k = 0; k < a.values.length && bad < 0; k++) if (!Object.is(a.values[k], b.values[k])) bad = k;
  expect(bad, bad >= 0 ? `value ${bad}: ${a.values[bad]} vs ${b.values[bad]}` : '').toBe(-1);
}

describe('writeMatrixMarket', () => {
  it('writes coordinate real general, 1-based, row order, with comments', async () => {
    const p = join(dir, 'spec.mtx');
    await writeMatrixMarket(p, SPEC, { comments: [' the NIST example', 'two\nlines'] });
    expect(readFileSync(p, 'utf8')).toBe(
      '%%MatrixMarket matrix coordinate real general\n% the NIST example\n% two\n% lines\n5 5 8\n'
      + '1 1 1\n1 4 6\n2 2 10.5\n3 3 0.015\n4 2 250.5\n4 4 -280\n4 5 33.32\n5 5 12\n');
    const back = await readMatrixMarket(p);
    sameCsr(back.csr, SPEC);
    expect(back.header.comments).toEqual([' the NIST example', ' two', ' lines']);
    // comments read back are written back unchanged
    await writeMatrixMarket(join(dir, 'spec2.mtx'), back.csr, { comments: back.header.comments });
    expect(readFileSync(join(dir, 'spec2.mtx'), 'utf8')).toBe(readFileSync(p, 'utf8'));
  });

  it('round-trips awkward values bit for bit (shortest repr, signed zero, subnormals, extremes)', async () => {
    const vals = [0.1, 1 / 3, -0, 0, 5e-324, -2.2250738585072014e-308, 1.7976931348623157e308, 1e21, 123456789012345680000,
      0.30000000000000004, 9007199254740993, -1e-7, 2 ** -1074 * 3, 1.2345678901234567e-300];
    const a: Csr = {
      nRows: 1, nCols: vals.length, rowPtr: Int32Array.from([0, vals.length]),
      colInd: Int32Array.from(vals.map((_, i) => i)), values: Float64Array.from(vals),
    };
    const p = join(dir, 'awkward.mtx');
    await writeMatrixMarket(p, a);
    sameCsr((await readMatrixMarket(p)).csr, a);
    expect(formatValue(-0)).toBe('-0');
    expect(formatValue(0.1)).toBe('0.1');
  });

  it('writes gzip when the name ends with .gz', async () => {
    const p = join(dir, 'spec.mtx.gz');
    await writeMatrixMarket(p, SPEC);
    const raw = readFileSync(p);
    expect([raw[0], raw[1]]).toEqual([0x1f, 0x8b]);
    expect(gunzipSync(raw).toString('utf8').startsWith('%%MatrixMarket matrix coordinate real general\n5 5 8\n')).toBe(true);
    sameCsr((await readMatrixMarket(p)).csr, SPEC);
  });

  it('writes the lower triangle of a symmetric matrix and refuses an asymmetric one', async () => {
    const s: Csr = {
      nRows: 3, nCols: 3, rowPtr: Int32Array.from([0, 2, 5, 7]),
      colInd: Int32Array.from([0, 1, 0, 1, 2, 1, 2]), values: Float64Array.from([4, -1, -1, 4, -2, -2, 4]),
    };
    const p = join(dir, 'sym.mtx');
    await writeMatrixMarket(p, s, { symmetric: true });
    expect(readFileSync(p, 'utf8')).toBe('%%MatrixMarket matrix coordinate real symmetric\n3 3 5\n1 1 4\n2 1 -1\n2 2 4\n3 2 -2\n3 3 4\n');
    sameCsr((await readMatrixMarket(p)).csr, s);
    const before = readFileSync(p, 'utf8');
    const bad = { ...s, values: Float64Array.from([4, -1, -1.5, 4, -2, -2, 4]) };
    await expect(writeMatrixMarket(p, bad, { symmetric: true })).rejects.toThrow(/entry \(1, 2\) differs from \(2, 1\); write it as general/);
    await expect(writeMatrixMarket(p, SPEC, { symmetric: true })).rejects.toBeInstanceOf(UserError);
    expect(readFileSync(p, 'utf8')).toBe(before); // untouched
  });

  it('writes atomically: a failed write leaves no file and no temporary behind', async () => {
    const sub = tempDir('slabbench-atomic-');
    await expect(writeMatrixMarket(join(sub, 'missing-folder', 'a.mtx'), SPEC)).rejects.toThrow(/cannot write/);
    await writeMatrixMarket(join(sub, 'a.mtx'), SPEC);
    expect(readdirSync(sub)).toEqual(['a.mtx']);
  });

  it('does not modify its input', async () => {
    const copy = { ...SPEC, rowPtr: SPEC.rowPtr.slice(), colInd: SPEC.colInd.slice(), values: SPEC.values.slice() };
    await writeMatrixMarket(join(dir, 'x.mtx'), copy, { symmetric: false });
    sameCsr(copy, SPEC);
  });

  it('rejects malformed CSR arguments as programming errors', async () => {
    await expect(writeMatrixMarket(join(dir, 'y.mtx'), { ...SPEC, rowPtr: Int32Array.from([0, 1]) })).rejects.toBeInstanceOf(RangeError);
    await expect(writeMatrixMarket(join(dir, 'y.mtx'), { ...SPEC, colInd: Int32Array.from([0, 3, 1, 2, 1, 3, 4, 5]) })).rejects.toThrow(/column index 5 out of range/);
  });

  it('writes a large matrix in several chunks (> 1 MiB of text) and reads it back', async () => {
    const n = 15000;
    const rowPtr = new Int32Array(n + 1);
    const colInd = new Int32Array(3 * n - 2);
    const values = new Float64Array(3 * n - 2);
    let k = 0;
    for (let i = 0; i < n; i++) {
      for (const j of [i - 1, i, i + 1]) if (j >= 0 && j < n) { colInd[k] = j; values[k] = Math.sin(i * 3 + j) / 7; k++; }
      rowPtr[i + 1] = k;
    }
    const a: Csr = { nRows: n, nCols: n, rowPtr, colInd, values };
    const p = join(dir, 'tri.mtx.gz');
    await writeMatrixMarket(p, a);
    const back = (await readMatrixMarket(p)).csr;
    expectValidCsr(back);
    sameCsr(back, a);
  });
});

describe('writeMatrixMarketVector', () => {
  it('writes an n×1 array by default (what scipy.io.mmread reads) and a vector object on request', async () => {
    const v = Float64Array.from([1.5, -0, 1 / 3]);
    const p = join(dir, 'b.mtx');
    await writeMatrixMarketVector(p, v, { comments: [' rhs'] });
    expect(readFileSync(p, 'utf8')).toBe('%%MatrixMarket matrix array real general\n% rhs\n3 1\n1.5\n-0\n0.3333333333333333\n');
    const back = await readMatrixMarketVector(p);
    expect(Object.is(back[1], -0)).toBe(true);
    expect(Array.from(back)).toEqual(Array.from(v));
    const q = join(dir, 'b-vector.mtx.gz');
    await writeMatrixMarketVector(q, v, { object: 'vector' });
    expect(gunzipSync(readFileSync(q)).toString('utf8').split('\n').slice(0, 2)).toEqual(['%%MatrixMarket vector array real general', '3']);
    expect(Array.from(await readMatrixMarketVector(q))).toEqual(Array.from(v));
  });

  it('reads back a coordinate vector written by hand with unlisted entries as zeros', async () => {
    const p = join(dir, 'c.mtx');
    writeFileSync(p, '%%MatrixMarket vector coordinate integer general\n5 2\n5 -3\n1 2\n');
    expect(Array.from(await readMatrixMarketVector(p))).toEqual([2, 0, 0, 0, -3]);
  });
});

describe('writeMatrixMarketColumns / readMatrixMarketColumns', () => {
  it('an n×k array, column-major (NISTIR 5935 §3), read back bit for bit', async () => {
    const cols = [Float64Array.from([1.5, -0]), Float64Array.from([1e-300, -1 / 3]), Float64Array.from([0, 7])];
    const p = join(dir, 'x3.mtx');
    await writeMatrixMarketColumns(p, cols, { comments: ['three'] });
    expect(readFileSync(p, 'utf8')).toBe('%%MatrixMarket matrix array real general\n% three\n2 3\n1.5\n-0\n1e-300\n-0.3333333333333333\n0\n7\n');
    const back = await readMatrixMarketColumns(p);
    expect(back).toHaveLength(3);
    back.forEach((c, j) => { for (let i = 0; i < 2; i++) expect(Object.is(c[i], cols[j][i])).toBe(true); });
  });

  it('a vector or an n×1 coordinate file is one column; a coordinate n×k matrix is refused naming the file', async () => {
    const v = join(dir, 'cv.mtx');
    writeFileSync(v, '%%MatrixMarket vector coordinate real general\n3 1\n2 4\n');
    expect((await readMatrixMarketColumns(v)).map((c) => Array.from(c))).toEqual([[0, 4, 0]]);
    const m = join(dir, 'cm.mtx');
    writeFileSync(m, '%%MatrixMarket matrix coordinate real general\n3 2 1\n1 2 4\n');
    await expect(readMatrixMarketColumns(m)).rejects.toThrow(UserError);
    await expect(readMatrixMarketColumns(m)).rejects.toThrow(`${m}: expected a vector, an n×1 matrix or an n×k array (dense columns), found a 3×2 coordinate matrix`);
  });
});
