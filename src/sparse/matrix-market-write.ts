/**
 * Matrix Market writer: coordinate real general (or symmetric: lower triangle only) and
 * dense vectors. Values are written with String(number), the shortest decimal that reads back
 * to the same float64 (ECMAScript Number::toString); negative zero is written "-0" so the round
 * trip is bit-exact. Output is streamed to a temporary file and renamed into place; a path
 * ending in .gz is gzip-compressed.
 */
import { Readable, pipeline as pipelineCb } from 'node:stream';
import { promisify } from 'node:util';
import { createGzip } from 'node:zlib';
import type { Csr } from './types.js';
import { openAtomicStream } from '../util/atomic-write.js';
import { UserError, fileError } from '../util/errors.js';

const pipeline = promisify(pipelineCb) as (...streams: NodeJS.ReadableStream[] | unknown[]) => Promise<void>;

export interface WriteMatrixMarketOptions {
  /** Write `symmetric`, lower triangle only. The matrix must be exactly symmetric (checked). */
  symmetric?: boolean;
  /** Comment lines written after the banner as `% text` (embedded newlines split lines). */
  comments?: string[];
}

export interface WriteVectorOptions {
  comments?: string[];
  /**
   * 'matrix' (default): `%%MatrixMarket matrix array real general` with size `n 1`, which
   * scipy.io.mmread and most readers accept. 'vector': `%%MatrixMarket vector array real general`
   * with size `n` (an extension of the 1996 format that fewer readers know).
   */
  object?: 'matrix' | 'vector';
}

const CHUNK_CHARS = 1 << 20;

/** Shortest round-trip decimal of x, keeping the sign of zero. */
export function formatValue(x: number): string {
  return x === 0 && 1 / x < 0 ? '-0' : String(x);
}

function commentLines(comments: string[] | undefined): string {
  if (comments === undefined) return '';
  let s = '';
  // "% text" for readability; a comment that already starts with a blank (as the reader returns
  // them) or is empty is kept verbatim, so read → write keeps comment lines unchanged.
  for (const c of comments) for (const l of c.split(/\r\n|\r|\n/)) s += l === '' || l[0] === ' ' || l[0] === '\t' ? `%${l}\n` : `% ${l}\n`;
  return s;
}

function checkCsr(a: Csr): void {
  const { nRows, nCols, rowPtr, colInd, values } = a;
  if (rowPtr.length !== nRows + 1) throw new RangeError(`writeMatrixMarket: rowPtr has length ${rowPtr.length}, expected ${nRows + 1}`);
  const nnz = rowPtr[nRows];
  if (colInd.length < nnz || values.length < nnz) throw new RangeError(`writeMatrixMarket: colInd/values shorter than nnz = ${nnz}`);
  for (let k = 0; k < nnz; k++) {
    if (colInd[k] < 0 || colInd[k] >= nCols) throw new RangeError(`writeMatrixMarket: column index ${colInd[k]} out of range 0..${nCols - 1}`);
  }
}

/** Value at (i, j) or undefined when (i, j) is not stored (binary search; columns are sorted). */
function entryAt(a: Csr, i: number, j: number): number | undefined {
  let lo = a.rowPtr[i], hi = a.rowPtr[i + 1] - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const c = a.colInd[mid];
    if (c === j) return a.values[mid];
    if (c < j) lo = mid + 1; else hi = mid - 1;
  }
  return undefined;
}

/** First asymmetric pair, or undefined when the pattern and values are exactly symmetric. */
export function findAsymmetry(a: Csr): { row: number; col: number } | undefined {
  if (a.nRows !== a.nCols) return { row: -1, col: -1 };
  for (let i = 0; i < a.nRows; i++) {
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
      const j = a.colInd[k];
      if (j === i) continue;
      const t = entryAt(a, j, i);
      if (t === undefined || !Object.is(t, a.values[k])) return { row: i, col: j };
    }
  }
  return undefined;
}

async function writeStreamed(path: string, chunks: Iterable<string>): Promise<void> {
  const out = openAtomicStream(path);
  try {
    const src = Readable.from(chunks, { objectMode: false });
    if (path.toLowerCase().endsWith('.gz')) await pipeline(src, createGzip(), out.stream);
    else await pipeline(src, out.stream);
    await out.commit();
  } catch (e) {
    await out.abort();
    const err = e as NodeJS.ErrnoException;
    if (err && typeof err.code === 'string' && !(e instanceof UserError)) {
      throw fileError(path, undefined, `cannot write (${err.code === 'ENOENT' ? 'folder does not exist' : err.message})`);
    }
    throw e;
  }
}

function* coordinateChunks(a: Csr, symmetric: boolean, comments?: string[]): Generator<string> {
  const { nRows, nCols, rowPtr, colInd, values } = a;
  let nWrite = 0;
  if (symmetric) {
    for (let i = 0; i < nRows; i++) for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) if (colInd[k] <= i) nWrite++;
  } else nWrite = rowPtr[nRows];
  let s = `%%MatrixMarket matrix coordinate real ${symmetric ? 'symmetric' : 'general'}\n${commentLines(comments)}${nRows} ${nCols} ${nWrite}\n`;
  for (let i = 0; i < nRows; i++) {
    const r = `${i + 1} `;
    for (let k = rowPtr[i]; k < rowPtr[i + 1]; k++) {
      const j = colInd[k];
      if (symmetric && j > i) continue;
      const v = values[k];
      s += r + (j + 1) + ' ' + (v === 0 && 1 / v < 0 ? '-0' : String(v)) + '\n';
    }
    if (s.length >= CHUNK_CHARS) { yield s; s = ''; }
  }
  if (s.length > 0) yield s;
}

/**
 * Write a CSR matrix as `coordinate real general` (or `symmetric`, lower triangle only), one
 * entry per line in row order, 1-based. Explicit zeros are written. Atomic; gzip for *.gz.
 */
export async function writeMatrixMarket(path: string, a: Csr, opts: WriteMatrixMarketOptions = {}): Promise<void> {
  checkCsr(a);
  const symmetric = opts.symmetric ?? false;
  if (symmetric) {
    const bad = findAsymmetry(a);
    if (bad !== undefined) {
      throw new UserError(bad.row < 0
        ? `${path}: cannot write a ${a.nRows}×${a.nCols} matrix as symmetric: it is not square`
        : `${path}: cannot write as symmetric: entry (${bad.row + 1}, ${bad.col + 1}) differs from (${bad.col + 1}, ${bad.row + 1}); write it as general`);
    }
  }
  await writeStreamed(path, coordinateChunks(a, symmetric, opts.comments));
}

function* columnChunks(columns: readonly Float64Array[], object: 'matrix' | 'vector', comments?: string[]): Generator<string> {
  const n = columns.length > 0 ? columns[0].length : 0;
  let s = `%%MatrixMarket ${object} array real general\n${commentLines(comments)}${object === 'matrix' ? `${n} ${columns.length}` : `${n}`}\n`;
  // array files are column-major (Boisvert, Pozo & Remington 1996, §3)
  for (const v of columns) {
    for (let i = 0; i < v.length; i++) {
      const x = v[i];
      s += (x === 0 && 1 / x < 0 ? '-0' : String(x)) + '\n';
      if (s.length >= CHUNK_CHARS) { yield s; s = ''; }
    }
  }
  if (s.length > 0) yield s;
}

/** Write a dense vector (right-hand side) as an n×1 array (default) or a `vector` object. */
export async function writeMatrixMarketVector(path: string, v: Float64Array, opts: WriteVectorOptions = {}): Promise<void> {
  await writeStreamed(path, columnChunks([v], opts.object ?? 'matrix', opts.comments));
}

/** Write k dense columns of equal length as an n×k `matrix array real general` file (column-major). */
export async function writeMatrixMarketColumns(path: string, columns: readonly Float64Array[], opts: { comments?: string[] } = {}): Promise<void> {
  if (columns.length === 0) throw new RangeError('writeMatrixMarketColumns: no columns');
  const n = columns[0].length;
  for (const c of columns) if (c.length !== n) throw new RangeError(`writeMatrixMarketColumns: columns of length ${c.length} and ${n}`);
  await writeStreamed(path, columnChunks(columns, 'matrix', opts.comments));
}
