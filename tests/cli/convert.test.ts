import { describe, it, expect } from 'vitest';
import { readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { readMatrixMarket, readMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { readLayout } from '../../src/sparse/layout.js';
import type { Csr } from '../../src/sparse/types.js';
import { tempDir } from '../sparse/matrix-market-helpers.js';
import { runCliShort } from './cli-helpers.js';

const dir = tempDir('slabbench-convert-');
const p = (name: string) => join(dir, name);

const run = (...args: string[]) => runCliShort(args);

function dense(a: Csr): number[][] {
  const d = Array.from({ length: a.nRows }, () => new Array<number>(a.nCols).fill(0));
  for (let i = 0; i < a.nRows; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) d[i][a.colInd[k]] = a.values[k];
  return d;
}

/** Dense P A Pᵀ for a block permutation perm (new → old) with block size bs. */
function permuteDense(d: number[][], perm: number[], bs: number): number[][] {
  const n = d.length;
  const old = (i: number) => perm[Math.floor(i / bs)] * bs + (i % bs);
  return Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => d[old(i)][old(j)]));
}

// A non-symmetric 6×6 matrix with 2×2 blocks, block lower bidiagonal over 3 block rows, entries
// distinct so any misplaced entry shows.
const A_TEXT = `%%MatrixMarket matrix coordinate real general
% invented test matrix
6 6 20
1 1 11
1 2 12
2 1 21
2 2 22
3 1 31
3 2 32
4 1 41
4 2 42
3 3 33
3 4 34
4 3 43
4 4 44
5 3 53
5 4 54
6 3 63
6 4 64
5 5 55
5 6 56
6 5 65
6 6 66
`;

describe('slabbench convert', () => {
  it('expands a symmetric gzipped file to coordinate real general, keeping its comments', async () => {
    writeFileSync(p('sym.mtx.gz'), gzipSync('%%MatrixMarket matrix coordinate integer symmetric\n% from a tank model\n3 3 4\n1 1 4\n2 1 -1\n3 2 -2\n3 3 6\n'));
    const r = await run('convert', p('sym.mtx.gz'), p('sym-general.mtx'));
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^wrote .*sym-general\.mtx: 3×3, 6 entries, coordinate real general \(from matrix coordinate integer symmetric\)\n$/);
    const text = readFileSync(p('sym-general.mtx'), 'utf8');
    expect(text.split('\n').slice(0, 4)).toEqual([
      '%%MatrixMarket matrix coordinate real general', '% from a tank model',
      expect.stringMatching(/^% slabbench .* convert: from sym\.mtx\.gz \(coordinate integer symmetric\)$/), '3 3 6']);
    expect(dense((await readMatrixMarket(p('sym-general.mtx'))).csr)).toEqual([[4, -1, 0], [-1, 0, -2], [0, -2, 6]]);
    expect(existsSync(p('sym-general.layout.json'))).toBe(false);
  });

  it('writes gzip output and attaches a block size with --block-size alone', async () => {
    writeFileSync(p('a.mtx'), A_TEXT);
    const r = await run('convert', p('a.mtx'), p('a2.mtx.gz'), '--block-size', '2');
    expect(r.code).toBe(0);
    expect(readFileSync(p('a2.mtx.gz'))[0]).toBe(0x1f);
    expect(dense((await readMatrixMarket(p('a2.mtx.gz'))).csr)).toEqual(dense((await readMatrixMarket(p('a.mtx'))).csr));
    const l = readLayout(p('a2.layout.json'));
    expect(l.blockSize).toBe(2);
    expect(l.slabOffsets).toBeUndefined();
  });

  it('--reverse-blocks permutes rows and columns by whole blocks, renumbers slabs and carries the rhs', async () => {
    writeFileSync(p('r.mtx'), A_TEXT);
    writeFileSync(p('r.layout.json'), JSON.stringify({ schema: 'slabbench-layout/1', blockSize: 2, slabOffsets: [0, 1, 3], provenance: { note: 'invented' } }));
    writeFileSync(p('r.rhs.mtx'), '%%MatrixMarket matrix array real general\n6 1\n1\n2\n3\n4\n5\n6\n');
    const r = await run('convert', p('r.mtx'), p('r-rev.mtx'), '--reverse-blocks', '--rhs', p('r.rhs.mtx'), '--rhs-out', p('r-rev.rhs.mtx'));
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const before = dense((await readMatrixMarket(p('r.mtx'))).csr);
    const after = dense((await readMatrixMarket(p('r-rev.mtx'))).csr);
    expect(after).toEqual(permuteDense(before, [2, 1, 0], 2));
    expect(after[0].slice(0, 2)).toEqual([55, 56]); // old block (3,3) now first
    const l = readLayout(p('r-rev.layout.json'));
    expect(l.slabOffsets).toEqual([0, 2, 3]); // slab {1,2} (2 blocks) now first, slab {0} last
    expect(l.provenance).toMatchObject({ note: 'invented', conversions: [{ from: 'r.mtx', permutation: 'block rows reversed' }] });
    expect(Array.from(await readMatrixMarketVector(p('r-rev.rhs.mtx')))).toEqual([5, 6, 3, 4, 1, 2]);
  });

  it('a block permutation moves each centroid with its block row', async () => {
    writeFileSync(p('c.mtx'), A_TEXT);
    writeFileSync(p('c.layout.json'), JSON.stringify({ blockSize: 2, centroids: { nCoordinates: 2, values: [0, 10, 1, 11, 2, 12] } }));
    writeFileSync(p('c-order.txt'), '2\n0\n1\n');
    expect((await run('convert', p('c.mtx'), p('c-perm.mtx'), '--permute', p('c-order.txt'))).code).toBe(0);
    expect(readLayout(p('c-perm.layout.json')).centroids).toEqual({ nCoordinates: 2, values: [2, 12, 0, 10, 1, 11] });
    expect((await run('convert', p('c.mtx'), p('c-same.mtx'))).code).toBe(0);
    expect(readLayout(p('c-same.layout.json')).centroids).toEqual({ nCoordinates: 2, values: [0, 10, 1, 11, 2, 12] });
  });

  it('--permute reads a 0-based block order; a permutation that splits slabs drops them and says so', async () => {
    writeFileSync(p('q.mtx'), A_TEXT);
    writeFileSync(p('q.layout.json'), JSON.stringify({ blockSize: 2, slabOffsets: [0, 2, 3] }));
    writeFileSync(p('order.txt'), '# new block row i = old block row on line i\n1\n\n2\n0\n');
    const r = await run('convert', p('q.mtx'), p('q-perm.mtx'), '--permute', p('order.txt'));
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/block order from order\.txt/);
    expect(r.out).toMatch(/the permutation mixes slabs: slabOffsets dropped/);
    const before = dense((await readMatrixMarket(p('q.mtx'))).csr);
    expect(dense((await readMatrixMarket(p('q-perm.mtx'))).csr)).toEqual(permuteDense(before, [1, 2, 0], 2));
    expect(readLayout(p('q-perm.layout.json')).slabOffsets).toBeUndefined();
  });

  it('--shuffle-blocks is reproducible and keeps blocks inside their slabs', async () => {
    // 12×12 identity-plus-pattern with 1×1 blocks, slabs of 4
    const lines: string[] = [];
    for (let i = 1; i <= 12; i++) { lines.push(`${i} ${i} ${i}`); if (i > 1) lines.push(`${i} ${i - 1} ${-i}`); }
    writeFileSync(p('s.mtx'), `%%MatrixMarket matrix coordinate real general\n12 12 ${lines.length}\n${lines.join('\n')}\n`);
    writeFileSync(p('s.layout.json'), JSON.stringify({ blockSize: 1, slabOffsets: [0, 4, 8, 12] }));
    expect((await run('convert', p('s.mtx'), p('s1.mtx'), '--shuffle-blocks', '42')).code).toBe(0);
    expect((await run('convert', p('s.mtx'), p('s2.mtx'), '--shuffle-blocks', '42')).code).toBe(0);
    expect(readFileSync(p('s1.mtx'), 'utf8').split('\n').slice(2).join('\n')).toBe(readFileSync(p('s2.mtx'), 'utf8').split('\n').slice(2).join('\n'));
    expect(readLayout(p('s1.layout.json')).slabOffsets).toEqual([0, 4, 8, 12]);
    const d = dense((await readMatrixMarket(p('s1.mtx'))).csr);
    const diag = d.map((row, i) => row[i]);
    expect(diag).not.toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]);
    for (let s = 0; s < 3; s++) expect(diag.slice(4 * s, 4 * s + 4).sort((x, y) => x - y)).toEqual([1, 2, 3, 4].map((x) => x + 4 * s));
  });

  it('--layout takes a layout from elsewhere; a gzipped input finds NAME.layout.json beside NAME.mtx.gz', async () => {
    writeFileSync(p('k.mtx'), A_TEXT);
    writeFileSync(p('elsewhere.json'), JSON.stringify({ blockSize: 2, slabOffsets: [0, 3] }));
    const r = await run('convert', p('k.mtx'), p('k-rev.mtx.gz'), '--layout', p('elsewhere.json'), '--reverse-blocks');
    expect(r.code).toBe(0);
    expect(readLayout(p('k-rev.layout.json')).slabOffsets).toEqual([0, 3]);
    // the sidecar of k-rev.mtx.gz is k-rev.layout.json: converting back reverses again
    const back = await run('convert', p('k-rev.mtx.gz'), p('k-back.mtx'), '--reverse-blocks');
    expect(back.code).toBe(0);
    expect(dense((await readMatrixMarket(p('k-back.mtx'))).csr)).toEqual(dense((await readMatrixMarket(p('k.mtx'))).csr));
    expect((readLayout(p('k-back.layout.json')).provenance as { conversions: unknown[] }).conversions).toHaveLength(2);
  });

  it('--json prints only a JSON summary', async () => {
    writeFileSync(p('j.mtx'), A_TEXT);
    const r = await run('convert', p('j.mtx'), p('j2.mtx'), '--json', '--block-size', '2', '--reverse-blocks');
    expect(r.code).toBe(0);
    const s = JSON.parse(r.out);
    expect(s).toMatchObject({ nRows: 6, nCols: 6, nnz: 20, permutation: 'block rows reversed', layout: p('j2.layout.json') });
  });

  it.each([
    [['--reverse-blocks'], /option --reverse-blocks: needs a block size: give --block-size N or put a layout file beside/],
    [['--block-size', '4'], /option --block-size: 4 does not divide the matrix size 6/],
    [['--block-size', '0'], /option --block-size: expected a positive integer, got "0"/],
    [['--shuffle-blocks', 'x', '--block-size', '2'], /option --shuffle-blocks: expected a seed/],
    [['--reverse-blocks', '--shuffle-blocks', '1', '--block-size', '2'], /use only one of --permute, --reverse-blocks and --shuffle-blocks/],
    [['--rhs', 'b.mtx'], /--rhs and --rhs-out go together/],
  ])('refuses %j with a one-line message and exit code 2', async (extra, pattern) => {
    writeFileSync(p('e.mtx'), A_TEXT);
    const r = await run('convert', p('e.mtx'), p('e2.mtx'), ...(extra as string[]));
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(/^slabbench: .*\n$/);
    expect(r.err).toMatch(pattern as RegExp);
    expect(existsSync(p('e2.mtx'))).toBe(false);
  });

  it('refuses a bad permutation file, naming file and line, and hints at 1-based indices', async () => {
    writeFileSync(p('f.mtx'), A_TEXT);
    writeFileSync(p('one-based.txt'), '1\n2\n3\n');
    let r = await run('convert', p('f.mtx'), p('f2.mtx'), '--block-size', '2', '--permute', p('one-based.txt'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/one-based\.txt: not a permutation of 0\.\.2: .*\(the indices look 1-based; this file is 0-based\)/);
    writeFileSync(p('junk.txt'), '0\n1\ntwo\n');
    r = await run('convert', p('f.mtx'), p('f2.mtx'), '--block-size', '2', '--permute', p('junk.txt'));
    expect(r.err).toMatch(/junk\.txt:3: expected one 0-based block row index per line, found "two"/);
    writeFileSync(p('short.txt'), '0\n1\n');
    r = await run('convert', p('f.mtx'), p('f2.mtx'), '--block-size', '2', '--permute', p('short.txt'));
    expect(r.err).toMatch(/short\.txt: has 2 indices, expected 3 \(one per block row\)/);
  });

  it('refuses a --block-size that disagrees with the layout', async () => {
    writeFileSync(p('g.mtx'), A_TEXT);
    writeFileSync(p('g.layout.json'), JSON.stringify({ blockSize: 2 }));
    const r = await run('convert', p('g.mtx'), p('g2.mtx'), '--block-size', '3');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/option --block-size: 3 disagrees with blockSize 2 in .*g\.layout\.json/);
  });

  it('reports malformed input as FILE:LINE with exit code 2 and writes nothing', async () => {
    writeFileSync(p('bad.mtx'), '%%MatrixMarket matrix coordinate real general\n2 2 1\n3 1 1\n');
    const r = await run('convert', p('bad.mtx'), p('bad2.mtx'));
    expect(r.code).toBe(2);
    expect(r.err).toBe(`slabbench: ${p('bad.mtx')}:3: row index 3 is out of range 1..2\n`);
    expect(existsSync(p('bad2.mtx'))).toBe(false);
    writeFileSync(p('dup.mtx'), '%%MatrixMarket matrix coordinate real general\n2 2 2\n1 1 1\n1 1 2\n');
    expect((await run('convert', p('dup.mtx'), p('dup2.mtx'))).code).toBe(0);
    const dup = await run('convert', p('dup.mtx'), p('dup3.mtx'), '--reject-duplicates');
    expect(dup.code).toBe(2);
    expect(dup.err).toMatch(/dup\.mtx:4: entry \(1, 1\) appears more than once/);
  });

  it('has --help with examples', async () => {
    const r = await run('convert', '--help');
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Examples:\n\s+\$ slabbench convert/);
    expect(r.out).toMatch(/--reverse-blocks/);
  });
});
