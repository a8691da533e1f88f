import type { Bsr, Csr } from './types.js';
import { sortInt32Range } from './sort-range.js';

/**
 * Description of why `perm` is not a permutation of 0..n-1, or undefined when it is.
 */
export function permutationProblem(perm: ArrayLike<number>, n: number): string | undefined {
  if (perm.length !== n) return `has length ${perm.length}, expected ${n}`;
  const seen = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const p = perm[i];
    if (!Number.isInteger(p) || p < 0 || p >= n) return `entry ${i} is ${p}, expected an integer in 0..${n - 1}`;
    if (seen[p]) return `entry ${i} repeats ${p}`;
    seen[p] = 1;
  }
  return undefined;
}

function checkPermutation(where: string, perm: ArrayLike<number>, n: number): void {
  const problem = permutationProblem(perm, n);
  if (problem !== undefined) throw new RangeError(`${where}: permutation ${problem}`);
}

/** inv[perm[i]] = i. perm maps new → old, so inv maps old → new (and vice versa). */
export function inversePermutation(perm: Int32Array): Int32Array {
  checkPermutation('inversePermutation', perm, perm.length);
  const inv = new Int32Array(perm.length);
  for (let i = 0; i < perm.length; i++) inv[perm[i]] = i;
  return inv;
}

/**
 * Symmetric block permutation P A Pᵀ: new block row i is old block row perm[i], and block
 * columns are renumbered the same way (perm maps new → old). Block columns come out sorted;
 * blocks are copied unchanged (the permutation acts on whole blocks, never inside one).
 */
export function permuteBsr(a: Bsr, perm: Int32Array): Bsr {
  const { nBlockRows, bs, rowPtr, colInd, values } = a;
  if (a.nBlockCols !== nBlockRows) {
    throw new RangeError(`permuteBsr: needs a square block matrix, got ${nBlockRows}×${a.nBlockCols} blocks`);
  }
  checkPermutation('permuteBsr', perm, nBlockRows);
  const inv = inversePermutation(perm);
  const bb = bs * bs;
  const outPtr = new Int32Array(nBlockRows + 1);
  for (let i = 0; i < nBlockRows; i++) {
    const old = perm[i];
    outPtr[i + 1] = outPtr[i] + rowPtr[old + 1] - rowPtr[old];
  }
  const nBlocks = outPtr[nBlockRows];
  const outCol = new Int32Array(nBlocks);
  const outVal = new Float64Array(nBlocks * bb);
  const source = new Int32Array(nBlockRows); // new block column → old block index k in this row
  for (let i = 0; i < nBlockRows; i++) {
    const old = perm[i];
    const start = outPtr[i];
    let p = start;
    for (let k = rowPtr[old]; k < rowPtr[old + 1]; k++) {
      const c = inv[colInd[k]];
      source[c] = k;
      outCol[p++] = c;
    }
    sortInt32Range(outCol, start, p);
    for (let q = start; q < p; q++) {
      const k = source[outCol[q]];
      outVal.set(values.subarray(k * bb, (k + 1) * bb), q * bb);
    }
  }
  return { nBlockRows, nBlockCols: nBlockRows, bs, rowPtr: outPtr, colInd: outCol, values: outVal };
}

/**
 * Symmetric block permutation of a scalar CSR matrix, keeping its scalar pattern (no block
 * fill-in): scalar index I·bs + r moves to inv[I]·bs + r. Same perm convention as permuteBsr.
 */
export function permuteCsrBlocks(a: Csr, perm: Int32Array, bs: number): Csr {
  const { nRows, rowPtr, colInd, values } = a;
  if (a.nCols !== nRows) throw new RangeError(`permuteCsrBlocks: needs a square matrix, got ${nRows}×${a.nCols}`);
  if (!Number.isInteger(bs) || bs < 1 || nRows % bs !== 0) {
    throw new RangeError(`permuteCsrBlocks: block size ${bs} does not divide the size ${nRows}`);
  }
  const nb = nRows / bs;
  checkPermutation('permuteCsrBlocks', perm, nb);
  const inv = inversePermutation(perm);
  const outPtr = new Int32Array(nRows + 1);
  for (let I = 0; I < nb; I++) {
    for (let r = 0; r < bs; r++) {
      const old = perm[I] * bs + r;
      outPtr[I * bs + r + 1] = outPtr[I * bs + r] + rowPtr[old + 1] - rowPtr[old];
    }
  }
  const nnz = outPtr[nRows];
  const outCol = new Int32Array(nnz);
  const outVal = new Float64Array(nnz);
  const source = new Int32Array(nRows);
  for (let row = 0; row < nRows; row++) {
    const I = (row / bs) | 0;
    const old = perm[I] * bs + (row - I * bs);
    const start = outPtr[row];
    let p = start;
    for (let k = rowPtr[old]; k < rowPtr[old + 1]; k++) {
      const c0 = colInd[k];
      const J = (c0 / bs) | 0;
      const c = inv[J] * bs + (c0 - J * bs);
      source[c] = k;
      outCol[p++] = c;
    }
    sortInt32Range(outCol, start, p);
    for (let q = start; q < p; q++) outVal[q] = values[source[outCol[q]]];
  }
  return { nRows, nCols: nRows, rowPtr: outPtr, colInd: outCol, values: outVal };
}

/**
 * out block i = x block perm[i] (blocks of length bs). With perm from permuteBsr this maps a
 * vector to the new numbering; use inversePermutation(perm) to map back.
 */
export function permuteVectorBlocks(x: Float64Array, perm: Int32Array, bs: number, out: Float64Array): void {
  const nb = perm.length;
  if (x.length !== nb * bs) throw new RangeError(`permuteVectorBlocks: x has length ${x.length}, expected ${nb * bs}`);
  if (out.length !== nb * bs) throw new RangeError(`permuteVectorBlocks: out has length ${out.length}, expected ${nb * bs}`);
  if (x === out) throw new RangeError('permuteVectorBlocks: x and out must be different arrays');
  for (let i = 0; i < nb; i++) {
    const src = perm[i] * bs, dst = i * bs;
    for (let j = 0; j < bs; j++) out[dst + j] = x[src + j];
  }
}
