import type { Layout } from './types.js';
import { readMatrixFile } from './read-matrix.js';
import { layoutPathFor, readLayout, readLayoutFor } from './layout.js';
import { systemFromMatrix, type LoadedSystem, type LoadOptions } from './system.js';

export type { LoadedSystem, LoadOptions, BlockSizeSource } from './system.js';
export { systemFromMatrix } from './system.js';

/**
 * Read a system matrix: Matrix Market (plain or .gz) via readMatrixMarket, or a scipy.sparse
 * `.npz` file (csr, csc, bsr, coo) via readNpz; then the block size from, in order, the layout
 * (`--layout FILE` or the sidecar beside the matrix), `--block-size`, the square block shape a
 * bsr `.npz` stores, or pattern detection. A layout and `--block-size` that disagree are an
 * error, not a silent choice.
 */
export async function loadSystem(mtxPath: string, opts: LoadOptions = {}): Promise<LoadedSystem> {
  const { header, csr, fileBlockSize } = await readMatrixFile(mtxPath, {
    ...(opts.duplicates ? { duplicates: opts.duplicates } : {}),
    ...(opts.allowNonFinite ? { allowNonFinite: true } : {}),
  });
  let layout: Layout | undefined;
  let layoutPath: string | undefined;
  if (opts.layoutPath !== undefined) {
    layoutPath = opts.layoutPath;
    layout = readLayout(layoutPath);
  } else {
    layout = readLayoutFor(mtxPath);
    if (layout !== undefined) layoutPath = layoutPathFor(mtxPath);
  }
  return systemFromMatrix(mtxPath, header, csr, { blockSize: opts.blockSize, layout, layoutPath, fileBlockSize });
}

