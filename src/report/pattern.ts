import type { Bsr } from '../sparse/types.js';
import type { BlockPattern } from '../run/results-types.js';

export const DEFAULT_PATTERN_CELLS = 96;

/**
 * Coarse picture of where the stored blocks sit: a cells×cells grid over the block matrix, each
 * cell counting the stored blocks whose (block row, block column) falls inside it. Rows and
 * columns use the same number of block rows per cell, so the grid stays square for square
 * matrices and the diagonal stays the diagonal. Counts sum to the number of stored blocks.
 */
export function blockPattern(bsr: Bsr, slabOffsets: Int32Array | undefined, cells: number = DEFAULT_PATTERN_CELLS): BlockPattern {
  if (!Number.isInteger(cells) || cells < 1) throw new RangeError(`blockPattern: cells must be a positive integer, got ${cells}`);
  const { nBlockRows, nBlockCols, rowPtr, colInd } = bsr;
  const nMax = Math.max(nBlockRows, nBlockCols, 1);
  const blockRowsPerCell = Math.ceil(nMax / Math.min(cells, nMax));
  const nCells = Math.ceil(nMax / blockRowsPerCell);
  const counts = new Float64Array(nCells * nCells);
  for (let I = 0; I < nBlockRows; I++) {
    const rowCell = Math.floor(I / blockRowsPerCell) * nCells;
    const end = rowPtr[I + 1];
    for (let k = rowPtr[I]; k < end; k++) counts[rowCell + Math.floor(colInd[k] / blockRowsPerCell)]++;
  }
  let offsets: number[];
  if (slabOffsets && slabOffsets.length >= 2) {
    if (slabOffsets[0] !== 0 || slabOffsets[slabOffsets.length - 1] !== nBlockRows) {
      throw new RangeError(`blockPattern: slab offsets must run from 0 to ${nBlockRows}`);
    }
    offsets = Array.from(slabOffsets);
  } else {
    offsets = [0, nBlockRows];
  }
  return { cells: nCells, counts: Array.from(counts), blockRowsPerCell, slabOffsets: offsets, nBlockRows };
}
