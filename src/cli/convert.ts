import type { Command } from 'commander';
import { basename } from 'node:path';
import type { Csr, Layout } from '../sparse/types.js';
import { readMatrixFile } from '../sparse/read-matrix.js';
import { fieldMajorToBlocks } from '../sparse/field-major.js';
import { writeMatrixMarket, readMatrixMarketVector, writeMatrixMarketVector } from '../sparse/matrix-market.js';
import { layoutPathFor, readLayout, readLayoutFor, writeLayout, checkLayoutFits } from '../sparse/layout.js';
import { permuteCsrBlocks, permuteVectorBlocks } from '../sparse/permute.js';
import { UserError, optionError } from '../util/errors.js';
import { VERSION } from '../version.js';
import {
  readPermutationFile, reversePermutation, shufflePermutation, permuteSlabOffsets, parseSeed,
} from './convert-permutation.js';

interface ConvertOptions {
  permute?: string;
  reverseBlocks?: boolean;
  shuffleBlocks?: number;
  blockSize?: number;
  /** Interleave a field-major numbering with this many fields into element blocks. */
  fields?: number;
  layout?: string;
  rhs?: string;
  rhsOut?: string;
  rejectDuplicates?: boolean;
  allowNonFinite?: boolean;
  json?: boolean;
}

function parseFields(v: string): number {
  if (!/^\d+$/.test(v.trim()) || Number(v) < 2) throw optionError('--fields', `expected an integer of at least 2 (the number of equations), got "${v}"`);
  return Number(v);
}

function parseBlockSize(v: string): number {
  if (!/^\d+$/.test(v.trim()) || Number(v) < 1) throw optionError('--block-size', `expected a positive integer, got "${v}"`);
  return Number(v);
}

/** Summary of one conversion (printed, or returned as JSON with --json). */
export interface ConvertSummary {
  input: string;
  output: string;
  nRows: number;
  nCols: number;
  nnz: number;
  sourceFormat: string;
  permutation?: string;
  layout?: string;
  slabOffsetsKept?: boolean;
  rhsOutput?: string;
  /** Set when --fields interleaved a field-major numbering. */
  interleaved?: { nFields: number; blockSize: number };
}

/** The work of `slabbench convert`, callable from tests and scripts. */
export async function convertMatrix(input: string, output: string, opts: ConvertOptions = {}): Promise<ConvertSummary> {
  const nPermOptions = [opts.permute !== undefined, opts.reverseBlocks === true, opts.shuffleBlocks !== undefined].filter(Boolean).length;
  if (nPermOptions > 1) throw optionError('--permute', 'use only one of --permute, --reverse-blocks and --shuffle-blocks');
  if ((opts.rhs === undefined) !== (opts.rhsOut === undefined)) throw optionError('--rhs', '--rhs and --rhs-out go together');

  const { header, csr, fileBlockSize } = await readMatrixFile(input, {
    duplicates: opts.rejectDuplicates ? 'reject' : 'sum',
    allowNonFinite: opts.allowNonFinite ?? false,
  });
  const layoutSource = opts.layout ?? layoutPathFor(input);
  const layout: Layout | undefined = opts.layout !== undefined ? readLayout(opts.layout) : readLayoutFor(input);
  if (layout !== undefined && opts.blockSize !== undefined && opts.blockSize !== layout.blockSize) {
    throw optionError('--block-size', `${opts.blockSize} disagrees with blockSize ${layout.blockSize} in ${layoutSource}`);
  }
  const bs = layout?.blockSize ?? opts.blockSize ?? fileBlockSize;
  if (layout !== undefined) checkLayoutFits(layout, csr.nRows, csr.nCols, layoutSource);

  let perm: Int32Array | undefined;
  let permDesc: string | undefined;
  if (nPermOptions === 1) {
    if (bs === undefined) {
      throw optionError(opts.permute !== undefined ? '--permute' : opts.reverseBlocks ? '--reverse-blocks' : '--shuffle-blocks',
        `needs a block size: give --block-size N or put a layout file beside ${input}`);
    }
    if (csr.nRows !== csr.nCols) throw new UserError(`${input}: a block permutation needs a square matrix, found ${csr.nRows}×${csr.nCols}`);
    if (csr.nRows % bs !== 0) throw optionError('--block-size', `${bs} does not divide the matrix size ${csr.nRows}`);
    const nb = csr.nRows / bs;
    if (opts.permute !== undefined) { perm = readPermutationFile(opts.permute, nb); permDesc = `block order from ${basename(opts.permute)}`; }
    else if (opts.reverseBlocks) { perm = reversePermutation(nb); permDesc = 'block rows reversed'; }
    else {
      perm = shufflePermutation(nb, opts.shuffleBlocks!, layout?.slabOffsets);
      permDesc = `block rows shuffled (seed ${opts.shuffleBlocks}${layout?.slabOffsets ? ', within slabs' : ''})`;
    }
  } else if (bs !== undefined && csr.nRows % bs !== 0) {
    throw optionError('--block-size', `${bs} does not divide the matrix size ${csr.nRows}`);
  }

  // --fields: scalar interleaving first (field-major → element blocks), then any block permutation
  let fieldPerm: Int32Array | undefined;
  let source = csr;
  if (opts.fields !== undefined) {
    if (bs === undefined) throw optionError('--fields', `needs the element block size: give --block-size N or put a layout file beside ${input}`);
    if (csr.nRows !== csr.nCols) throw new UserError(`${input}: interleaving fields needs a square matrix, found ${csr.nRows}×${csr.nCols}`);
    if (bs % opts.fields !== 0) throw optionError('--fields', `${opts.fields} fields do not divide the block size ${bs}`);
    if (csr.nRows % bs !== 0) throw optionError('--block-size', `${bs} does not divide the matrix size ${csr.nRows}`);
    fieldPerm = fieldMajorToBlocks(csr.nRows, bs, opts.fields);
    source = permuteCsrBlocks(csr, fieldPerm, 1);
    const what = `${opts.fields} fields interleaved into blocks of ${bs}`;
    permDesc = permDesc === undefined ? what : `${what}, then ${permDesc}`;
  }
  const out: Csr = perm !== undefined ? permuteCsrBlocks(source, perm, bs!) : source;
  const comments = [...header.comments, ` slabbench ${VERSION} convert: from ${basename(input)} (${header.format} ${header.field} ${header.symmetry})${permDesc ? `, ${permDesc}` : ''}`];
  await writeMatrixMarket(output, out, { comments });

  const summary: ConvertSummary = {
    input, output, nRows: out.nRows, nCols: out.nCols, nnz: out.rowPtr[out.nRows],
    sourceFormat: `${header.object} ${header.format} ${header.field} ${header.symmetry}`,
  };
  if (permDesc !== undefined) summary.permutation = permDesc;
  if (opts.fields !== undefined) summary.interleaved = { nFields: opts.fields, blockSize: bs! };

  if (bs !== undefined) {
    const { slabOffsets, provenance, centroids, ...rest } = layout ?? { blockSize: bs };
    let newCentroids = centroids;
    if (centroids !== undefined && perm !== undefined) {
      // one point per block row: it moves with its row
      const moved = new Float64Array(centroids.values.length);
      permuteVectorBlocks(Float64Array.from(centroids.values), perm, centroids.nCoordinates, moved);
      newCentroids = { nCoordinates: centroids.nCoordinates, values: Array.from(moved) };
    }
    let newOffsets = slabOffsets ? Array.from(slabOffsets) : undefined;
    if (newOffsets !== undefined && perm !== undefined) {
      newOffsets = permuteSlabOffsets(newOffsets, perm);
      summary.slabOffsetsKept = newOffsets !== undefined;
    }
    const prev = (provenance ?? {}) as Record<string, unknown>;
    const conversions = Array.isArray(prev.conversions) ? prev.conversions : [];
    const newLayout: Layout = {
      ...rest,
      blockSize: bs,
      ...(newOffsets !== undefined ? { slabOffsets: newOffsets } : {}),
      ...(newCentroids !== undefined ? { centroids: newCentroids } : {}),
      provenance: { ...prev, conversions: [...conversions, { from: basename(input), ...(permDesc ? { permutation: permDesc } : {}), slabbench: VERSION }] },
    };
    const layoutOut = layoutPathFor(output);
    writeLayout(layoutOut, newLayout);
    summary.layout = layoutOut;
  }

  if (opts.rhs !== undefined && opts.rhsOut !== undefined) {
    const b = await readMatrixMarketVector(opts.rhs, { allowNonFinite: opts.allowNonFinite ?? false });
    if (b.length !== csr.nRows) throw new UserError(`${opts.rhs}: right-hand side has length ${b.length}, expected ${csr.nRows} (rows of ${input})`);
    let bOut = b;
    if (fieldPerm !== undefined) {
      bOut = new Float64Array(b.length);
      permuteVectorBlocks(b, fieldPerm, 1, bOut);
    }
    if (perm !== undefined) {
      const bIn = bOut;
      bOut = new Float64Array(b.length);
      permuteVectorBlocks(bIn, perm, bs!, bOut);
    }
    await writeMatrixMarketVector(opts.rhsOut, bOut, { comments: [` slabbench ${VERSION} convert: from ${basename(opts.rhs)}${permDesc ? `, ${permDesc}` : ''}`] });
    summary.rhsOutput = opts.rhsOut;
  }
  return summary;
}

export function registerConvert(program: Command): void {
  program
    .command('convert')
    .description('Rewrite a Matrix Market file as coordinate real general (symmetry expanded), optionally with a block permutation.')
    .argument('<in>', 'matrix to read (.mtx or .mtx.gz, any field, symmetry or format slabbench reads; or a scipy.sparse .npz)')
    .argument('<out>', 'matrix to write (.mtx, or .mtx.gz to compress); its layout sidecar is written beside it')
    .option('--permute <file>', 'reorder block rows and columns: one 0-based OLD block row index per line, line i giving new block row i')
    .option('--reverse-blocks', 'reverse the block order (turns a downstream order into an upstream one)')
    .option('--shuffle-blocks <seed>', 'random block order from a seed; within each slab when the layout has slabs', parseSeed)
    .option('--block-size <n>', 'block size when IN has no layout (also recorded in OUT\'s layout)', parseBlockSize)
    .option('--fields <k>', 'IN numbers all unknowns of equation 1, then equation 2, …: interleave its K fields into element blocks (needs the block size)', parseFields)
    .option('--layout <file>', 'layout file to use instead of the sidecar beside IN')
    .option('--rhs <file>', 'right-hand side to carry along (permuted like the rows); needs --rhs-out')
    .option('--rhs-out <file>', 'where to write the right-hand side (n×1 array, readable by scipy)')
    .option('--reject-duplicates', 'fail on an entry given twice (default: duplicates are summed)')
    .option('--allow-non-finite', 'accept nan/inf values instead of failing')
    .option('--json', 'print a JSON summary (nothing else on stdout)')
    .addHelpText('after', `
Examples:
  $ slabbench convert tank.mtx.gz tank-general.mtx
  $ slabbench convert duct.mtx duct-upstream.mtx --reverse-blocks --rhs duct.rhs.mtx --rhs-out duct-upstream.rhs.mtx
  $ slabbench convert room.mtx room-shuffled.mtx.gz --shuffle-blocks 7
  $ slabbench convert corridor.mtx corridor-rcm.mtx --permute corridor.order.txt --block-size 10
  $ slabbench convert mine.mtx mine.mtx --block-size 6      # only attach a layout with blockSize 6
  $ slabbench convert jac.npz jac-blocks.mtx --block-size 12 --fields 4   # field-major → element blocks

A permutation acts on whole blocks (rows and columns alike), so the block size comes from
the layout beside IN (NAME.layout.json) or --block-size. The layout is rewritten beside OUT
with its slab offsets renumbered; a permutation that splits slabs drops them (reported).
Exit codes: 0 written, 2 unreadable or malformed input or bad option, 3 internal error.`)
    .action(async (input: string, output: string, opts: ConvertOptions) => {
      const s = await convertMatrix(input, output, opts);
      if (opts.json) {
        process.stdout.write(`${JSON.stringify(s, null, 2)}\n`);
        return;
      }
      let msg = `wrote ${s.output}: ${s.nRows}×${s.nCols}, ${s.nnz} entries, coordinate real general (from ${s.sourceFormat})`;
      if (s.permutation) msg += `; ${s.permutation}`;
      msg += '\n';
      if (s.layout) msg += `wrote ${s.layout}${s.slabOffsetsKept === false ? ' (the permutation mixes slabs: slabOffsets dropped)' : ''}\n`;
      if (s.rhsOutput) msg += `wrote ${s.rhsOutput}\n`;
      process.stdout.write(msg);
    });
}
