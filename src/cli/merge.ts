import { plural } from '../report/format.js';
import { existsSync, mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Command } from 'commander';
import { mergeResults } from '../run/merge.js';
import { readResults, writeResults } from '../run/results.js';
import { appendHistory, historyEntry, readHistory } from '../run/history.js';
import { CSV_FILE, HISTORY_FILE, RESULTS_FILE } from '../run/sweep.js';
import type { HistoryEntry } from '../run/results-types.js';
import { writeReport } from '../report/html.js';

interface MergeCliOptions { out: string; report: boolean; json?: boolean; quiet?: boolean }

export function registerMerge(program: Command): void {
  program
    .command('merge')
    .description('Combine the results.json files of the shards of one sweep (`sweep --shard K/N`) into one')
    .argument('<shards...>', 'results.json of each shard')
    .requiredOption('-o, --out <dir>', 'folder for the merged results.json, results.csv, history.jsonl and report.html')
    .option('--no-report', 'do not write report.html and the .svg plots')
    .option('--json', 'print a JSON summary on stdout')
    .option('-q, --quiet', 'print nothing but errors')
    .addHelpText('after', `
Refuses (exit 2) when the files come from different suites, selections or slabbench versions, when a
shard did not finish, or when a matrix × recipe pair is duplicated or missing (each one is named).
The merged runs are in suite order, exactly as one unsharded sweep would list them.

Examples:
  slabbench merge shard-1/results.json shard-2/results.json shard-3/results.json --out merged
  slabbench merge shards/*/results.json --out merged --json`)
    .action(async (shards: string[], opts: MergeCliOptions) => {
      const files = shards.map((p) => ({ path: p, doc: readResults(p) }));
      const doc = mergeResults(files);
      const outDir = resolve(opts.out);
      mkdirSync(outDir, { recursive: true });
      const results = join(outDir, RESULTS_FILE);
      const csv = join(outDir, CSV_FILE);
      writeResults(doc, results, csv);
      const historyPath = join(outDir, HISTORY_FILE);
      appendHistory(historyPath, historyEntry(doc));
      let report: string | undefined;
      if (opts.report) {
        let history: HistoryEntry[] = [];
        if (existsSync(historyPath)) {
          try { history = readHistory(historyPath); } catch (e) {
            process.stderr.write(`slabbench: report written without the history view: ${(e as Error).message}\n`);
          }
        }
        report = (await writeReport(doc, outDir, { history })).htmlPath;
      }
      if (opts.json) {
        process.stdout.write(`${JSON.stringify({ shards: files.length, runs: doc.runs.length, files: { results, csv, history: historyPath, report } }, null, 1)}\n`);
      } else if (!opts.quiet) {
        process.stdout.write(`merged ${plural(files.length, 'file')}, ${plural(doc.runs.length, 'run')}: ${results} (+ ${csv}${report ? `, ${report}` : ''})\n`);
      }
    });
}
