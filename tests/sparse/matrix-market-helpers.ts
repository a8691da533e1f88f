import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Csr } from '../../src/sparse/types.js';
import { readMatrixMarket, readMatrixMarketFrom, type ReadMatrixMarketOptions } from '../../src/sparse/matrix-market.js';

export function tempDir(prefix = 'slabbench-mm-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

let counter = 0;
const dir = tempDir();

/** Write text (or bytes) to a fresh temp file and return its path. */
export function tempFile(content: string | Uint8Array, name = `m${counter++}.mtx`): string {
  const p = join(dir, name);
  writeFileSync(p, content);
  return p;
}

/** Read a Matrix Market text through a real file. */
export async function readText(text: string | Uint8Array, opts?: ReadMatrixMarketOptions, name?: string) {
  return readMatrixMarket(tempFile(text, name), opts);
}

/** Read from in-memory pieces (chunk boundaries where the caller puts them). */
export async function readPieces(name: string, pieces: Uint8Array[], opts?: ReadMatrixMarketOptions) {
  return readMatrixMarketFrom(name, async () => (async function* () { for (const p of pieces) yield p; })(), opts);
}

/** Dense row-major array of a CSR (for comparisons). */
export function toDense(a: Csr): number[][] {
  const d: number[][] = [];
  for (let i = 0; i < a.nRows; i++) {
    const row = new Array<number>(a.nCols).fill(0);
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) row[a.colInd[k]] += a.values[k];
    d.push(row);
  }
  return d;
}

/** (row, col, value) triples of a CSR in storage order, 1-based like the file. */
export function triples(a: Csr): Array<[number, number, number]> {
  const t: Array<[number, number, number]> = [];
  for (let i = 0; i < a.nRows; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) t.push([i + 1, a.colInd[k] + 1, a.values[k]]);
  return t;
}

/** Checks the CSR invariants every reader result must satisfy. */
export function expectValidCsr(a: Csr): void {
  if (a.rowPtr.length !== a.nRows + 1 || a.rowPtr[0] !== 0) throw new Error('bad rowPtr');
  const nnz = a.rowPtr[a.nRows];
  if (a.colInd.length !== nnz || a.values.length !== nnz) throw new Error(`arrays of length ${a.colInd.length}/${a.values.length}, nnz ${nnz}`);
  for (let i = 0; i < a.nRows; i++) {
    if (a.rowPtr[i + 1] < a.rowPtr[i]) throw new Error('rowPtr decreases');
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
      if (a.colInd[k] < 0 || a.colInd[k] >= a.nCols) throw new Error('column out of range');
      if (k > a.rowPtr[i] && a.colInd[k] <= a.colInd[k - 1]) throw new Error('columns not strictly increasing');
    }
  }
}

export function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}
