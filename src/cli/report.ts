import { existsSync } from 'node:fs';
import { basename, dirname, isAbsolute, join, relative } from 'node:path';
import type { Command } from 'commander';
import { readResults } from '../run/results.js';
import { readHistory } from '../run/history.js';
import { HISTORY_FILE } from '../run/sweep.js';
import { readScaleReport, scaleFilesIn } from '../run/scale-file.js';
import { DEFAULT_RESIDUAL_AXES, writeReport } from '../report/html.js';
import { RESIDUAL_AXES, type ResidualAxis } from '../report/svg/residuals.js';
import { optionError } from '../util/errors.js';
import { plural } from '../report/format.js';

/** "iterations,matvecs" → axes; "all" = every axis. */
export function parseAxes(v: string): ResidualAxis[] {
  const parts = v.split(',').map((p) => p.trim()).filter(Boolean);
  if (parts.length === 1 && parts[0] === 'all') return [...RESIDUAL_AXES];
  const out: ResidualAxis[] = [];
  for (const p of parts) {
    if (!(RESIDUAL_AXES as readonly string[]).includes(p)) throw optionError('--x-axis', `expected a comma list of ${RESIDUAL_AXES.join(', ')} (or all), got "${p}"`);
    if (!out.includes(p as ResidualAxis)) out.push(p as ResidualAxis);
  }
  if (out.length === 0) throw optionError('--x-axis', `expected at least one of ${RESIDUAL_AXES.join(', ')}`);
  return out;
}

interface ReportCliOptions {
  /** A path, or false for --no-history. */
  history?: string | false;
  out?: string;
  json?: boolean;
  xAxis?: ResidualAxis[];
  /** false for --no-scale. */
  scale?: boolean;
}

export function registerReport(program: Command): void {
  program
    .command('report')
    .description('Write one self-contained HTML report (plots + ranked tables) and each plot as its own .svg')
    .argument('<results>', 'results document written by `slabbench sweep` or `slabbench merge` (results.json)')
    .option('--history <file>', `history file (JSON lines, one line per sweep) for the history view (default: ${HISTORY_FILE} beside RESULTS when present)`)
    .option('--no-history', 'leave out the history view')
    .option('-o, --out <dir>', 'output folder (default: the folder holding RESULTS)')
    .option('--x-axis <list>', `x axes of the residual plots, one figure each: a comma list of ${RESIDUAL_AXES.join(', ')}, or all (default ${DEFAULT_RESIDUAL_AXES.join(',')})`, parseAxes)
    .option('--no-scale', 'leave out the scaling forecasts (*.scale.json beside RESULTS)')
    .option('--json', 'print the written paths as JSON on stdout (nothing else goes to stdout)')
    .addHelpText('after', `
The page needs no network and runs no scripts: CSS and SVG are inline, so it can be mailed or
attached to a CI job as one file. Per matrix it shows the residual histories of all recipes
(log scale) against iterations and matvecs (--x-axis adds seconds), Ritz values in the complex plane, the block sparsity picture with slab boundaries
and the ranked table; with --history, iterations and time per recipe across stored runs. Every
forecast of \`slabbench scale --json NAME.scale.json\` in the folder holding RESULTS is plotted too
(iterations and modelled time per iteration against the number of parts P).

Examples:
  slabbench report slabbench-results/results.json      # picks up slabbench-results/history.jsonl
  slabbench report results.json --history slabbench-results/history.jsonl --out public/report
  slabbench report merged.json --out report --json
  slabbench report results.json --x-axis all             # residuals against iterations, matvecs and seconds
  slabbench scale duct.mtx --max-parts 16 --precond block-ilu0 --json slabbench-results/duct.scale.json
  slabbench report slabbench-results/results.json      # now with the duct forecast plot

Plot files of an earlier report in the output folder that these results no longer produce
(residuals-*.svg, ritz-*.svg, pattern-*.svg, history-*.svg, scale-*.svg) are removed; other files are kept.`)
    .action(async (resultsPath: string, opts: ReportCliOptions) => {
      const results = readResults(resultsPath);
      const besideResults = join(dirname(resultsPath), HISTORY_FILE);
      const historyPath = opts.history === false ? undefined
        : opts.history ?? (existsSync(besideResults) ? besideResults : undefined);
      const history = historyPath !== undefined ? readHistory(historyPath) : undefined;
      const outDir = opts.out ?? dirname(resultsPath);
      const scale = opts.scale === false ? [] : scaleFilesIn(dirname(resultsPath)).map((f) => ({ file: basename(f), report: readScaleReport(f) }));
      const written = await writeReport(results, outDir, { history, scale, ...(opts.xAxis ? { axes: opts.xAxis } : {}) });
      if (opts.json) {
        process.stdout.write(`${JSON.stringify({ html: written.htmlPath, svgs: written.svgPaths, removed: written.removed }, null, 2)}\n`);
      } else {
        const shown = (p: string): string => {
          const rel = relative(process.cwd(), p);
          return rel === '' ? '.' : rel.startsWith('..') || isAbsolute(rel) ? p : rel;
        };
        const removed = written.removed.length > 0 ? `; removed ${plural(written.removed.length, 'plot file')} of an earlier report that no longer belong` : '';
        process.stdout.write(`report: ${shown(written.htmlPath)} (${plural(written.svgPaths.length, 'plot')} also as .svg in ${shown(outDir)}${removed})\n`);
      }
    });
}
