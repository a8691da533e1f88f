import { Option, type Command } from 'commander';
import { loadSystem } from '../sparse/load.js';
import { readMatrixMarketVector } from '../sparse/matrix-market.js';
import { csrSpmv } from '../sparse/csr.js';
import { PARTITION_SLABS, RECIPE_FIELDS, RECIPE_FLAGS, describeRecipeField, recipeFromOptions, type PartitionSlabsMode } from '../solvers/recipe.js';
import { PARTITION_METHODS, type PartitionMethod } from '../sparse/partition.js';
import { EXAMPLE_MACHINE, runScale, type ScaleReport } from '../run/scale.js';
import { EXIT, fileError, optionError } from '../util/errors.js';
import { writeFileAtomic } from '../util/atomic-write.js';
import { formatBytes, formatNumber, jsonNonFiniteAsNull } from '../report/format.js';
import { esc } from '../report/svg/common.js';
import { scaleForecastPlot } from '../report/svg/scale.js';

interface ScaleCommandOptions extends Record<string, unknown> {
  rhs?: string;
  blockSize?: string;
  layout?: string;
  maxParts: string;
  bandwidth?: string;
  latency?: string;
  networkBandwidth?: string;
  json?: string;
  html?: string;
  partitionMethod?: string;
  partitionSlabs?: string;
}

function oneOf<T extends string>(option: string, v: string | undefined, values: readonly T[]): T | undefined {
  if (v === undefined) return undefined;
  if (!(values as readonly string[]).includes(v)) throw optionError(option, `expected one of ${values.join(', ')}, got "${v}"`);
  return v as T;
}

function positive(option: string, v: string): number {
  const x = /^[-+0-9.eE]+$/.test(v.trim()) ? Number(v) : NaN;
  if (!(Number.isFinite(x) && x > 0)) throw optionError(option, `expected a finite number > 0, got "${v}"`);
  return x;
}

export async function runScaleCommand(file: string, opts: ScaleCommandOptions): Promise<ScaleReport> {
  // the partition options apply to every P whatever the preconditioner, so they are not recipe checks here
  const { partitionMethod, partitionSlabs, ...recipeOptions } = opts;
  const partition = {
    method: oneOf<PartitionMethod>('--partition-method', partitionMethod, PARTITION_METHODS),
    slabs: oneOf<PartitionSlabsMode>('--partition-slabs', partitionSlabs, PARTITION_SLABS),
  };
  const recipe = recipeFromOptions(recipeOptions);
  const maxParts = /^\d+$/.test(opts.maxParts.trim()) ? Number(opts.maxParts) : NaN;
  if (!(maxParts >= 1)) throw optionError('--max-parts', `expected a positive integer, got "${opts.maxParts}"`);
  const machine = {
    bandwidth: opts.bandwidth === undefined ? EXAMPLE_MACHINE.bandwidth : positive('--bandwidth', opts.bandwidth),
    latency: opts.latency === undefined ? EXAMPLE_MACHINE.latency : positive('--latency', opts.latency),
    networkBandwidth: opts.networkBandwidth === undefined ? EXAMPLE_MACHINE.networkBandwidth : positive('--network-bandwidth', opts.networkBandwidth),
  };
  let blockSize: number | undefined;
  if (opts.blockSize !== undefined) {
    if (!/^\d+$/.test(opts.blockSize.trim()) || Number(opts.blockSize) < 1) throw optionError('--block-size', `expected a positive integer, got "${opts.blockSize}"`);
    blockSize = Number(opts.blockSize);
  }
  const sys = await loadSystem(file, { blockSize, layoutPath: opts.layout });
  const n = sys.csr.nRows;
  if (sys.csr.nCols !== n) throw fileError(file, undefined, `scale needs a square matrix, got ${n}×${sys.csr.nCols}`);
  if (maxParts > sys.bsr.nBlockRows) throw optionError('--max-parts', `expected at most the matrix's ${sys.bsr.nBlockRows} block rows, got ${maxParts}`);
  let b: Float64Array;
  if (opts.rhs !== undefined) {
    b = await readMatrixMarketVector(opts.rhs);
    if (b.length !== n) throw fileError(opts.rhs, undefined, `right-hand side has length ${b.length}, expected ${n} (the matrix size)`);
  } else {
    b = new Float64Array(n);
    csrSpmv(sys.csr, new Float64Array(n).fill(1), b);
  }
  return runScale(sys, b, recipe, { maxParts, machine, partition, matrix: file });
}

function us(s: number): string {
  return formatNumber(s * 1e6, 3);
}

export function formatScaleReport(r: ScaleReport): string {
  const head = ['P', 'iterations', 'max part / it', 'imbalance', 'halo / it', 'messages / it', 'reductions / it', 'model µs / it', 'model total ms'];
  const rows = r.rows.map((x) => [
    String(x.parts), `${x.iterations}${x.converged ? '' : ` (${x.cause})`}`, formatBytes(x.maxPartBytesPerIteration),
    formatNumber(x.imbalance, 3), formatBytes(x.haloBytesPerIteration), formatNumber(x.messagesPerIteration, 3),
    formatNumber(x.reductionsPerIteration, 3), us(x.modelled.perIteration), formatNumber(x.modelled.total * 1e3, 3),
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...rows.map((row) => row[i].length)));
  const line = (cells: string[]): string => cells.map((c, i) => (i === 0 ? c.padStart(widths[i]) : c.padStart(widths[i]))).join('  ');
  const m = r.machine;
  return [
    `recipe ${r.recipe}: P parts solved exactly on one core; time is a model, not a measurement`,
    `target (α–β model): ${formatBytes(m.bandwidth)}/s memory per process, latency ${us(m.latency)} µs, ${formatBytes(m.networkBandwidth)}/s network`,
    `partition: ${r.partition.method === 'coordinates' ? 'coordinate bisection of the centroids' : 'graph bisection'}, parts ${r.partition.slabs === 'within' ? 'inside slabs' : 'across slabs'}`,
    '',
    line(head),
    ...rows.map(line),
  ].join('\n');
}

/** A self-contained page: the plot, the table and the model's caution. */
export function scaleReportHtml(r: ScaleReport, file: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>slabbench scale: ${esc(file)}</title>
<style>body{font-family:system-ui,sans-serif;margin:24px;color:#222}pre{font-size:12px;background:#f6f6f6;padding:8px}</style></head>
<body><h1>Scaling forecast: ${esc(file)}</h1>
<p>The iterations are exact (the partitioned algebra carried out on one core). The time is a model
(α–β: Hockney 1994) on an example target, not a measurement of a real cluster; check decisions on the machine itself.</p>
${scaleForecastPlot(r, 'scale-')}
<pre>${esc(formatScaleReport(r))}</pre>
</body></html>
`;
}

export function registerScale(program: Command): void {
  const cmd = program
    .command('scale')
    .description('Forecast a recipe on P = 1, 2, 4, … parts: iterations of the partitioned algebra (exact, on one core), per-part work, halo bytes, reductions and a modelled time per iteration.')
    .argument('<file>', 'matrix file (.mtx, .mtx.gz or .npz); NAME.layout.json beside it is used when present')
    .requiredOption('--max-parts <n>', 'largest P (P runs over 1, 2, 4, … up to it)')
    .option('--bandwidth <bytes/s>', `target memory bandwidth per process (example default ${EXAMPLE_MACHINE.bandwidth})`)
    .option('--latency <seconds>', `target message latency α (example default ${EXAMPLE_MACHINE.latency})`)
    .option('--network-bandwidth <bytes/s>', `target network bandwidth per process (example default ${EXAMPLE_MACHINE.networkBandwidth})`)
    .option('--partition-method <method>', `how every P is partitioned: ${PARTITION_METHODS.join(' or ')} (graph bisection, or coordinate bisection of the layout's centroids); default graph`)
    .option('--partition-slabs <mode>', `parts ${PARTITION_SLABS.join(' or ')} slabs (within: every part inside one slab); default across`)
    .option('--rhs <file>', 'right-hand side (Matrix Market vector); default b = A·1')
    .option('--block-size <n>', 'block size when there is no layout (default: detected from the pattern)')
    .option('--layout <file>', 'layout file to use instead of NAME.layout.json')
    .option('--json <file>', 'write the forecast as JSON to FILE (atomically), or to stdout with "-" (then nothing else goes to stdout)')
    .option('--html <file>', 'also write a self-contained HTML page with the plot (iterations and modelled time against P) and the table');
  for (const field of RECIPE_FIELDS) {
    if (field === 'partitionMethod' || field === 'partitionSlabs') continue;
    cmd.addOption(new Option(`--${RECIPE_FLAGS[field]} <value>`, `recipe: as in solve; ${describeRecipeField(field)}`).hideHelp());
  }
  for (const field of RECIPE_FIELDS) cmd.addOption(new Option(`--inner-${RECIPE_FLAGS[field]} <value>`).hideHelp());
  cmd.addHelpText('after', `
Recipe: every recipe option of \`slabbench solve\` (--krylov, --precond, --restart, --rtol, --overlap,
--subdomain-precond, …) is accepted; --parts is set by scale. A preconditioner other than schwarz
and none runs as block Jacobi over the parts with itself on each part (schwarz, overlap 0).

The time column is the α–β model of README "Scale": max-part bytes ÷ bandwidth + messages ×
latency + halo bytes ÷ network bandwidth + reductions × ⌈log₂P⌉ × latency. The default target is an
example, not a measured machine; it forecasts, it does not measure a cluster.

Examples:
  $ slabbench scale duct.mtx --max-parts 16 --precond block-ilu0
  $ slabbench scale tank.mtx --max-parts 32 --precond schwarz --overlap 1 --subdomain-precond block-ilu0
  $ slabbench scale duct.mtx --max-parts 8 --precond schwarz --overlap 2 --html duct-scale.html
  $ slabbench scale duct.mtx --max-parts 8 --precond block-ilu0 --partition-method coordinates --json duct.scale.json
  $ slabbench scale room.mtx --max-parts 8 --precond schwarz --schwarz-kind additive --subdomain-precond exact --latency 5e-6 --json -

Exit codes: 0 every P solved, 1 some P unsolved or failed, 2 bad input or option, 3 internal error.`);
  cmd.action(async (file: string, opts: ScaleCommandOptions) => {
    const report = await runScaleCommand(file, opts);
    const json = jsonNonFiniteAsNull(report);
    if (opts.html !== undefined) await writeFileAtomic(opts.html, scaleReportHtml(report, file));
    if (opts.json === '-') process.stdout.write(`${json}\n`);
    else {
      if (opts.json !== undefined) await writeFileAtomic(opts.json, `${json}\n`);
      process.stdout.write(`${formatScaleReport(report)}\n`);
    }
    process.exitCode = report.rows.every((r) => r.converged) ? EXIT.ok : EXIT.failed;
  });
}
