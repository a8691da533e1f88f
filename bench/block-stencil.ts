/**
 * An invented block 5-point stencil on a grid×grid lattice with seeded random bs×bs blocks in
 * [−1, 1] (block rows in lattice order, neighbours sorted); with `dominant` each diagonal block gets
 * 2·bs added on its diagonal, so the solver benches' matrices are safely non-singular. Shared by
 * bench/compiled-library.bench.ts and bench/kernels-ab.bench.ts.
 */
import type { Bsr } from '../src/sparse/types.js';
import { mulberry32 } from '../src/util/random.js';

export function blockStencil(grid: number, bs: number, seed: number, opts: { dominant?: boolean } = {}): Bsr {
  const r = mulberry32(seed);
  const nb = grid * grid, bb = bs * bs;
  const rowPtr = new Int32Array(nb + 1);
  const cols: number[] = [];
  for (let I = 0; I < nb; I++) {
    const i = Math.floor(I / grid), j = I % grid;
    const nbrs = [I];
    if (i > 0) nbrs.push(I - grid);
    if (j > 0) nbrs.push(I - 1);
    if (j < grid - 1) nbrs.push(I + 1);
    if (i < grid - 1) nbrs.push(I + grid);
    nbrs.sort((a, b) => a - b);
    cols.push(...nbrs);
    rowPtr[I + 1] = cols.length;
  }
  const colInd = Int32Array.from(cols);
  const values = new Float64Array(cols.length * bb);
  for (let k = 0; k < values.length; k++) values[k] = 2 * r() - 1;
  if (opts.dominant) {
    for (let I = 0; I < nb; I++) {
      for (let k = rowPtr[I]; k < rowPtr[I + 1]; k++) {
        if (colInd[k] === I) for (let d = 0; d < bs; d++) values[k * bb + d * bs + d] += 2 * bs;
      }
    }
  }
  return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd, values };
}
