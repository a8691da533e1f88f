import { describe, it, expect } from 'vitest';
import { gzipSync } from 'node:zlib';
import { UserError } from '../../src/util/errors.js';
import { readMatrixMarket, readMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { readText, readPieces, tempFile, toDense, triples, expectValidCsr, escapeRe } from './matrix-market-helpers.js';

// The 5×5 example of Boisvert, Pozo & Remington, "The Matrix Market Exchange Formats: Initial
// Design", NISTIR 5935 (1996), coordinate format section (entries also in shared/references.md).
const SPEC_EXAMPLE = `%%MatrixMarket matrix coordinate real general
%=================================================================================
%
% This ASCII file represents a sparse MxN matrix with L
% nonzeros in the following Matrix Market format:
%
%=================================================================================
  5  5  8
    1     1   1.000e+00
    2     2   1.050e+01
    3     3   1.500e-02
    1     4   6.000e+00
    4     2   2.505e+02
    4     4  -2.800e+02
    4     5   3.332e+01
    5     5   1.200e+01
`;
const SPEC_DENSE = [
  [1, 0, 0, 6, 0],
  [0, 10.5, 0, 0, 0],
  [0, 0, 0.015, 0, 0],
  [0, 250.5, 0, -280, 33.32],
  [0, 0, 0, 0, 12],
];

async function expectError(text: string | Uint8Array, line: number | undefined, pattern: RegExp, opts = {}, name?: string): Promise<void> {
  const path = tempFile(text, name);
  let err: unknown;
  try {
    await readMatrixMarket(path, opts);
  } catch (e) {
    err = e;
  }
  expect(err, `expected an error for ${JSON.stringify(typeof text === 'string' ? text.slice(0, 80) : 'bytes')}`).toBeInstanceOf(UserError);
  const msg = (err as UserError).message;
  expect(msg).not.toContain('\n');
  const where = line === undefined ? `${escapeRe(path)}: ` : `${escapeRe(path)}:${line}: `;
  expect(msg).toMatch(new RegExp(`^${where}`));
  expect(msg).toMatch(pattern);
}

describe('readMatrixMarket: the spec example', () => {
  it('reads the NISTIR 5935 5×5 example with comments and leading blanks', async () => {
    const { header, csr } = await readText(SPEC_EXAMPLE);
    expect(header).toMatchObject({ object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general', nRows: 5, nCols: 5, nEntries: 8 });
    expect(header.comments.length).toBe(6);
    expect(header.comments[1]).toBe('');
    expect(header.comments[2]).toBe(' This ASCII file represents a sparse MxN matrix with L');
    expectValidCsr(csr);
    expect(toDense(csr)).toEqual(SPEC_DENSE);
    // sorted by column within each row
    expect(Array.from(csr.rowPtr)).toEqual([0, 2, 3, 4, 7, 8]);
    expect(Array.from(csr.colInd)).toEqual([0, 3, 1, 2, 1, 3, 4, 4]);
  });

  it('reads the same file gzipped, by extension and by magic bytes', async () => {
    const gz = gzipSync(Buffer.from(SPEC_EXAMPLE));
    expect(toDense((await readText(gz, {}, 'spec.mtx.gz')).csr)).toEqual(SPEC_DENSE);
    expect(toDense((await readText(gz, {}, 'spec-no-extension.dat')).csr)).toEqual(SPEC_DENSE);
  });

  it('gives the same matrix for every chunk split (boundaries inside tokens, CR LF pairs, the BOM)', async () => {
    const text = Buffer.from(`\uFEFF${SPEC_EXAMPLE.replace(/\n/g, '\r\n')}`);
    for (let cut = 1; cut < text.length; cut += cut < 8 ? 1 : 7) {
      const { csr } = await readPieces('split.mtx', [text.subarray(0, cut), text.subarray(cut, cut + 3), text.subarray(cut + 3)]);
      expect(toDense(csr)).toEqual(SPEC_DENSE);
    }
  });
});

describe('readMatrixMarket: valid edge cases (shared/references.md list)', () => {
  const body = '3 3 4\n1 1 1\n3 1 -2\n2 2 3.5\n3 3 4\n';
  const dense = [[1, 0, 0], [0, 3.5, 0], [-2, 0, 4]];

  it.each([
    ['mixed-case, multi-space banner', `%%matrixMARKET   Matrix  COORDINATE\tReal   GENERAL\n${body}`],
    ['leading whitespace on banner, size and data lines', `  %%MatrixMarket matrix coordinate real general\n   3 3 4\n\t1 1 1\n   3 1 -2\n 2 2 3.5\n3 3 4\n`],
    ['blank and whitespace-only lines anywhere', `\n%%MatrixMarket matrix coordinate real general\n\n   \n% c\n\t\n3 3 4\n1 1 1\n\n  \n3 1 -2\n\t\n2 2 3.5\n3 3 4\n\n\n`],
    ['comment lines with leading blanks, also between data lines', `%%MatrixMarket matrix coordinate real general\n   % indented comment\n3 3 4\n1 1 1\n  % between data\n3 1 -2\n%\n2 2 3.5\n3 3 4\n% trailing\n`],
    ['CRLF endings', `%%MatrixMarket matrix coordinate real general\r\n${body.replace(/\n/g, '\r\n')}`],
    ['bare CR endings', `%%MatrixMarket matrix coordinate real general\r${body.replace(/\n/g, '\r')}`],
    ['UTF-8 byte order mark', `\uFEFF%%MatrixMarket matrix coordinate real general\n${body}`],
    ['tabs between fields', `%%MatrixMarket\tmatrix\tcoordinate\treal\tgeneral\n3\t3\t4\n1\t1\t1\n3\t1\t-2\n2\t2\t3.5\n3\t3\t4\n`],
    ['last line without newline', `%%MatrixMarket matrix coordinate real general\n${body.trimEnd()}`],
    ['number forms 1., 35e-1, -.2E1, +4', `%%MatrixMarket matrix coordinate real general\n3 3 4\n1 1 1.\n3 1 -.2E1\n2 2 35e-1\n3 3 +4\n`],
    ['unsorted entries', `%%MatrixMarket matrix coordinate real general\n3 3 4\n3 3 4\n2 2 3.5\n3 1 -2\n1 1 1\n`],
  ])('%s', async (_name, text) => {
    const { csr } = await readText(text);
    expectValidCsr(csr);
    expect(toDense(csr)).toEqual(dense);
  });

  it('parses 12., 1.5e-2 and -2.8E2 exactly like Number()', async () => {
    const { csr } = await readText('%%MatrixMarket matrix coordinate real general\n1 3 3\n1 1 12.\n1 2 1.5e-2\n1 3 -2.8E2\n');
    expect(Array.from(csr.values)).toEqual([12, 1.5e-2, -2.8e2]);
  });

  it('keeps explicit zeros (they belong to the pattern) and the sign of zero', async () => {
    const { csr } = await readText('%%MatrixMarket matrix coordinate real general\n2 2 3\n1 1 0\n1 2 -0.0\n2 2 0e5\n');
    expect(triples(csr).map(([i, j]) => [i, j])).toEqual([[1, 1], [1, 2], [2, 2]]);
    expect(Object.is(csr.values[1], -0)).toBe(true);
  });

  it('reads empty matrices: 0 entries, and 0×0', async () => {
    const a = await readText('%%MatrixMarket matrix coordinate real general\n4 3 0\n');
    expect(a.csr.nRows).toBe(4);
    expect(Array.from(a.csr.rowPtr)).toEqual([0, 0, 0, 0, 0]);
    const b = await readText('%%MatrixMarket matrix coordinate real general\n0 0 0\n% nothing\n');
    expect(b.csr.nRows).toBe(0);
    expect(b.csr.colInd.length).toBe(0);
  });

  it('sums duplicates by default', async () => {
    const { csr } = await readText('%%MatrixMarket matrix coordinate real general\n2 2 4\n1 1 1\n2 1 5\n1 1 2.5\n2 1 -5\n');
    expectValidCsr(csr);
    expect(triples(csr)).toEqual([[1, 1, 3.5], [2, 1, 0]]);
  });

  it('expands symmetric storage and keeps the diagonal once', async () => {
    const { header, csr } = await readText('%%MatrixMarket matrix coordinate real symmetric\n3 3 4\n1 1 4\n2 1 -1\n3 2 -2\n3 3 6\n');
    expect(header.symmetry).toBe('symmetric');
    expectValidCsr(csr);
    expect(toDense(csr)).toEqual([[4, -1, 0], [-1, 0, -2], [0, -2, 6]]);
    expect(csr.rowPtr[3]).toBe(6);
  });

  it('expands skew-symmetric storage with the sign flipped; an explicit zero diagonal is accepted and kept', async () => {
    const { csr } = await readText('%%MatrixMarket matrix coordinate real skew-symmetric\n3 3 3\n2 1 1.5\n3 1 -2\n2 2 0\n');
    expect(toDense(csr)).toEqual([[0, -1.5, 2], [1.5, 0, 0], [-2, 0, 0]]);
    expect(triples(csr).filter(([i, j]) => i === j)).toEqual([[2, 2, 0]]);
  });

  it('reads pattern files as ones and integer files exactly, up to 2^53', async () => {
    const p = await readText('%%MatrixMarket matrix coordinate pattern general\n2 3 2\n1 3\n2 1\n');
    expect(toDense(p.csr)).toEqual([[0, 0, 1], [1, 0, 0]]);
    const s = await readText('%%MatrixMarket matrix coordinate pattern symmetric\n2 2 2\n1 1\n2 1\n');
    expect(toDense(s.csr)).toEqual([[1, 1], [1, 0]]);
    const i = await readText('%%MatrixMarket matrix coordinate integer general\n1 3 3\n1 1 9007199254740992\n1 2 -9007199254740992\n1 3 -17\n');
    expect(Array.from(i.csr.values)).toEqual([2 ** 53, -(2 ** 53), -17]);
  });

  it('reads array files column-major: general, symmetric and skew-symmetric', async () => {
    const g = await readText('%%MatrixMarket matrix array real general\n2 3\n1\n2\n3\n4\n5\n6\n');
    expect(toDense(g.csr)).toEqual([[1, 3, 5], [2, 4, 6]]);
    expect(g.csr.rowPtr[2]).toBe(6); // dense: every position stored
    const s = await readText('%%MatrixMarket matrix array real symmetric\n3 3\n1\n2\n3\n4\n5\n6\n');
    expect(toDense(s.csr)).toEqual([[1, 2, 3], [2, 4, 5], [3, 5, 6]]);
    const k = await readText('%%MatrixMarket matrix array integer skew-symmetric\n3 3\n1\n2\n3\n');
    expect(toDense(k.csr)).toEqual([[0, -1, -2], [1, 0, -3], [2, 3, 0]]);
  });

  it('reads vector objects (array and coordinate) and n×1 matrices as right-hand sides', async () => {
    expect(Array.from(await readMatrixMarketVector(tempFile('%%MatrixMarket vector array real general\n3\n1.5\n-2\n0\n')))).toEqual([1.5, -2, 0]);
    expect(Array.from(await readMatrixMarketVector(tempFile('%%MatrixMarket vector coordinate real general\n4 2\n4 7\n2 -1\n')))).toEqual([0, -1, 0, 7]);
    expect(Array.from(await readMatrixMarketVector(tempFile('%%MatrixMarket matrix array real general\n2 1\n3\n4\n')))).toEqual([3, 4]);
    expect(Array.from(await readMatrixMarketVector(tempFile('%%MatrixMarket matrix coordinate real general\n3 1 1\n2 1 9\n')))).toEqual([0, 9, 0]);
    const v = await readText('%%MatrixMarket vector array real general\n2\n1\n2\n');
    expect(v.header).toMatchObject({ object: 'vector', nRows: 2, nCols: 1 });
  });

  it('accepts nan and inf only when asked', async () => {
    const { csr } = await readText('%%MatrixMarket matrix coordinate real general\n1 4 4\n1 1 nan\n1 2 -inf\n1 3 Infinity\n1 4 1e999\n', { allowNonFinite: true });
    expect(Number.isNaN(csr.values[0])).toBe(true);
    expect(Array.from(csr.values.subarray(1))).toEqual([-Infinity, Infinity, Infinity]);
  });

  it('switches from row-ordered counting to full triples when a row goes back, on both paths', async () => {
    const lines: string[] = [];
    for (let i = 1; i <= 300; i++) lines.push(`${i} ${(i * 7) % 50 + 1} ${i / 8}`);
    lines.push('2 50 -1', '300 1 0.5', '1 1 -0'); // out of order late in the file
    const text = `%%MatrixMarket matrix coordinate real general\n300 50 ${lines.length}\n${lines.join('\n')}\n`;
    const fast = (await readText(text)).csr;
    const ref = (await readText(text, { referenceOnly: true })).csr;
    expectValidCsr(fast);
    expect(triples(fast)).toEqual(triples(ref));
    expect(triples(fast).slice(0, 3)).toEqual([[1, 1, -0], [1, 8, 1 / 8], [2, 15, 2 / 8]]);
    expect(triples(fast).filter(([i]) => i === 2)).toEqual([[2, 15, 0.25], [2, 50, -1]]);
  });

  it('crosses 1 MiB stream chunks with CRLF lines and values of every length', async () => {
    // ~2.4 MB so the file stream delivers several chunks; compare against the LF version
    const lines: string[] = [];
    const n = 60000;
    for (let k = 0; k < n; k++) lines.push(`${(k % 997) + 1} ${(k * 7919) % 1000 + 1} ${((k * 0.1234567891234567) % 3 - 1.5).toString()}`);
    const lf = `%%MatrixMarket matrix coordinate real general\n1000 1000 ${n}\n${lines.join('\n')}\n`;
    const a = await readText(lf);
    const b = await readText(lf.replace(/\n/g, '\r\n'));
    const c = await readText(lf.replace(/\n/g, '\r'));
    expectValidCsr(a.csr);
    expect(Array.from(b.csr.values)).toEqual(Array.from(a.csr.values));
    expect(Array.from(c.csr.colInd)).toEqual(Array.from(a.csr.colInd));
    const ref = await readText(lf, { referenceOnly: true });
    expect(Array.from(ref.csr.values)).toEqual(Array.from(a.csr.values));
  });
});

describe('readMatrixMarket: malformed input gives one line FILE:LINE: what was expected', () => {
  const H = '%%MatrixMarket matrix coordinate real general\n';
  it.each([
    ['empty file', '', undefined, /empty file/],
    ['only blank lines', '\n  \n\n', undefined, /no banner/],
    ['not Matrix Market at all', 'hello world\n1 2 3\n', 1, /not a Matrix Market file/],
    ['CSV', 'a,b,c\n1,2,3\n', 1, /not a Matrix Market file/],
    ['comment before the banner', '% hi\n%%MatrixMarket matrix coordinate real general\n1 1 0\n', 1, /not a Matrix Market file/],
    ['banner with a missing qualifier', '%%MatrixMarket matrix coordinate real\n1 1 0\n', 1, /banner has 3 qualifiers/],
    ['banner with an extra qualifier', '%%MatrixMarket matrix coordinate real general extra\n1 1 0\n', 1, /banner has 5 qualifiers/],
    ['unknown object', '%%MatrixMarket tensor coordinate real general\n1 1 0\n', 1, /object "tensor": expected matrix or vector/],
    ['unknown format', '%%MatrixMarket matrix dense real general\n1 1 0\n', 1, /format "dense"/],
    ['unknown field', '%%MatrixMarket matrix coordinate double general\n1 1 0\n', 1, /field "double"/],
    ['unknown symmetry', '%%MatrixMarket matrix coordinate real upper\n1 1 0\n', 1, /symmetry "upper"/],
    ['array + pattern', '%%MatrixMarket matrix array pattern general\n1 1\n', 1, /array with pattern/],
    ['real + hermitian', '%%MatrixMarket matrix coordinate real hermitian\n1 1 0\n', 1, /real with hermitian/],
    ['pattern + hermitian', '%%MatrixMarket matrix coordinate pattern hermitian\n1 1 0\n', 1, /pattern with hermitian/],
    ['pattern + skew-symmetric', '%%MatrixMarket matrix coordinate pattern skew-symmetric\n1 1 0\n', 1, /pattern with skew-symmetric/],
    ['complex', '%%MatrixMarket matrix coordinate complex general\n1 1 1\n1 1 1 2\n', 1, /complex matrices are not supported/],
    ['complex hermitian', '%%MatrixMarket matrix coordinate complex hermitian\n1 1 0\n', 1, /complex matrices are not supported/],
    ['symmetric vector', '%%MatrixMarket vector array real symmetric\n2\n1\n2\n', 1, /vector with symmetric/],
    ['symmetric, not square', '%%MatrixMarket matrix coordinate real symmetric\n% c\n3 4 0\n', 3, /symmetric matrix must be square, found 3×4/],
    ['size line with 2 fields', `${H}5 5\n`, 2, /expected 3 integers \(rows columns entries\), found 2 fields/],
    ['size line with 4 fields', `${H}5 5 1 1\n1 1 1\n`, 2, /found 4 fields/],
    ['array size line with 3 fields', '%%MatrixMarket matrix array real general\n2 2 4\n', 2, /expected 2 integers \(rows columns\)/],
    ['negative size', `${H}-5 5 1\n`, 2, /rows must be a non-negative integer, found "-5"/],
    ['non-integer size', `${H}5 5.0 1\n`, 2, /columns must be a non-negative integer, found "5.0"/],
    ['size beyond 2^31-1', `${H}3000000000 1 1\n`, 2, /rows 3000000000 exceeds 2147483647/],
    ['entries beyond 2^31-1', `${H}10 10 2147483648\n`, 2, /entries 2147483648 exceeds 2147483647/],
    ['file ends before the size line', `${H}% only comments\n`, 2, /ends before the size line/],
    ['index 0', `${H}2 2 1\n0 1 1\n`, 3, /row index 0: indices are 1-based \(1..2\)/],
    ['negative index', `${H}2 2 1\n1 -1 1\n`, 3, /column index -1 is negative/],
    ['row beyond the size', `${H}2 2 1\n3 1 1\n`, 3, /row index 3 is out of range 1..2/],
    ['column beyond the size', `${H}2 2 2\n1 1 1\n% x\n1 99999999999 1\n`, 5, /column index 99999999999 is out of range 1..2/],
    ['fractional index', `${H}2 2 1\n1.0 1 1\n`, 3, /row index: expected a positive integer, found "1.0"/],
    ['too few entries', `${H}2 2 3\n1 1 1\n2 2 2\n`, 4, /file ends after 2 of the 3 entries declared on line 2/],
    ['too few entries, no newline', `${H}2 2 3\n1 1 1\n\n2 2 2`, 5, /file ends after 2 of the 3 entries/],
    ['too many entries', `${H}2 2 1\n1 1 1\n2 2 2\n`, 4, /more entries than the 1 declared on line 2/],
    ['data in a 0-entry file', `${H}2 2 0\n% c\n1 1 1\n`, 4, /more entries than the 0 declared/],
    ['non-numeric value', `${H}2 2 1\n1 1 abc\n`, 3, /expected a real number, found "abc"/],
    ['two decimal points', `${H}2 2 1\n1 1 1.2.3\n`, 3, /expected a real number, found "1.2.3"/],
    ['exponent without digits', `${H}2 2 1\n1 1 1e\n`, 3, /found "1e"/],
    ['hexadecimal', `${H}2 2 1\n1 1 0x10\n`, 3, /found "0x10"/],
    ['decimal comma', `${H}2 2 1\n1 1 1,5\n`, 3, /found "1,5"/],
    ['Fortran exponent', `${H}2 2 1\n1 1 1.0D+00\n`, 3, /found "1.0D\+00"/],
    ['too few fields', `${H}2 2 1\n1 1\n`, 3, /expected 3 fields \(row column value\) for a real coordinate entry, found 2/],
    ['too many fields', `${H}2 2 1\n1 1 1 1\n`, 3, /found 4/],
    ['trailing comment on a data line', `${H}2 2 1\n1 1 1 % note\n`, 3, /comments must be on their own line/],
    ['pattern line with a value', '%%MatrixMarket matrix coordinate pattern general\n2 2 1\n1 1 1\n', 3, /expected 2 fields \(row column\)/],
    ['nan rejected', `${H}2 2 1\n1 1 nan\n`, 3, /non-finite value "nan" \(rejected unless non-finite values are allowed: convert --allow-non-finite/],
    ['inf rejected', `${H}2 2 1\n1 1 -Inf\n`, 3, /non-finite value "-Inf"/],
    ['overflow rejected', `${H}2 2 1\n1 1 1e400\n`, 3, /overflows float64/],
    ['integer field with a fraction', '%%MatrixMarket matrix coordinate integer general\n2 2 1\n1 1 1.5\n', 3, /expected an integer value, found "1.5"/],
    ['integer beyond 2^53', '%%MatrixMarket matrix coordinate integer general\n2 2 1\n1 1 9007199254740993\n', 3, /exceeds 2\^53/],
    ['symmetric entry above the diagonal', '%%MatrixMarket matrix coordinate real symmetric\n3 3 2\n1 1 1\n1 3 2\n', 4, /entry \(1, 3\) is above the diagonal: a symmetric file stores only the lower triangle/],
    ['skew-symmetric nonzero diagonal', '%%MatrixMarket matrix coordinate real skew-symmetric\n3 3 2\n2 1 1\n2 2 5\n', 4, /diagonal entry \(2, 2\) = 5 in a skew-symmetric file/],
    ['array with two values on a line', '%%MatrixMarket matrix array real general\n2 1\n1 2\n', 3, /expected 1 value per line/],
    ['array with too few values', '%%MatrixMarket matrix array real general\n2 2\n1\n2\n3\n', 5, /file ends after 3 of the 4 entries/],
    ['array with too many values', '%%MatrixMarket matrix array real general\n1 2\n1\n2\n3\n', 5, /more entries than the 2 declared/],
    ['vector coordinate index out of range', '%%MatrixMarket vector coordinate real general\n3 1\n4 1\n', 3, /index 4 is out of range 1..3/],
  ])('%s', async (_name, text, line, pattern) => {
    await expectError(text as string, line as number | undefined, pattern as RegExp);
  });

  it('rejects duplicates when asked, naming the line of the second occurrence', async () => {
    await expectError(`${H}3 3 4\n1 1 1\n2 3 1\n% c\n3 3 1\n2 3 5\n`, 7, /entry \(2, 3\) appears more than once/, { duplicates: 'reject' });
    await expectError('%%MatrixMarket matrix coordinate real symmetric\n3 3 3\n3 1 1\n2 2 1\n3 1 2\n', 5, /entry \(3, 1\) appears more than once/, { duplicates: 'reject' });
  });

  it('refuses a declared size that cannot fit before allocating anything', async () => {
    await expectError(`${H}2000000000 2000000000 2000000000\n1 1 1\n`, 2, /needs about .* GiB to read, over the limit/);
    await expectError(`${H}100 100 1000\n1 1 1\n`, 2, /needs about 0\.0 MiB to read, over the limit of 0\.0 MiB/, { memoryLimitBytes: 1000 });
    await expectError('%%MatrixMarket matrix array real general\n40000 40000\n1\n', 2, /limit/, { memoryLimitBytes: 2 ** 30 });
  });

  it('reports truncated or fake gzip data', async () => {
    const gz = gzipSync(Buffer.from(SPEC_EXAMPLE));
    await expectError(gz.subarray(0, gz.length - 12), undefined, /corrupt or truncated gzip data/, {}, 'cut.mtx.gz');
    await expectError(SPEC_EXAMPLE, undefined, /name ends with \.gz but the content is not gzip data/, {}, 'plain.mtx.gz');
  });

  it('reports a binary file without newlines as not Matrix Market, without reading it all into one line', async () => {
    await expectError(Buffer.alloc(3 << 20, 0x41), 1, /line longer than 1 MiB/);
    await expectError(Buffer.from([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0, 0, 10, 0, 0]), 1, /not a Matrix Market file/);
  });

  it('names missing files and folders', async () => {
    await expect(readMatrixMarket('/nonexistent/dir/a.mtx')).rejects.toThrow(/^\/nonexistent\/dir\/a\.mtx: no such file$/);
    await expect(readMatrixMarket('/tmp')).rejects.toThrow(/is a directory/);
  });

  it('rejects a matrix as a right-hand side', async () => {
    await expect(readMatrixMarketVector(tempFile(`${H}2 2 1\n1 1 1\n`))).rejects.toThrow(/expected a vector \(vector object or n×1 matrix\), found a 2×2 matrix/);
  });
});
