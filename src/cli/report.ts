import { existsSync } from 'node:fs';
import { dirname, isAbsolute, join, relative } from 'node:path';
import type { Command } from 'commander';
import { readResults } from '../run/results.js';
import { readHistory } from '../run/history.js';
import { HISTORY_FILE } from '../run/sweep.js';
import { writeReport } from '../report/html.js';

interface ReportCliOptions {
  /** A path, or false for --no-history. */
  history?: string | false;
  out?: string;
  json?: boolean;
}

export function registerReport(program: Command): void {
  program
    .command('report')
    .description('Write one self-contained HTML report (plots + ranked tables) and each plot as its own .svg')
    .argument('<results>', 'results document written by `slabbench sweep` or `slabbench merge` (results.json)')
    .option('--history <file>', `history file (JSON lines, one line per sweep) for the history view (default: ${HISTORY_FILE} beside RESULTS when present)`)
    .option('--no-history', 'leave out the history view')
    .option('-o, --out <dir>', 'output folder (default: the folder holding RESULTS)')
    .option('--json', 'print the written paths as JSON on stdout (nothing else goes to stdout)')
    .addHelpText('after', `
The page needs no network and runs no scripts: CSS and SVG are inline, so it can be mailed or
attached to a CI job as one file. Per matrix it shows the residual histories of all recipes
(log scale), Ritz values in the complex plane, the block sparsity picture with slab boundaries
and the ranked table; with --history, iterations and time per recipe across stored runs.

Examples:
  slabbench report slabbench-results/results.json      # picks up slabbench-results/history.jsonl
  slabbench report results.json --history slabbench-results/history.jsonl --out public/report
  slabbench report merged.json --out report --json`)
    .action(async (resultsPath: string, opts: ReportCliOptions) => {
      const results = readResults(resultsPath);
      const besideResults = join(dirname(resultsPath), HISTORY_FILE);
      const historyPath = opts.history === false ? undefined
        : opts.history ?? (existsSync(besideResults) ? besideResults : undefined);
      const history = historyPath !== undefined ? readHistory(historyPath) : undefined;
      const outDir = opts.out ?? dirname(resultsPath);
      const written = await writeReport(results, outDir, { history });
      if (opts.json) {
        process.stdout.write(`${JSON.stringify({ html: written.htmlPath, svgs: written.svgPaths }, null, 2)}\n`);
      } else {
        const shown = (p: string): string => {
          const rel = relative(process.cwd(), p);
          return rel === '' ? '.' : rel.startsWith('..') || isAbsolute(rel) ? p : rel;
        };
        process.stdout.write(`report: ${shown(written.htmlPath)} (${written.svgPaths.length} plots also as .svg in ${shown(outDir)})\n`);
      }
    });
}
