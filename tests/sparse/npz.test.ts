/**
 * The .npz reader against scipy.sparse (Debian python3-scipy): the committed fixtures made by
 * tests/fixtures/make_npz_fixtures.py always (scipy.sparse.save_npz wrote them; expected.json is
 * scipy's own load_npz(...).tocsr() with duplicates summed), and scipy live when present, in
 * both directions: scipy writes a fresh file that we read. Plus the refusals (tier 1).
 */
import { describe, it, expect } from 'vitest';
import { readFileSync, writeFileSync, mkdtempSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { tmpdir } from 'node:os';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';
import { zipSync } from 'fflate';
import { readNpz, parseNpz } from '../../src/sparse/npz-read.js';
import { parseNpy } from '../../src/sparse/npy.js';
import { loadSystem } from '../../src/sparse/load.js';
import type { Csr } from '../../src/sparse/types.js';
import { convertMatrix } from '../../src/cli/convert.js';
import { readMatrixMarket } from '../../src/sparse/matrix-market.js';

const here = dirname(fileURLToPath(import.meta.url));
const fixtures = join(here, '..', 'fixtures', 'npz');
const script = join(here, '..', 'fixtures', 'make_npz_fixtures.py');
const PY = '/usr/bin/python3';
const hasScipy = spawnSync(PY, ['-c', 'import scipy.sparse'], { encoding: 'utf8' }).status === 0;

interface CsrCase { shape: [number, number]; rowPtr: number[]; colInd: number[]; values: number[] }
const expected = JSON.parse(readFileSync(join(fixtures, 'expected.json'), 'utf8')) as { cases: Record<string, CsrCase> };

function expectSameCsr(got: Csr, want: CsrCase, what: string): void {
  expect([got.nRows, got.nCols], what).toEqual(want.shape);
  expect(Array.from(got.rowPtr), what).toEqual(want.rowPtr);
  expect(Array.from(got.colInd), what).toEqual(want.colInd);
  // exact: both sides hold the same doubles (float32 data widened exactly)
  expect(Array.from(got.values), what).toEqual(want.values);
}

/** A minimal .npy member (version 1.0) for hand-made archives. */
function npy(descr: string, shape: number[], data: ArrayBufferView): Uint8Array {
  let header = `{'descr': '${descr}', 'fortran_order': False, 'shape': (${shape.join(', ')}${shape.length === 1 ? ',' : ''}), }`;
  const pad = 64 - ((10 + header.length + 1) % 64);
  header += ' '.repeat(pad % 64) + '\n';
  const out = new Uint8Array(10 + header.length + data.byteLength);
  out.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, header.length & 0xff, header.length >> 8]);
  out.set(new TextEncoder().encode(header), 10);
  out.set(new Uint8Array(data.buffer, data.byteOffset, data.byteLength), 10 + header.length);
  return out;
}

function csrArchive(over: Record<string, Uint8Array | undefined> = {}): Uint8Array {
  const members: Record<string, Uint8Array | undefined> = {
    'format.npy': npy('|S3', [], new TextEncoder().encode('csr')),
    'shape.npy': npy('<i8', [2], new BigInt64Array([2n, 3n])),
    'data.npy': npy('<f8', [3], new Float64Array([1, 2, 3])),
    'indices.npy': npy('<i4', [3], new Int32Array([0, 2, 1])),
    'indptr.npy': npy('<i4', [3], new Int32Array([0, 2, 3])),
    ...over,
  };
  const kept: Record<string, Uint8Array> = {};
  for (const [k, v] of Object.entries(members)) if (v !== undefined) kept[k] = v;
  return zipSync(kept);
}

describe('scipy.sparse .npz files (fixtures written by scipy.sparse.save_npz)', () => {
  for (const [name, want] of Object.entries(expected.cases)) {
    it(`reads ${name} as scipy does`, async () => {
      const got = await readNpz(join(fixtures, name));
      expectSameCsr(got.csr, want, name);
      if (name.startsWith('bsr')) expect(got.blockShape).toEqual([2, 2]);
    });
  }

  it('keeps an explicit zero in the pattern and sums a duplicate coo entry', async () => {
    const z = await readNpz(join(fixtures, 'csr-explicit-zero.npz'));
    expect(z.csr.values[0]).toBe(0);
    expect(z.csr.colInd.length).toBe(expected.cases['csr.npz']!.colInd.length);
    const d = await readNpz(join(fixtures, 'coo-duplicate.npz'));
    expect(d.nSummed).toBe(1);
    await expect(readNpz(join(fixtures, 'coo-duplicate.npz'), { duplicates: 'reject' }))
      .rejects.toThrow(/coo-duplicate\.npz: entry \(row 0, column 1, 0-based\) occurs more than once/);
  });

  it('loadSystem takes an .npz file and uses a bsr file\'s block size', async () => {
    const sys = await loadSystem(join(fixtures, 'bsr.npz'));
    expect(sys.bs).toBe(2);
    expect(sys.blockSizeSource).toBe('file');
    expect(sys.bsr.nBlockRows).toBe(3);
  });

  it('convert rewrites an .npz as Matrix Market with the stored block size in its layout', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-npz-'));
    const out = join(dir, 'bsr.mtx');
    await convertMatrix(join(fixtures, 'bsr.npz'), out);
    const back = await readMatrixMarket(out);
    expectSameCsr(back.csr, expected.cases['bsr.npz']!, 'converted');
    expect((JSON.parse(readFileSync(join(dir, 'bsr.layout.json'), 'utf8')) as { blockSize: number }).blockSize).toBe(2);
  });

  it.runIf(hasScipy)('live: a file scipy writes now reads as scipy reads it', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-npz-'));
    const r = spawnSync(PY, [script, 'write', dir], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const live = JSON.parse(readFileSync(join(dir, 'expected.json'), 'utf8')) as { cases: Record<string, CsrCase> };
    for (const [name, want] of Object.entries(live.cases)) expectSameCsr((await readNpz(join(dir, name))).csr, want, name);
    // and scipy agrees with what we read from a hand-made archive
    writeFileSync(join(dir, 'hand.npz'), csrArchive());
    const back = spawnSync(PY, [script, 'read', join(dir, 'hand.npz')], { encoding: 'utf8' });
    expect(back.status, back.stderr).toBe(0);
    expectSameCsr(parseNpz('hand.npz', csrArchive()).csr, (JSON.parse(back.stdout) as Record<string, CsrCase>)[join(dir, 'hand.npz')]!, 'hand');
  });
});

describe('.npz refusals: one line naming the file and member', () => {
  const cases: [string, () => Uint8Array, RegExp][] = [
    ['not a zip', () => new TextEncoder().encode('%%MatrixMarket matrix'), /m\.npz: not a \.npz file/],
    ['missing member', () => csrArchive({ 'indptr.npy': undefined }), /m\.npz: member indptr\.npy is missing/],
    ['unknown format', () => csrArchive({ 'format.npy': npy('|S3', [], new TextEncoder().encode('dia')) }), /sparse format 'dia' is not supported, expected one of csr, csc, bsr, coo/],
    ['column out of range', () => csrArchive({ 'indices.npy': npy('<i4', [3], new Int32Array([0, 3, 1])) }), /member indices\.npy: entry 1 is 3, expected an index from 0 to 2/],
    ['pointer count', () => csrArchive({ 'indptr.npy': npy('<i4', [2], new Int32Array([0, 3])) }), /member indptr\.npy: holds 2 pointers, expected 3/],
    ['decreasing pointers', () => csrArchive({ 'shape.npy': npy('<i8', [2], new BigInt64Array([3n, 3n])), 'indptr.npy': npy('<i4', [4], new Int32Array([0, 3, 1, 3])) }), /member indptr\.npy: decreases at position 2/],
    ['complex data', () => csrArchive({ 'data.npy': npy('<c16', [3], new Float64Array(6)) }), /member data\.npy: dtype '<c16' is not supported/],
    ['non-finite value', () => csrArchive({ 'data.npy': npy('<f8', [3], new Float64Array([1, NaN, 3])) }), /member data\.npy: entry 1 is NaN, a non-finite value/],
    ['truncated data', () => { const d = npy('<f8', [3], new Float64Array([1, 2, 3])); return csrArchive({ 'data.npy': d.subarray(0, d.length - 8) }); }, /member data\.npy: shape \(3,\) of '<f8' needs 24 bytes of data, the member holds 16/],
    ['extra member', () => csrArchive({ 'offsets.npy': npy('<i4', [1], new Int32Array([0])) }), /unexpected member offsets\.npy for a csr matrix/],
  ];
  for (const [what, make, msg] of cases) {
    it(what, () => {
      let err: unknown;
      try { parseNpz('m.npz', make()); } catch (e) { err = e; }
      expect(err).toBeInstanceOf(Error);
      const m = (err as Error).message;
      expect(m).toMatch(msg);
      expect(m).not.toContain('\n');
    });
  }

  it('checks the read limit before inflating', () => {
    const big = csrArchive({ 'data.npy': npy('<f8', [3], new Float64Array([1, 2, 3])) });
    expect(() => parseNpz('m.npz', big, { memoryLimitBytes: big.length + 10 })).toThrow(/m\.npz: member \S+\.npy would take the inflated archive past the read limit/);
  });

  it('reads .npy headers of version 2.0 and big-endian values', () => {
    const v1 = npy('>f8', [2], new Uint8Array([0x3f, 0xf0, 0, 0, 0, 0, 0, 0, 0x40, 0, 0, 0, 0, 0, 0, 0]));
    const a = parseNpy(v1, 'x');
    expect(a.littleEndian).toBe(false);
    const dv = new DataView(a.data.buffer, a.data.byteOffset);
    expect([dv.getFloat64(0, false), dv.getFloat64(8, false)]).toEqual([1, 2]);
    // version 2.0: 4-byte header length
    const hdr = v1.subarray(10, v1.length - 16);
    const v2 = new Uint8Array(12 + hdr.length + 16);
    v2.set([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 2, 0, hdr.length & 0xff, hdr.length >> 8, 0, 0]);
    v2.set(hdr, 12);
    v2.set(v1.subarray(v1.length - 16), 12 + hdr.length);
    expect(parseNpy(v2, 'x').shape).toEqual([2]);
    expect(() => parseNpy(new Uint8Array(20), 'x.npz: member data.npy')).toThrow(/x\.npz: member data\.npy: not a NumPy \.npy array/);
  });
});
