import type { LoadedSystem, BlockSizeSource } from '../sparse/system.js';
import { csrMemory } from '../sparse/csr.js';
import { bsrMemory } from '../sparse/bsr.js';
import {
  blockDiagonalDominance, blocksAboveSlabDiagonal, blocksPerRow, detectBlockSize, nonzeroBlockPattern, stronglyConnectedBlocks,
  symmetryInfo, triangularStructure, zeroBlocks, type BlockDominance, type BlockSizeDetection, type TriangularStructure,
} from '../sparse/structure.js';
import { detectFieldMajor, type FieldMajorDetection } from '../sparse/field-major.js';
import { formatBytesDetailed, formatNumber, jsonNonFiniteAsNull } from '../report/format.js';

/** Everything `inspect` reports; `--json` prints exactly this (non-finite numbers as null). */
export interface InspectReport {
  file: string;
  format: { object: string; format: string; field: string; symmetry: string };
  nRows: number;
  nCols: number;
  nnz: number;
  /** Stored entries whose value is exactly 0 (they stay in the pattern). */
  explicitZeros: number;
  symmetry: { patternSymmetric: boolean; numericallySymmetric: boolean; maxAsymmetry: number };
  blockSize: {
    bs: number;
    source: BlockSizeSource;
    layoutFile: string | null;
    fillRatio: number;
    /** What pattern detection finds, whatever the source of bs. */
    detected: BlockSizeDetection;
  };
  /**
   * Set when the block size is known (layout, --block-size or the file) and the pattern looks
   * field-major (all unknowns of equation 1, then equation 2, …): `convert --fields K` interleaves it.
   */
  fieldMajor: FieldMajorDetection | null;
  blocks: { nBlockRows: number; nBlocks: number; perRow: { min: number; mean: number; max: number } };
  dominance: BlockDominance;
  /** From the layout's slabOffsets; null without them. */
  slabs: { nSlabs: number; minBlockRows: number; maxBlockRows: number; blocksAboveSlabDiagonal: number; blockLowerTriangular: boolean } | null;
  /** Strongly connected components of the stored block pattern (every stored block is an edge). */
  components: { nComponents: number; largestBlockRows: number; givenOrderBlockLowerTriangular: boolean; triangularUnderPermutation: boolean };
  /**
   * The numerically nonzero block pattern: stored blocks that hold only zeros left out (upwind DG
   * stores the outflow neighbour's block, which exact upwinding makes zero). Components and
   * triangularity as for `components`, on this pattern.
   */
  nonzeroPattern: {
    nBlocks: number;
    zeroBlocks: number;
    /** zeroBlocks / stored blocks (0 when nothing is stored). */
    zeroBlockShare: number;
    zeroDiagonalBlocks: number;
    nComponents: number;
    largestBlockRows: number;
    givenOrderBlockLowerTriangular: boolean;
    triangularUnderPermutation: boolean;
  };
  storage: { csr: Record<string, number>; bsr: Record<string, number>; csrBytes: number; bsrBytes: number };
  /** The layout's elementQuality (mesh aspect ratios and smallest det J); null without one. */
  elementQuality: { aspectRatio: { min: number; median: number; max: number }; minJacobianDeterminant: number } | null;
}

function sum(r: Record<string, number>): number {
  return Object.values(r).reduce((a, b) => a + b, 0);
}

export function buildInspectReport(sys: LoadedSystem): InspectReport {
  const { csr, bsr, header } = sys;
  const nnz = csr.rowPtr[csr.nRows];
  let explicitZeros = 0;
  for (let k = 0; k < nnz; k++) if (csr.values[k] === 0) explicitZeros++;
  const sym = symmetryInfo(csr);
  const comps = stronglyConnectedBlocks(bsr);
  const zeros = zeroBlocks(bsr);
  const nonzero: TriangularStructure = triangularStructure(nonzeroBlockPattern(bsr));
  const nBlocks = bsr.rowPtr[bsr.nBlockRows];
  let slabs: InspectReport['slabs'] = null;
  if (sys.slabOffsets !== undefined) {
    const off = sys.slabOffsets;
    let minRows = Number.POSITIVE_INFINITY, maxRows = 0;
    for (let s = 0; s + 1 < off.length; s++) {
      const len = off[s + 1] - off[s];
      if (len < minRows) minRows = len;
      if (len > maxRows) maxRows = len;
    }
    const above = blocksAboveSlabDiagonal(bsr, off);
    slabs = { nSlabs: off.length - 1, minBlockRows: minRows, maxBlockRows: maxRows, blocksAboveSlabDiagonal: above, blockLowerTriangular: above === 0 };
  }
  const csrBuf = csrMemory(csr);
  const bsrBuf = bsrMemory(bsr);
  return {
    file: sys.path,
    format: { object: header.object, format: header.format, field: header.field, symmetry: header.symmetry },
    nRows: csr.nRows,
    nCols: csr.nCols,
    nnz,
    explicitZeros,
    symmetry: { patternSymmetric: sym.patternSymmetric, numericallySymmetric: sym.maxAsymmetry === 0, maxAsymmetry: sym.maxAsymmetry },
    blockSize: {
      bs: sys.bs,
      source: sys.blockSizeSource,
      layoutFile: sys.layoutPath ?? null,
      fillRatio: sys.fillRatio,
      detected: sys.detection ?? detectBlockSize(csr),
    },
    fieldMajor: sys.blockSizeSource === 'layout' || sys.blockSizeSource === 'option' || sys.blockSizeSource === 'file'
      ? detectFieldMajor(csr, sys.bs) ?? null : null,
    blocks: { nBlockRows: bsr.nBlockRows, nBlocks: bsr.rowPtr[bsr.nBlockRows], perRow: blocksPerRow(bsr) },
    dominance: blockDiagonalDominance(bsr),
    slabs,
    components: {
      nComponents: comps.nComponents,
      largestBlockRows: comps.largestComponent,
      givenOrderBlockLowerTriangular: comps.isBlockLowerTriangular,
      triangularUnderPermutation: bsr.nBlockRows === 0 || comps.largestComponent === 1,
    },
    nonzeroPattern: {
      nBlocks: nBlocks - zeros.zeroBlocks,
      zeroBlocks: zeros.zeroBlocks,
      zeroBlockShare: nBlocks > 0 ? zeros.zeroBlocks / nBlocks : 0,
      zeroDiagonalBlocks: zeros.zeroDiagonalBlocks,
      nComponents: nonzero.nComponents,
      largestBlockRows: nonzero.largestComponent,
      givenOrderBlockLowerTriangular: nonzero.givenOrderBlockLowerTriangular,
      triangularUnderPermutation: nonzero.triangularUnderPermutation,
    },
    storage: { csr: csrBuf, bsr: bsrBuf, csrBytes: sum(csrBuf), bsrBytes: sum(bsrBuf) },
    elementQuality: sys.layout?.elementQuality ?? null,
  };
}

/** JSON with NaN/±Infinity as null, so the output parses anywhere. */
export function inspectReportJson(r: InspectReport): string {
  return jsonNonFiniteAsNull(r);
}

const bytes = formatBytesDetailed;

const num = (x: number, digits = 3): string => formatNumber(x, digits, 'n/a');

function plural(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** One pattern's component line: count, largest, triangular as given / under a permutation. */
function componentText(nComponents: number, largest: number, given: boolean, underPermutation: boolean): string {
  const base = `${plural(nComponents, 'strongly connected component')}, largest ${plural(largest, 'block row')}; `;
  if (given && underPermutation) return `${base}block lower triangular as given: one block forward sweep solves it`;
  if (underPermutation) return `${base}block triangular under a permutation (every component one block row): one block sweep in component order solves it`;
  return `${base}given order ${given ? 'is' : 'is not'} block lower triangular by components`;
}

function buffers(total: number, parts: Record<string, number>): string {
  return `${bytes(total)} (${Object.entries(parts).map(([k, v]) => `${k} ${bytes(v)}`).join(', ')})`;
}

/** Human-readable report, one fact per line. */
export function formatInspectReport(r: InspectReport): string {
  const lines: string[] = [r.file];
  const row = (label: string, text: string): void => { lines.push(`  ${label.padEnd(18)}${text}`); };
  row('size', `${r.nRows} × ${r.nCols}, ${r.nnz} nonzeros (${r.explicitZeros} explicit zeros)`);
  row('stored as', `${r.format.format} ${r.format.field} ${r.format.symmetry}`);
  const s = r.symmetry;
  row('symmetry', s.numericallySymmetric
    ? 'symmetric'
    : `not symmetric (pattern ${s.patternSymmetric ? 'symmetric' : 'not symmetric'}; max |a_ij − a_ji| / max |a_ij| = ${num(s.maxAsymmetry)})`);
  const b = r.blockSize;
  const source = b.source === 'layout' ? `from layout ${b.layoutFile}`
    : b.source === 'option' ? 'from --block-size'
      : b.source === 'file' ? 'stored in the file (bsr blocks)'
      : b.source === 'detected' ? 'detected from the pattern' : 'no blocks found (scalar)';
  const det = b.detected;
  const detText = b.source === 'detected' || b.source === 'none' ? ''
    : `; pattern detection gives ${det.bs}`;
  const partial = det.bestPartial ? `; best partial fill: bs ${det.bestPartial.bs} at ${num(det.bestPartial.fillRatio, 4)}` : '';
  row('block size', `${b.bs} ${source}, fill ratio ${num(b.fillRatio, 4)}${detText}${partial}`);
  if (r.fieldMajor !== null) {
    const f = r.fieldMajor;
    row('numbering', `looks field-major with ${f.nFields} fields (all unknowns of one equation, then the next): blocks fill ${num(f.fillRatioAsGiven, 3)} as given, ${num(f.fillRatioInterleaved, 3)} interleaved; rewrite with convert --fields ${f.nFields}`);
  }
  const p = r.blocks.perRow;
  row('blocks', `${plural(r.blocks.nBlockRows, 'block row')}, ${plural(r.blocks.nBlocks, 'block')}; per block row min ${p.min}, mean ${num(p.mean)}, max ${p.max}`);
  const d = r.dominance;
  row('block dominance', `ρ_I = ‖A_II⁻¹‖∞·Σ_J≠I ‖A_IJ‖∞: max ${num(d.max)}, mean ${num(d.mean)}; `
    + `${d.nDominant} of ${r.blocks.nBlockRows} block rows dominant (ρ < 1)`
    + (d.nSingular > 0 ? `; ${d.nSingular} with a missing or singular diagonal block` : ''));
  if (r.slabs) {
    const sl = r.slabs;
    const sizes = sl.minBlockRows === sl.maxBlockRows ? `${sl.minBlockRows}` : `${sl.minBlockRows}–${sl.maxBlockRows}`;
    row('slabs (layout)', `${plural(sl.nSlabs, 'slab')} of ${sizes} block rows; `
      + (sl.blockLowerTriangular ? 'no block above the slab diagonal' : `${plural(sl.blocksAboveSlabDiagonal, 'block')} above the slab diagonal`));
  } else {
    row('slabs (layout)', 'none (no layout with slabOffsets)');
  }
  const c = r.components;
  const z = r.nonzeroPattern;
  row('zero blocks', z.zeroBlocks === 0 ? 'none: every stored block holds a nonzero'
    : `${plural(z.zeroBlocks, 'stored block')} of ${r.blocks.nBlocks} (${num(100 * z.zeroBlockShare)} %) hold only zeros`
      + (z.zeroDiagonalBlocks > 0 ? `, ${plural(z.zeroDiagonalBlocks, 'of them a diagonal block', 'of them diagonal blocks')}` : ''));
  row('components', `stored pattern: ${componentText(c.nComponents, c.largestBlockRows, c.givenOrderBlockLowerTriangular, c.triangularUnderPermutation)}`);
  row('', z.zeroBlocks === 0 ? 'nonzero pattern: the same (no zero blocks)'
    : `nonzero pattern: ${componentText(z.nComponents, z.largestBlockRows, z.givenOrderBlockLowerTriangular, z.triangularUnderPermutation)}`);
  if (r.elementQuality !== null) {
    const q = r.elementQuality;
    row('elements (layout)', `aspect ratio min ${num(q.aspectRatio.min)}, median ${num(q.aspectRatio.median)}, max ${num(q.aspectRatio.max)} `
      + `(longest edge / smallest altitude, regular simplex = 1); smallest det J ${num(q.minJacobianDeterminant)}`);
  }
  const st = r.storage;
  row('storage CSR', buffers(st.csrBytes, st.csr));
  row('storage BSR', `${buffers(st.bsrBytes, st.bsr)}; BSR/CSR ${num(st.bsrBytes / st.csrBytes)}`);
  return lines.join('\n');
}

