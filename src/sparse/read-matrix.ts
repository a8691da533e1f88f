/**
 * One entry point for the matrix file formats slabbench reads: Matrix Market (plain or .gz) and
 * scipy.sparse `.npz` (chosen by the `.npz` ending). Both give the same CSR and a header with the
 * fields every command reads; a bsr `.npz` also gives its stored block size.
 */
import type { Csr } from './types.js';
import type { MatrixMarketHeader } from './matrix-market-header.js';
import { readMatrixMarket } from './matrix-market.js';
import { readNpz } from './npz-read.js';

export interface MatrixFile {
  header: MatrixMarketHeader;
  csr: Csr;
  /** The square block size a bsr `.npz` stores (undefined otherwise). */
  fileBlockSize?: number;
}

export interface ReadMatrixOptions {
  duplicates?: 'sum' | 'reject';
  allowNonFinite?: boolean;
}

export function isNpzPath(path: string): boolean {
  return /\.npz$/i.test(path);
}

export async function readMatrixFile(path: string, opts: ReadMatrixOptions = {}): Promise<MatrixFile> {
  if (!isNpzPath(path)) return readMatrixMarket(path, opts);
  const npz = await readNpz(path, opts);
  const { csr } = npz;
  // what a general real coordinate file with the same entries would declare
  const header: MatrixMarketHeader = {
    object: 'matrix', format: 'coordinate', field: 'real', symmetry: 'general',
    nRows: csr.nRows, nCols: csr.nCols, nEntries: csr.rowPtr[csr.nRows]!, comments: [`scipy.sparse ${npz.format} .npz`],
  };
  const out: MatrixFile = { header, csr };
  if (npz.blockShape !== undefined && npz.blockShape[0] === npz.blockShape[1]) out.fileBlockSize = npz.blockShape[0];
  return out;
}
