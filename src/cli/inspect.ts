import type { Command } from 'commander';
import { loadSystem } from '../sparse/load.js';
import { optionError } from '../util/errors.js';
import { buildInspectReport, formatInspectReport, inspectReportJson } from './inspect-report.js';

function parseBlockSize(v: string): number {
  if (!/^\d+$/.test(v.trim()) || Number(v) < 1) throw optionError('--block-size', `expected a positive integer, got "${v}"`);
  return Number(v);
}

export function registerInspect(program: Command): void {
  program
    .command('inspect')
    .description('Describe a Matrix Market matrix: size, symmetry, block size, block dominance, slab structure, zero blocks, triangular structure, storage.')
    .argument('<file>', 'matrix file (.mtx or .mtx.gz); NAME.layout.json beside it is used when present')
    .option('--json', 'print the report as JSON (nothing else on stdout)')
    .option('--block-size <n>', 'block size to use when there is no layout (default: detected from the pattern)', parseBlockSize)
    .option('--layout <file>', 'layout file to use instead of NAME.layout.json')
    .addHelpText('after', `
Examples:
  $ slabbench inspect duct.mtx
  $ slabbench inspect duct.mtx.gz --json > duct.inspect.json
  $ slabbench inspect tank.mtx --block-size 6
  $ slabbench inspect tank.mtx --layout tank-slabs.layout.json

The block size comes from the layout, else --block-size, else the largest size whose
pattern is made of dense aligned blocks. Components are analysed twice: on the stored block
pattern, and on the numerically nonzero one (stored blocks holding only zeros left out, as
exact upwinding produces them). When every component is a single block row, a permutation makes
the matrix block triangular and one block sweep in that order solves it. Exit codes: 0 report printed, 2 unreadable or
malformed input or bad option, 3 internal error.
`)
    .action(async (file: string, opts: { json?: boolean; blockSize?: number; layout?: string }) => {
      const sys = await loadSystem(file, { blockSize: opts.blockSize, layoutPath: opts.layout });
      const report = buildInspectReport(sys);
      process.stdout.write(`${opts.json ? inspectReportJson(report) : formatInspectReport(report)}\n`);
    });
}
