import type { Bsr, Centroids, Csr, Layout, ModalLayout } from './types.js';
import { MAX_INT32_INDEX } from './types.js';
import type { MatrixMarketHeader } from './matrix-market-header.js';
import { bsrBlockCount, bsrToCsr, csrToBsr } from './bsr.js';
import { blocksAreFull, bsrToCsrInPlace, csrAsPointBsr, csrToBsrInPlace, pointBsrAsCsr } from './convert-in-place.js';
import { detectBlockSize, slabOffsetsProblem, type BlockSizeDetection } from './structure.js';
import { UserError } from '../util/errors.js';
import { centroidsProblem } from './layout.js';

/** 'file': the matrix file itself stores square blocks (a scipy bsr .npz). */
export type BlockSizeSource = 'layout' | 'option' | 'file' | 'detected' | 'none';

export type MatrixFormat = 'csr' | 'bsr';

/**
 * The matrix in whichever of its two storage formats are held right now. Reading `csr` or `bsr`
 * returns the held one, or builds the missing one (a copy, then both are held): a component that
 * asks for a format gets it. `keepOnly(format)` converts to the one format a solve needs and lets
 * the other go; with all stored blocks full (fill ratio 1, every generated case) the conversion
 * reorders the one value array in place (src/sparse/convert-in-place.ts), so the matrix is never
 * held twice. A CSR with partially filled blocks is kept beside its BSR view unless the caller says
 * it is the last use (`lastUse`): expanding BSR back would add the missing entries to the pattern.
 */
export interface MatrixStore {
  /** Scalar rows = columns. */
  readonly n: number;
  /** Scalar entries of the pattern as read (explicit zeros included). */
  readonly nnz: number;
  /** Scalar CSR as read (point methods use this pattern). */
  readonly csr: Csr;
  /** Block view (bs = 1 when no block size is known); explicit zeros kept, missing entries stored as zeros. */
  readonly bsr: Bsr;
  readonly bs: number;
  /** Formats held now. */
  held(): { csr: boolean; bsr: boolean };
  /** Hold `format` only (built if missing). lastUse: the other format will not be asked for again. */
  keepOnly(format: MatrixFormat, opts?: { lastUse?: boolean }): void;
  /** Bytes of every array held, by name; arrays shared by both views counted once. */
  heldBytes(): Record<string, number>;
  /** The block structure (rowPtr, colInd of the BSR view) without building the block values. */
  blockStructure(): Bsr;
}

/** A system matrix as every command sees it. */
export interface LoadedSystem extends MatrixStore {
  /** The path as given. */
  path: string;
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
  /** The layout's `centroids` (one point per block row), when present. */
  centroids?: Centroids;
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
  const nnz = csr.rowPtr[n];
  const fillRatio = nBlocks === 0 ? 1 : nnz / (nBlocks * bs * bs);

  let slabOffsets: Int32Array | undefined;
  if (layout?.slabOffsets !== undefined) {
    const problem = slabOffsetsProblem(layout.slabOffsets, n / bs);
    if (problem !== undefined) throw new UserError(`${layoutName}: slabOffsets ${problem} (of ${path})`);
    slabOffsets = Int32Array.from(layout.slabOffsets);
  }
  let centroids: Centroids | undefined;
  if (layout?.centroids !== undefined) {
    const problem = centroidsProblem(layout.centroids, n / bs);
    if (problem !== undefined) throw new UserError(`${layoutName}: ${problem} (of ${path})`);
    centroids = { nCoordinates: layout.centroids.nCoordinates, values: Float64Array.from(layout.centroids.values) };
  }

  const store = matrixStore(csr, bs, nBlocks);
  const out = Object.assign(store, { path, blockSizeSource: source, fillRatio, header }) as LoadedSystem;
  if (layout !== undefined) { out.layout = layout; out.layoutPath = opts.layoutPath; }
  if (slabOffsets !== undefined) out.slabOffsets = slabOffsets;
  if (layout?.modes !== undefined) out.modes = layout.modes;
  if (centroids !== undefined) out.centroids = centroids;
  if (detection !== undefined) out.detection = detection;
  return out;
}

/**
 * A MatrixStore over a CSR matrix (see MatrixStore). The accessors are own enumerable properties,
 * so spreading the store copies both views (building the missing one) rather than losing them.
 */
export function matrixStore(csr0: Csr, bs: number, nBlocks: number = bsrBlockCount(csr0, bs)): MatrixStore {
  const n = csr0.nRows;
  const nnz = csr0.rowPtr[n];
  const full = blocksAreFull(csr0, bs, nBlocks);
  let csr: Csr | undefined = csr0;
  let bsr: Bsr | undefined;

  const getCsr = (): Csr => {
    if (csr) return csr;
    if (bs === 1) csr = pointBsrAsCsr(bsr!);
    else if (full) csr = bsrToCsr(bsr!);
    else throw new Error('internal: the CSR pattern of a matrix with partially filled blocks was released as last use and asked for again');
    return csr;
  };
  const getBsr = (): Bsr => {
    if (bsr) return bsr;
    bsr = bs === 1 ? csrAsPointBsr(csr!) : csrToBsr(csr!, bs);
    return bsr;
  };
  const store = {
    n, nnz, bs,
    held: () => ({ csr: csr !== undefined, bsr: bsr !== undefined }),
    keepOnly(format: MatrixFormat, opts: { lastUse?: boolean } = {}): void {
      if (format === 'bsr') {
        if (!bsr) {
          if (bs === 1) bsr = csrAsPointBsr(csr!);
          else if (full) { bsr = csrToBsrInPlace(csr!, bs); csr = undefined; }
          else bsr = csrToBsr(csr!, bs);
        }
        if (csr && bs !== 1 && (full || opts.lastUse)) csr = undefined;
      } else {
        if (!csr) {
          if (bs === 1) csr = pointBsrAsCsr(bsr!);
          else if (full) { csr = bsrToCsrInPlace(bsr!); bsr = undefined; }
          else getCsr(); // throws: a partially filled CSR is only released as last use
        }
        if (bsr && bs !== 1) bsr = undefined;
      }
    },
    heldBytes(): Record<string, number> {
      const out: Record<string, number> = {};
      const seen = new Set<object>();
      const both = csr !== undefined && bsr !== undefined && bs !== 1;
      const add = (m: Csr | Bsr, prefix: string): void => {
        for (const [name, arr] of [['rowPtr', m.rowPtr], ['colInd', m.colInd], ['values', m.values]] as const) {
          if (seen.has(arr)) continue;
          seen.add(arr);
          out[prefix + name] = arr.byteLength;
        }
      };
      if (bsr) add(bsr, both ? 'bsr ' : '');
      if (csr) add(csr, both ? 'csr ' : '');
      return out;
    },
    blockStructure(): Bsr {
      if (bsr) return bsr;
      if (bs === 1) return getBsr();
      const c = csr!;
      const nb = n / bs;
      const rowPtr = new Int32Array(nb + 1);
      const colInd = new Int32Array(nBlocks);
      const marker = new Int32Array(nb).fill(-1);
      let p = 0;
      for (let I = 0; I < nb; I++) {
        const start = p;
        for (let i = I * bs; i < (I + 1) * bs; i++) {
          for (let k = c.rowPtr[i]; k < c.rowPtr[i + 1]; k++) {
            const J = (c.colInd[k] / bs) | 0;
            if (marker[J] !== I) { marker[J] = I; colInd[p++] = J; }
          }
        }
        colInd.subarray(start, p).sort();
        rowPtr[I + 1] = p;
      }
      return { nBlockRows: nb, nBlockCols: nb, bs, rowPtr, colInd, values: new Float64Array(0) };
    },
  };
  // setters: the kernel plan (src/solvers/kernel-plan.ts) replaces the held arrays by copies in
  // WebAssembly memory; the store then holds those (and counts them) instead
  Object.defineProperty(store, 'csr', { get: getCsr, set: (v: Csr) => { csr = v; }, enumerable: true });
  Object.defineProperty(store, 'bsr', { get: getBsr, set: (v: Bsr) => { bsr = v; }, enumerable: true });
  return store as unknown as MatrixStore;
}

/** True for a MatrixStore (a loaded system), false for a plain { csr, bsr } object. */
export function isMatrixStore(m: object): m is MatrixStore {
  return typeof (m as Partial<MatrixStore>).keepOnly === 'function';
}
