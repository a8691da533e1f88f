/**
 * Sparse matrices in the `.npz` layout that `scipy.sparse.save_npz` writes: a zip archive (stored
 * or deflated, PKWARE APPNOTE) of NumPy `.npy` members (src/sparse/npy.ts):
 *   format  — a byte string: csr, csc, bsr or coo
 *   shape   — two integers (rows, columns)
 *   data    — values: nnz of them (bsr: nBlocks × R × C, C order)
 *   indices, indptr — csr/csc/bsr compressed indices (bsr: block columns and block-row pointers)
 *   row, col — coo coordinates
 * (scipy's own documentation of save_npz and of each sparse format; the member names are the
 * file's, not ours.) The result is the same CSR every other reader produces: columns sorted in
 * each row, duplicates summed (or refused), explicit zeros kept. Sizes are checked against the
 * read limit before anything sized by them is allocated.
 */
import { readFile, stat } from 'node:fs/promises';
import { unzipSync, type UnzipFileInfo } from 'fflate';
import type { Csr } from './types.js';
import { MAX_INT32_INDEX } from './types.js';
import { parseNpy, npyToFloat64, npyToIndices, npyToText, type NpyArray } from './npy.js';
import { assembleGeneral, assembleRowOrdered } from './matrix-market-assemble.js';
import { defaultReadLimitBytes } from './matrix-market-read.js';
import { UserError } from '../util/errors.js';

export type NpzFormat = 'csr' | 'csc' | 'bsr' | 'coo';

export interface NpzMatrix {
  csr: Csr;
  format: NpzFormat;
  /** The bsr file's block shape (R, C); undefined for the other formats. */
  blockShape?: [number, number];
  /** Entries summed into an earlier one (duplicates in the file). */
  nSummed: number;
}

export interface ReadNpzOptions {
  duplicates?: 'sum' | 'reject';
  allowNonFinite?: boolean;
  /** Largest number of bytes the reader may hold (archive + inflated members + CSR). */
  memoryLimitBytes?: number;
}

const FORMATS: readonly NpzFormat[] = ['csr', 'csc', 'bsr', 'coo'];
const MEMBERS: Record<NpzFormat, string[]> = {
  csr: ['format', 'shape', 'data', 'indices', 'indptr'],
  csc: ['format', 'shape', 'data', 'indices', 'indptr'],
  bsr: ['format', 'shape', 'data', 'indices', 'indptr'],
  coo: ['format', 'shape', 'data', 'row', 'col'],
};
/** Members save_npz may add that carry nothing we need (scipy ≥ 1.13 marks sparse arrays). */
const IGNORED = new Set(['_is_array']);

export async function readNpz(path: string, opts: ReadNpzOptions = {}): Promise<NpzMatrix> {
  const limit = opts.memoryLimitBytes ?? defaultReadLimitBytes();
  let size: number;
  try {
    size = (await stat(path)).size;
  } catch (e) {
    throw new UserError(`${path}: cannot read (${(e as NodeJS.ErrnoException).code ?? String(e)})`);
  }
  if (size > limit) throw new UserError(`${path}: the archive is ${size} bytes, over the read limit of ${limit} bytes (raise it with SLABBENCH_READ_LIMIT_MB)`);
  return parseNpz(path, new Uint8Array(await readFile(path)), opts);
}

/** The reader on bytes already in memory; `path` names the file in messages. */
export function parseNpz(path: string, bytes: Uint8Array, opts: ReadNpzOptions = {}): NpzMatrix {
  const limit = opts.memoryLimitBytes ?? defaultReadLimitBytes();
  const duplicates = opts.duplicates ?? 'sum';
  if (bytes.length < 4 || bytes[0] !== 0x50 || bytes[1] !== 0x4b) {
    throw new UserError(`${path}: not a .npz file (a zip archive of .npy arrays, as scipy.sparse.save_npz writes)`);
  }
  let inflated = 0;
  let tooBig: string | undefined;
  let files: Record<string, Uint8Array>;
  try {
    files = unzipSync(bytes, {
      filter: (f: UnzipFileInfo) => {
        inflated += f.originalSize;
        if (bytes.length + inflated > limit && tooBig === undefined) tooBig = f.name;
        return tooBig === undefined;
      },
    });
  } catch (e) {
    throw new UserError(`${path}: damaged zip archive (${e instanceof Error ? e.message : String(e)})`);
  }
  if (tooBig !== undefined) {
    throw new UserError(`${path}: member ${tooBig} would take the inflated archive past the read limit of ${limit} bytes (raise it with SLABBENCH_READ_LIMIT_MB)`);
  }
  const arrays = new Map<string, NpyArray>();
  for (const [name, data] of Object.entries(files)) {
    if (!name.endsWith('.npy')) throw new UserError(`${path}: member ${name} is not a .npy array`);
    const key = name.slice(0, -4);
    arrays.set(key, parseNpy(data, `${path}: member ${name}`));
  }
  const member = (key: string): NpyArray => {
    const a = arrays.get(key);
    if (a === undefined) throw new UserError(`${path}: member ${key}.npy is missing`);
    return a;
  };
  const where = (key: string): string => `${path}: member ${key}.npy`;

  const formatText = npyToText(member('format'), where('format'));
  if (!FORMATS.includes(formatText as NpzFormat)) {
    throw new UserError(`${path}: sparse format '${formatText}' is not supported, expected one of ${FORMATS.join(', ')}`);
  }
  const format = formatText as NpzFormat;
  for (const key of arrays.keys()) {
    if (!MEMBERS[format].includes(key) && !IGNORED.has(key)) {
      throw new UserError(`${path}: unexpected member ${key}.npy for a ${format} matrix, expected ${MEMBERS[format].join(', ')}`);
    }
  }
  const shapeArr = member('shape');
  if (shapeArr.count !== 2) throw new UserError(`${where('shape')}: expected two integers (rows, columns), found ${shapeArr.count}`);
  const shape = npyToIndices(shapeArr, where('shape'), MAX_INT32_INDEX);
  const nRows = shape[0]!, nCols = shape[1]!;

  const dataArr = member('data');
  if (dataArr.kind !== 'float' && dataArr.kind !== 'int' && dataArr.kind !== 'uint' && dataArr.kind !== 'bool') {
    throw new UserError(`${where('data')}: expected real values, found ${dataArr.kind} (complex matrices are not supported)`);
  }
  let nnz = dataArr.count;
  let blockShape: [number, number] | undefined;
  if (format === 'bsr') {
    if (dataArr.shape.length !== 3) throw new UserError(`${where('data')}: expected a 3-d array (blocks, R, C) for bsr, found shape (${dataArr.shape.join(', ')})`);
    blockShape = [dataArr.shape[1]!, dataArr.shape[2]!];
    if (dataArr.fortranOrder) throw new UserError(`${where('data')}: Fortran-ordered block data is not supported, expected C order`);
  } else if (dataArr.shape.length !== 1) {
    throw new UserError(`${where('data')}: expected a 1-d array, found shape (${dataArr.shape.join(', ')})`);
  }
  if (nnz > MAX_INT32_INDEX) throw new UserError(`${where('data')}: ${nnz} entries exceed the ${MAX_INT32_INDEX} that Int32 indices can hold`);
  // indices + values + row pointer of the CSR we build, beside what is already held
  const need = bytes.length + inflated + nnz * 16 + (nRows + 1) * 4;
  if (need > limit) throw new UserError(`${path}: a ${nRows}×${nCols} matrix with ${nnz} entries needs about ${need} bytes to read, over the limit of ${limit} bytes (raise it with SLABBENCH_READ_LIMIT_MB)`);

  const vals = npyToFloat64(dataArr, where('data'));
  if (!opts.allowNonFinite) {
    for (let k = 0; k < vals.length; k++) {
      if (!Number.isFinite(vals[k]!)) throw new UserError(`${where('data')}: entry ${k} is ${vals[k]}, a non-finite value (allow with --allow-non-finite)`);
    }
  }

  let assembled;
  if (format === 'coo') {
    const row = member('row'), col = member('col');
    if (row.count !== nnz || col.count !== nnz) throw new UserError(`${path}: row, col and data hold ${row.count}, ${col.count} and ${nnz} entries, expected equal counts`);
    const rows = npyToIndices(row, where('row'), nRows - 1);
    const cols = npyToIndices(col, where('col'), nCols - 1);
    assembled = assembleGeneral(nRows, rows, cols, vals, nnz, false, duplicates);
  } else {
    const [majorCount, minorCount, R, C] = format === 'csr' ? [nRows, nCols, 1, 1]
      : format === 'csc' ? [nCols, nRows, 1, 1]
        : checkBlocks(path, nRows, nCols, blockShape!);
    const nBlocks = format === 'bsr' ? dataArr.shape[0]! : nnz;
    const ptrArr = member('indptr');
    if (ptrArr.count !== majorCount + 1) throw new UserError(`${where('indptr')}: holds ${ptrArr.count} pointers, expected ${majorCount + 1}`);
    const ptr = npyToIndices(ptrArr, where('indptr'), nBlocks);
    if (ptr[0] !== 0 || ptr[majorCount] !== nBlocks) throw new UserError(`${where('indptr')}: runs from ${ptr[0]} to ${ptr[majorCount]}, expected 0 to ${nBlocks}`);
    for (let i = 0; i < majorCount; i++) {
      if (ptr[i + 1]! < ptr[i]!) throw new UserError(`${where('indptr')}: decreases at position ${i + 1}`);
    }
    const idxArr = member('indices');
    if (idxArr.count !== nBlocks) throw new UserError(`${where('indices')}: holds ${idxArr.count} indices, expected ${nBlocks}`);
    const idx = npyToIndices(idxArr, where('indices'), minorCount - 1);
    if (format === 'csr') {
      const counts = new Int32Array(nRows + 1);
      for (let i = 0; i < nRows; i++) counts[i + 1] = ptr[i + 1]! - ptr[i]!;
      assembled = assembleRowOrdered(nRows, counts, idx, vals, nnz, duplicates);
    } else if (format === 'csc') {
      const rows = idx;
      const cols = new Int32Array(nnz);
      for (let j = 0; j < nCols; j++) cols.fill(j, ptr[j]!, ptr[j + 1]!);
      assembled = assembleGeneral(nRows, rows, cols, vals, nnz, false, duplicates);
    } else {
      // expand each R×C block (C order) into scalar triples
      nnz = nBlocks * R * C;
      const rows = new Int32Array(nnz), cols = new Int32Array(nnz);
      let k = 0;
      for (let I = 0; I < majorCount; I++) {
        for (let b = ptr[I]!; b < ptr[I + 1]!; b++) {
          const J = idx[b]!;
          for (let r = 0; r < R; r++) {
            for (let c = 0; c < C; c++) { rows[k] = I * R + r; cols[k] = J * C + c; k++; }
          }
        }
      }
      assembled = assembleGeneral(nRows, rows, cols, vals, nnz, false, duplicates);
    }
  }
  if (assembled.duplicate !== undefined) {
    const d = assembled.duplicate;
    throw new UserError(`${path}: entry (row ${d.row}, column ${d.col}, 0-based) occurs more than once, expected each entry once (duplicates are refused)`);
  }
  return {
    csr: { nRows, nCols, rowPtr: assembled.rowPtr, colInd: assembled.colInd, values: assembled.values },
    format, blockShape, nSummed: assembled.nSummed,
  };
}

function checkBlocks(path: string, nRows: number, nCols: number, [R, C]: [number, number]): [number, number, number, number] {
  if (R < 1 || C < 1 || nRows % R !== 0 || nCols % C !== 0) {
    throw new UserError(`${path}: bsr block shape ${R}×${C} does not divide the matrix shape ${nRows}×${nCols}`);
  }
  return [nRows / R, nCols / C, R, C];
}
