import type { Command } from 'commander';
import { optionError, UserError } from '../util/errors.js';
import {
  estimateMemory, ESTIMATE_KRYLOV, ESTIMATE_PRECONDITIONERS, peakBytes, type EstimateInput, type MemoryEstimate,
} from '../run/estimate.js';
import { formatBytes, formatCount } from '../report/format.js';
import { estimateMatrix, isRefused, VARIABLE_BY_DEFAULT, type MatrixEstimate } from '../run/estimate-pattern.js';
import { loadSystem } from '../sparse/load.js';
import { preconditionerNames } from '../precond/registry.js';

function intOption(option: string, min: number, max: number) {
  return (v: string): number => {
    const s = v.trim().replace(/_/g, '');
    // Accept 1e6 style for big counts, but only when it is an integer.
    const n = /^\d+(\.\d+)?(e\d+)?$/i.test(s) ? Number(s) : NaN;
    if (!Number.isSafeInteger(n) || n < min || n > max) {
      throw optionError(option, `expected an integer from ${min} to ${formatCount(max)}, got "${v}"`);
    }
    return n;
  };
}

function cellsOption(v: string): number[] {
  const parse = intOption('--cells', 1, 1_000_000);
  return v.split(',').map((part) => parse(part));
}

interface EstimateCliOptions {
  dim?: number;
  order?: number;
  equations: number;
  elements?: number;
  cells?: number[];
  layers?: number;
  periodic?: boolean;
  slabs: number;
  restart: number;
  deflate?: number;
  blocks?: number;
  json?: boolean;
  layout?: string;
  blockSize?: number;
}

/** The CLI options as an EstimateInput, with the cross-option rules checked. */
export function estimateInputFromOptions(o: EstimateCliOptions): EstimateInput {
  if (o.layout !== undefined || o.blockSize !== undefined) throw optionError(o.layout !== undefined ? '--layout' : '--block-size', 'describes a matrix file; give the file (slabbench estimate FILE) or the mesh sizes, not both');
  if (o.dim === undefined || o.order === undefined) {
    throw new UserError('estimate: give a matrix file (slabbench estimate FILE), or the mesh sizes with --dim d and --order p');
  }
  if ((o.elements === undefined) === (o.cells === undefined)) {
    throw new UserError('estimate: give the mesh size as --elements N (total space-time elements) or --cells C (cells per space direction)');
  }
  if (o.elements !== undefined && (o.layers !== undefined || o.periodic)) {
    throw optionError(o.layers !== undefined ? '--layers' : '--periodic', 'describes the structured mesh; use it with --cells, not --elements');
  }
  if (o.elements !== undefined && o.elements < o.slabs) throw optionError('--elements', `expected at least one element per slab (${o.slabs} slabs), got ${o.elements}`);
  if (o.cells !== undefined && o.cells.length !== 1 && o.cells.length !== o.dim) {
    throw optionError('--cells', `expected one count or ${o.dim} comma-separated counts (one per space axis), got ${o.cells.length}`);
  }
  const input: EstimateInput = {
    spaceDim: o.dim as 1 | 2 | 3, order: o.order, equations: o.equations, slabs: o.slabs, restart: o.restart,
    ...(o.deflate !== undefined ? { deflate: o.deflate } : {}),
    ...(o.elements !== undefined ? { elements: o.elements } : { cells: o.cells!.length === 1 ? o.cells![0] : o.cells!, layersPerSlab: o.layers ?? 1, periodic: o.periodic === true }),
  };
  if (o.blocks === undefined) return input;
  const elements = estimateMemory(input).allAtOnce.elements;
  if (o.blocks < elements) {
    throw optionError('--blocks', `expected at least one block per element (${formatCount(elements)}), got ${formatCount(o.blocks)}`);
  }
  return { ...input, blocks: o.blocks };
}

const SOURCE_NOTE: Record<MemoryEstimate['blockCountSource'], string> = {
  exact: 'exact count from --blocks (one slab: its share)',
  'structured-mesh': 'counted on the structured Kuhn mesh of `slabbench generate`',
  'upper-bound': 'an upper bound (every face of every element counted as interior); --cells or --blocks give an exact count',
};

/** Human-readable table: all-at-once beside one slab. */
export function renderEstimate(e: MemoryEstimate): string {
  const a = e.allAtOnce, s = e.slab;
  const rows: Array<[string, string, string] | null> = [];
  const bytes = (label: string, x: number, y: number): void => { rows.push([label, formatBytes(x), formatBytes(y)]); };
  rows.push(['elements', formatCount(a.elements), formatCount(s.elements)]);
  rows.push(['unknowns', formatCount(a.unknowns), formatCount(s.unknowns)]);
  rows.push(['stored blocks', formatCount(a.blocks), formatCount(s.blocks)]);
  rows.push(null);
  bytes('Jacobian (BSR)', a.jacobian.total, s.jacobian.total);
  bytes('  values', a.jacobian.values, s.jacobian.values);
  bytes('  indices', a.jacobian.indices, s.jacobian.indices);
  bytes('Jacobian (CSR, for jacobi, ilu0)', a.jacobianCsr.total, s.jacobianCsr.total);
  rows.push(['preconditioner', '', '']);
  for (const p of ESTIMATE_PRECONDITIONERS) {
    if (p === 'none' || a.preconditioners[p] === undefined) continue; // block-iluk: needs its fill pattern's block count
    // the slab preconditioner is itself the one-slab-at-a-time strategy: no one-slab figure of its own
    if (p === 'slab') rows.push([`  ${p} (one slab at a time)`, formatBytes(a.preconditioners[p].total), '—']);
    else {
      const one = s.preconditioners[p];
      rows.push([`  ${p}`, formatBytes(a.preconditioners[p]!.total), one ? formatBytes(one.total) : '—']);
    }
  }
  for (const p of Object.keys(a.notProjected)) rows.push([`  ${p}`, '—', '—']);
  rows.push([`Krylov basis (restart ${e.restart}, reserved)`, '', '']);
  for (const k of ESTIMATE_KRYLOV) bytes(`  ${k}${k === 'gmres-dr' || k === 'gcro-dr' ? ` (deflate ${e.deflate})` : ''}`, a.krylov[k], s.krylov[k]);
  rows.push(null);
  bytes('Jacobian + block-ilu0 + gmres', peakBytes(a, 'block-ilu0', 'gmres'), peakBytes(s, 'block-ilu0', 'gmres'));
  bytes('Jacobian + block-jacobi + gmres', peakBytes(a, 'block-jacobi', 'gmres'), peakBytes(s, 'block-jacobi', 'gmres'));
  bytes('Jacobian (CSR) + ilu0 + gmres', peakBytes(a, 'ilu0', 'gmres'), peakBytes(s, 'ilu0', 'gmres'));

  const heads: [string, string, string] = ['', 'all at once', `one slab (of ${e.slabs})`];
  const w0 = Math.max(...rows.map((r) => (r ? r[0].length : 0)));
  const w1 = Math.max(heads[1].length, ...rows.map((r) => (r ? r[1].length : 0)));
  const w2 = Math.max(heads[2].length, ...rows.map((r) => (r ? r[2].length : 0)));
  const line = (r: [string, string, string]): string => `  ${r[0].padEnd(w0)}  ${r[1].padStart(w1)}  ${r[2].padStart(w2)}`.trimEnd();
  const out = [
    `space-time DG memory estimate: ${e.spaceDim}D+t, order p = ${e.order}, ${e.equations} equation${e.equations === 1 ? '' : 's'}`,
    `  ${e.nBasis} basis functions per element, blocks of ${e.bs}×${e.bs} (${formatBytes(e.bs * e.bs * 8)} each)`,
    `  block count: ${SOURCE_NOTE[e.blockCountSource]}`,
    '',
    line(heads),
    ...rows.map((r) => (r ? line(r) : '')),
    '',
    '  Slab by slab holds one slab\'s Jacobian, factors and basis at a time (plus the solution vectors).',
    ...Object.entries(a.notProjected).map(([p, why]) => `  ${p}: not projected from mesh sizes: ${why}.`),
  ];
  return `${out.join('\n')}\n`;
}

/** Options that describe mesh sizes, refused beside a matrix file. */
const MESH_OPTIONS: Array<[keyof EstimateCliOptions, string]> = [
  ['dim', '--dim'], ['order', '--order'], ['elements', '--elements'], ['cells', '--cells'], ['layers', '--layers'],
  ['periodic', '--periodic'], ['slabs', '--slabs'], ['blocks', '--blocks'],
];

/** Human-readable table of a matrix file's projection: one line per registered preconditioner. */
export function renderMatrixEstimate(file: string, e: MatrixEstimate): string {
  const rows: Array<[string, string, string]> = [];
  const refused: string[] = [];
  const measured: string[] = [];
  for (const [name, p] of Object.entries(e.preconditioners)) {
    if (isRefused(p)) { rows.push([`  ${name}`, 'not projected', '']); refused.push(`  ${p.refused.startsWith(`${name}`) ? p.refused : `${name}: ${p.refused}`}`); continue; }
    const matrix = name === 'jacobi' || name === 'ilu0' ? e.jacobian.csr : e.jacobian.bsr;
    const krylov = VARIABLE_BY_DEFAULT.has(name) ? e.krylov.fgmres : e.krylov.gmres;
    rows.push([`  ${name}${p.source === 'measured by setup' ? ' (measured by setup)' : ''}`, formatBytes(p.total), formatBytes(matrix + p.total + krylov)]);
    if (p.source === 'measured by setup') measured.push(name);
  }
  const w0 = Math.max(...rows.map((r) => r[0].length), 'preconditioner'.length + 2);
  const w1 = Math.max(...rows.map((r) => r[1].length), 'bytes'.length);
  const line = (r: [string, string, string]): string => `${r[0].padEnd(w0)}  ${r[1].padStart(w1)}  ${r[2]}`.trimEnd();
  const out = [
    `memory estimate for ${file}: n = ${formatCount(e.n)}, ${formatCount(e.blockRows)} block rows of ${e.bs}, ${formatCount(e.blocks)} stored blocks${e.slabs !== undefined ? `, ${e.slabs} slabs` : ''}`,
    `  Jacobian: BSR ${formatBytes(e.jacobian.bsr)}, CSR ${formatBytes(e.jacobian.csr)} (a solve holds CSR with jacobi and ilu0, BSR otherwise)`,
    `  Krylov basis (restart ${e.restart}, reserved): gmres ${formatBytes(e.krylov.gmres)}, fgmres ${formatBytes(e.krylov.fgmres)}, bicgstab ${formatBytes(e.krylov.bicgstab)}`,
    `    deflated (deflate ${e.deflate}): gmres-dr ${formatBytes(e.krylov['gmres-dr'])}, gcro-dr ${formatBytes(e.krylov['gcro-dr'])}`,
    '',
    line(['  preconditioner', 'bytes', 'with Jacobian and Krylov basis (fgmres for slab, p-multigrid; else gmres)']),
    ...rows.map(line),
    '',
    '  Default options; counted from the block pattern, the slab offsets and the layout\'s modes (equal to what solve reports).',
    ...(measured.length ? [`  ${measured.join(', ')}: the setup was run on the matrix and its kept bytes measured (its levels depend on the values).`] : []),
    ...refused,
  ];
  return `${out.join('\n')}\n`;
}

async function runMatrixEstimate(file: string, opts: EstimateCliOptions): Promise<void> {
  for (const [key, flag] of MESH_OPTIONS) {
    if (opts[key] !== undefined) throw optionError(flag, 'describes mesh sizes; a matrix file gives them (use one or the other)');
  }
  const sys = await loadSystem(file, { blockSize: opts.blockSize, layoutPath: opts.layout });
  const e = estimateMatrix(sys, preconditionerNames(), opts.restart, sys, opts.deflate);
  process.stdout.write(opts.json ? `${JSON.stringify(e, null, 2)}\n` : renderMatrixEstimate(file, e));
}

export function registerEstimate(program: Command): void {
  program
    .command('estimate')
    .description('Project the memory of a space-time DG solve: Jacobian, preconditioner factors, Krylov basis; all at once vs slab by slab')
    .argument('[matrix]', 'a matrix file (.mtx, .mtx.gz, .npz) with its layout: project every preconditioner on its pattern instead of from mesh sizes')
    .option('--dim <d>', 'space dimension (1, 2 or 3; elements are (d+1)-simplices)', intOption('--dim', 1, 3))
    .option('--order <p>', 'polynomial total degree of the space-time basis', intOption('--order', 0, 20))
    .option('--equations <m>', 'equations per point (1 scalar advection; d+1 or d+2 acoustics / linearized Euler)', intOption('--equations', 1, 1000), 1)
    .option('--elements <n>', 'total space-time elements (all slabs)', intOption('--elements', 1, Number.MAX_SAFE_INTEGER))
    .option('--cells <c>', 'instead of --elements: cells per space direction of the structured Kuhn mesh (one count, or one per axis: 12,3)', cellsOption)
    .option('--layers <l>', 'with --cells: time layers per slab (default 1)', intOption('--layers', 1, 1_000_000))
    .option('--periodic', 'with --cells: periodic space boundaries (every space face interior)')
    .option('--slabs <s>', 'number of time slabs (default 1)', intOption('--slabs', 1, 100_000_000))
    .option('--restart <k>', 'GMRES/FGMRES basis vectors per cycle', intOption('--restart', 1, 100_000), 30)
    .option('--deflate <k>', 'harmonic Ritz vectors kept by gmres-dr and gcro-dr, 0 ≤ k < restart (default min(10, ⌊restart/3⌋))', intOption('--deflate', 0, 100_000))
    .option('--blocks <n>', 'exact stored block count of the whole matrix (e.g. from `slabbench inspect`)', intOption('--blocks', 1, Number.MAX_SAFE_INTEGER))
    .option('--layout <file>', 'with a matrix file: layout file to use instead of NAME.layout.json')
    .option('--block-size <n>', 'with a matrix file: block size when there is no layout', intOption('--block-size', 1, 1_000_000))
    .option('--json', 'print the estimate as JSON (bytes as plain numbers) and nothing else')
    .addHelpText('after', `
Formulas (README "Memory projection"): block size = equations × C(p+d+1, d+1); the matrix stores
one block per element and one per element and face neighbour; bytes are 8 per value, 4 per index.
A solve holds the Jacobian in one format: CSR with jacobi and ilu0, BSR otherwise.

With a matrix file, every registered preconditioner is projected on the matrix's block pattern
(schwarz's partition, direct's symbolic fill, p-multigrid's levels from the layout's modes), equal
to what \`slabbench solve\` counts; air's setup is run and its bytes measured.

Examples:
  slabbench estimate matrices/ci/ci-duct.mtx.gz
  slabbench estimate --dim 3 --order 3 --equations 5 --elements 1e6 --slabs 100
  slabbench estimate --dim 2 --order 2 --cells 64 --layers 2 --slabs 8 --restart 50
  slabbench estimate --dim 1 --order 2 --equations 2 --elements 3200 --slabs 4 --blocks 13588 --json`)
    .action(async (matrix: string | undefined, opts: EstimateCliOptions) => {
      if (opts.deflate !== undefined && opts.deflate >= opts.restart) {
        throw optionError('--deflate', `expected an integer from 0 to restart − 1 = ${opts.restart - 1}, got ${opts.deflate}`);
      }
      if (matrix !== undefined) { await runMatrixEstimate(matrix, opts); return; }
      const estimate = estimateMemory(estimateInputFromOptions({ ...opts, slabs: opts.slabs ?? 1 }));
      process.stdout.write(opts.json ? `${JSON.stringify(estimate, null, 2)}\n` : renderEstimate(estimate));
    });
}
