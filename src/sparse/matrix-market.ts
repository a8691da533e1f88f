/**
 * Matrix Market I/O (Boisvert, Pozo & Remington, "The Matrix Market Exchange Formats: Initial
 * Design", NISTIR 5935, 1996): streaming reader and atomic writer. See matrix-market-read.ts and
 * matrix-market-write.ts; README "Reading your own matrices" documents the accepted input.
 */
export type { MatrixMarketHeader } from './matrix-market-header.js';
export {
  readMatrixMarket, readMatrixMarketVector, readMatrixMarketColumns, readMatrixMarketFrom, defaultReadLimitBytes, type ByteSource,
  type ReadMatrixMarketOptions, type MatrixMarketFile,
} from './matrix-market-read.js';
export {
  writeMatrixMarket, writeMatrixMarketVector, writeMatrixMarketColumns, formatValue,
  type WriteMatrixMarketOptions, type WriteVectorOptions,
} from './matrix-market-write.js';
