import { plural } from '../report/format.js';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { type Command, Option } from 'commander';
import { EXIT, optionError, UserError } from '../util/errors.js';
import { KERNELS_ENV, parseKernelChoice } from '../solvers/kernel-plan.js';
import { readSuite } from '../run/suite.js';
import { parseShard } from '../run/shard.js';
import { planSweep, formatSweepPlan } from '../run/plan.js';
import { runSweep, HISTORY_FILE } from '../run/sweep.js';
import { readHistory } from '../run/history.js';
import { ProgressBar } from '../run/progress.js';
import type { HistoryEntry, ResultsDoc } from '../run/results-types.js';
import type { CaseBuilder, SuiteParsers } from '../run/deps.js';
import { rankMatrix, renderRankedTables, shouldUseColor } from '../report/table.js';
import { writeReport } from '../report/html.js';

/** The demo suite shipped with the package (resolved from the installed code, not the working folder). */
export function demoSuitePath(): string {
  return fileURLToPath(new URL('../../matrices/suite.json', import.meta.url));
}

function parseJobs(v: string): number {
  const n = Number(v);
  if (!/^\s*\d+\s*$/.test(v) || !Number.isInteger(n) || n < 1 || n > 256) throw optionError('--jobs', `expected an integer from 1 to 256, got "${v}"`);
  return n;
}

function collectNames(v: string, prev: string[] | undefined): string[] {
  const names = v.split(',').map((s) => s.trim()).filter((s) => s !== '');
  return [...(prev ?? []), ...names];
}

interface SweepCliOptions {
  out: string;
  jobs: number;
  shard?: string;
  onlyMatrix?: string[];
  onlyRecipe?: string[];
  cache?: string;
  warmup?: boolean;
  report: boolean;
  quiet?: boolean;
  json?: boolean;
  dryRun?: boolean;
  kernels?: string;
}

function summary(doc: ResultsDoc, files: Record<string, string | undefined>, interrupted: boolean) {
  const byMatrix = new Map<string, typeof doc.runs>();
  for (const r of doc.runs) byMatrix.set(r.matrix, [...(byMatrix.get(r.matrix) ?? []), r]);
  return {
    status: interrupted ? 'interrupted' : 'complete',
    files,
    runs: doc.runs.length,
    converged: doc.runs.filter((r) => r.result?.converged).length,
    notConverged: doc.runs.filter((r) => r.result && !r.result.converged).length,
    errors: doc.runs.filter((r) => r.error !== undefined).length,
    // a matrix missing some of the sweep's recipes names no winner (null) and lists what is missing
    winners: [...byMatrix].map(([matrix, runs]) => {
      const { ranked, missing } = rankMatrix(doc, matrix, runs);
      return { matrix, recipe: ranked.find((x) => x.winner)?.run.recipe ?? null, ...(missing.length ? { missingRecipes: missing } : {}) };
    }),
  };
}

/** Where the sweep command gets the suite parsers, the case builder and the workers' module from. */
export interface SweepCommandDeps {
  load(): Promise<{ parsers: SuiteParsers; builder: CaseBuilder; depsModule?: string }>;
}

const REAL_DEPS: SweepCommandDeps = {
  // Loaded on use, not at start-up: the solver stack is only needed when a sweep runs.
  async load() {
    const real = await import('../run/real-deps.js');
    return { parsers: real, builder: real };
  },
};

export function registerSweep(program: Command, deps: SweepCommandDeps = REAL_DEPS): void {
  program
    .command('sweep')
    .description('Run every matrix × recipe of a suite file; write results.json, results.csv, history.jsonl and report.html')
    .argument('[suite]', 'suite file (JSON, schema slabbench-suite/1); default: the demo suite shipped in matrices/suite.json')
    .option('-o, --out <dir>', 'output folder', 'slabbench-results')
    .option('-j, --jobs <n>', 'worker threads running pairs side by side (timings are cleanest with 1)', parseJobs, 1)
    .option('--shard <K/N>', 'run only share K of N (1-based) of the matrix × recipe list; combine with `slabbench merge`')
    .option('--only-matrix <names>', 'run only these matrices (comma-separated; repeatable)', collectNames)
    .option('--only-recipe <names>', 'run only these recipes (comma-separated; repeatable)', collectNames)
    .option('--warmup', 'solve each pair once untimed before the measured solve, so JIT compilation stays out of the timings (doubles the work)')
    .option('--cache <dir>', 'folder for matrices built from generator entries (default OUT/matrices)')
    .option('--no-report', 'do not write report.html and the .svg plots')
    .option('--kernels <set>', 'kernel set for every solve: wasm, typescript, or auto = wasm when a solve fits one 4 GiB WebAssembly memory (default auto, or SLABBENCH_KERNELS)')
    .addOption(new Option('-q, --quiet', 'print nothing but errors').conflicts('json'))
    .option('--json', 'print a JSON summary on stdout (nothing else goes to stdout)')
    .option('--dry-run', 'list the matrix × recipe pairs the sweep would run (grids expanded, selection and shard applied) and stop; nothing is generated, solved or written')
    .addHelpText('after', `
A run that does not converge is a result, not an error: sweep exits 0 when every pair ran.
Exit codes: 0 all pairs ran; 2 bad input (suite, option, or a pair that could not start — the
other pairs still ran and are in the results); 130 interrupted by Ctrl-C (finished runs are kept
in OUT/results.json with "status": "interrupted").

Examples:
  slabbench sweep                                   # the demo suite: generate, sweep, rank, report
  slabbench sweep my-suite.json --out runs/today --jobs 2
  slabbench sweep my-suite.json --only-matrix duct-pulse --only-recipe gmres-block-ilu0-downstream,fgmres-slab
  slabbench sweep my-suite.json --shard 2/4 --out shard-2   # then: slabbench merge shard-*/results.json --out all
  slabbench sweep matrices/ci/suite.json --out .ci-results --quiet
  slabbench sweep --json | jq '.winners'
  slabbench sweep my-suite.json --dry-run            # which pairs, after grids ("restart": [10, 30, 60]) expand`)
    .action(async (suiteArg: string | undefined, opts: SweepCliOptions, cmd: Command) => {
      if (opts.dryRun) {
        // Everything else only shapes a run that --dry-run does not start: refuse it rather than ignore it.
        const allowed = new Set(['dryRun', 'shard', 'onlyMatrix', 'onlyRecipe', 'json']);
        for (const o of cmd.options) {
          const key = o.attributeName();
          if (!allowed.has(key) && cmd.getOptionValueSource(key) === 'cli') throw optionError(o.long ?? key, 'has no effect with --dry-run, which runs nothing');
        }
      }
      const shard = opts.shard !== undefined ? parseShard(opts.shard) : undefined;
      const { parsers, builder, depsModule } = await deps.load();
      const suitePath = suiteArg ?? demoSuitePath();
      const suite = readSuite(suitePath, parsers);
      if (opts.dryRun) {
        const plan = planSweep(suite, { shard, onlyMatrix: opts.onlyMatrix, onlyRecipe: opts.onlyRecipe });
        process.stdout.write(opts.json ? `${JSON.stringify(plan, null, 1)}\n` : formatSweepPlan(plan));
        return;
      }
      const quiet = opts.quiet === true || opts.json === true;
      const bar = !opts.quiet && process.stderr.isTTY ? new ProgressBar(process.stderr) : undefined;
      const ac = new AbortController();
      const onSigint = (): void => ac.abort();
      process.once('SIGINT', onSigint);
      // the kernel set travels to the worker threads through their environment (read by solveSystem)
      const envBefore = process.env[KERNELS_ENV];
      if (opts.kernels !== undefined) process.env[KERNELS_ENV] = parseKernelChoice(opts.kernels);
      let outcome;
      try {
        outcome = await runSweep({
          suite, outDir: opts.out, jobs: opts.jobs, shard, onlyMatrix: opts.onlyMatrix, onlyRecipe: opts.onlyRecipe,
          cacheDir: opts.cache, builder, depsModule, signal: ac.signal, warmup: opts.warmup === true,
          onProgress: bar ? (d, t) => bar.update(d, t, '') : undefined,
          onStatus: bar ? (label) => bar.status(label) : undefined,
          log: opts.quiet ? undefined : (line) => { bar?.finish(); process.stderr.write(`${line}\n`); },
        });
      } finally {
        if (opts.kernels !== undefined) {
          if (envBefore === undefined) delete process.env[KERNELS_ENV]; else process.env[KERNELS_ENV] = envBefore;
        }
        process.off('SIGINT', onSigint);
        bar?.finish();
      }
      const { doc, interrupted, errors, files } = outcome;

      let reportPath: string | undefined;
      if (opts.report && !interrupted) {
        let history: HistoryEntry[] = [];
        const hp = join(opts.out, HISTORY_FILE);
        if (existsSync(hp)) {
          try { history = readHistory(hp); } catch (e) {
            process.stderr.write(`slabbench: report written without the history view: ${(e as Error).message}\n`);
          }
        }
        reportPath = (await writeReport(doc, opts.out, { history })).htmlPath;
      }

      if (opts.json) {
        process.stdout.write(`${JSON.stringify(summary(doc, { ...files, report: reportPath }, interrupted), null, 1)}\n`);
      } else if (!quiet) {
        process.stdout.write(renderRankedTables(doc, { color: shouldUseColor(process.stdout) }));
        process.stdout.write(`\nresults: ${files.results} (+ ${files.csv}${reportPath ? `, ${reportPath}` : ''})\n`);
      }
      if (interrupted) {
        throw new UserError(`interrupted: ${plural(doc.runs.length, 'finished run')} kept in ${files.results}`, EXIT.interrupted);
      }
      if (errors > 0) {
        throw new UserError(`${errors} of ${plural(doc.runs.length, 'run')} could not start (see "error" in ${files.results}); the others ran`, EXIT.badInput);
      }
    });
}
