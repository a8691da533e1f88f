import type { Bsr, Csr, Layout, ModalLayout } from './types.js';
import { MAX_INT32_INDEX } from './types.js';
import type { MatrixMarketHeader } from './matrix-market-header.js';
import { bsrBlockCount, csrToBsr } from './bsr.js';
import { detectBlockSize, slabOffsetsProblem, type BlockSizeDetection } from './structure.js';
import { UserError } from '../util/errors.js';

/** 'file': the matrix file itself stores square blocks (a scipy bsr .npz). */
export type BlockSizeSource = 'layout' | 'option' | 'file' | 'detected' | 'none';

/** A system matrix as every command sees it. */
export interface LoadedSystem {
  /** The path as given. */
  path: string;
  csr: Csr;
  /** Block view of csr (bs = 1 when no block size is known); explicit zeros kept, missing entries stored as zeros. */
  bsr: Bsr;
  bs: number;
  blockSizeSource: BlockSizeSource;
  /** Scalar nonzeros / stored block entries (1 when every block is fully in the pattern). */
  fillRatio: number;
  layout?: Layout;
  /** Where the layout came from, when one was used. */
  layoutPath?: string;
  /** Block-row offsets of time slabs from the layout (first 0, last nBlockRows). */
  slabOffsets?: Int32Array;
  /** The layout's `modes` section (how each block is built from a hierarchical basis), when present. */
  modes?: ModalLayout;
  /** Pattern detection, when it was run (no layout and no --block-size). */
  detection?: BlockSizeDetection;
  header: MatrixMarketHeader;
}

export interface LoadOptions {
  /** Block size from the command line (`--block-size`). */
  blockSize?: number;
  /** Layout file to use instead of the sidecar `NAME.layout.json`. */
  layoutPath?: string;
  duplicates?: 'sum' | 'reject';
  /** Accept NaN and ±Inf entries (default: rejected with the line number). */
  allowNonFinite?: boolean;
}

/** Largest number of dense-block values we agree to allocate (Float64Array indexable by Int32). */
const MAX_BLOCK_VALUES = MAX_INT32_INDEX;

/**
 * The checks and block view of loadSystem on a matrix already in memory. Errors are one-line
 * UserErrors naming the matrix (and the layout file or option that supplied a bad value).
 */
export function systemFromMatrix(
  path: string, header: MatrixMarketHeader, csr: Csr,
  opts: { blockSize?: number; layout?: Layout; layoutPath?: string; fileBlockSize?: number } = {},
): LoadedSystem {
  if (header.object !== 'matrix') throw new UserError(`${path}: holds a vector, expected a matrix`);
  if (csr.nRows !== csr.nCols) throw new UserError(`${path}: matrix is ${csr.nRows}×${csr.nCols}, expected a square system matrix`);
  const n = csr.nRows;
  const { layout } = opts;
  const layoutName = opts.layoutPath ?? 'layout';
  if (opts.blockSize !== undefined && (!Number.isInteger(opts.blockSize) || opts.blockSize < 1)) {
    throw new UserError(`option --block-size: expected a positive integer, got ${opts.blockSize}`);
  }

  let bs = 1;
  let source: BlockSizeSource = 'none';
  let from = '';
  let detection: BlockSizeDetection | undefined;
  if (layout !== undefined) {
    if (!Number.isInteger(layout.blockSize) || layout.blockSize < 1) {
      throw new UserError(`${layoutName}: blockSize: expected a positive integer, got ${String(layout.blockSize)}`);
    }
    if (opts.blockSize !== undefined && opts.blockSize !== layout.blockSize) {
      throw new UserError(`option --block-size ${opts.blockSize} disagrees with ${layoutName} (blockSize ${layout.blockSize})`);
    }
    bs = layout.blockSize; source = 'layout'; from = ` (from ${layoutName})`;
  } else if (opts.blockSize !== undefined) {
    bs = opts.blockSize; source = 'option'; from = ' (from --block-size)';
  } else if (opts.fileBlockSize !== undefined && opts.fileBlockSize > 1) {
    bs = opts.fileBlockSize; source = 'file'; from = ' (the block size stored in the file)';
  } else {
    detection = detectBlockSize(csr);
    bs = detection.bs;
    source = bs > 1 ? 'detected' : 'none';
  }
  if (n % bs !== 0) throw new UserError(`${path}: block size ${bs}${from} does not divide the size ${n}`);

  const nBlocks = bsrBlockCount(csr, bs);
  if (nBlocks * bs * bs > MAX_BLOCK_VALUES) {
    const fill = csr.rowPtr[n] / (nBlocks * bs * bs);
    throw new UserError(
      `${path}: block size ${bs}${from} needs ${nBlocks * bs * bs} stored values (fill ratio ${fill.toPrecision(3)}), more than ${MAX_BLOCK_VALUES}`,
    );
  }
  const bsr = csrToBsr(csr, bs);
  const nnz = csr.rowPtr[n];
  const fillRatio = nBlocks === 0 ? 1 : nnz / (nBlocks * bs * bs);

  let slabOffsets: Int32Array | undefined;
  if (layout?.slabOffsets !== undefined) {
    const problem = slabOffsetsProblem(layout.slabOffsets, n / bs);
    if (problem !== undefined) throw new UserError(`${layoutName}: slabOffsets ${problem} (of ${path})`);
    slabOffsets = Int32Array.from(layout.slabOffsets);
  }

  const out: LoadedSystem = { path, csr, bsr, bs, blockSizeSource: source, fillRatio, header };
  if (layout !== undefined) { out.layout = layout; out.layoutPath = opts.layoutPath; }
  if (slabOffsets !== undefined) out.slabOffsets = slabOffsets;
  if (layout?.modes !== undefined) out.modes = layout.modes;
  if (detection !== undefined) out.detection = detection;
  return out;
}
