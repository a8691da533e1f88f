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
import { renderRankedTables, shouldUseColor } from '../report/table.js';
import { RANK_BY, rankMatrix, rankOptionsFor, type RankBy } from '../report/rank.js';
import { parseRepeats } from './timing-options.js';
import { timingNoise } from '../run/timing.js';
import { MAX_LABEL_LENGTH } from '../run/history.js';
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

export function parseRankBy(v: string): RankBy {
  if (!(RANK_BY as readonly string[]).includes(v)) throw optionError('--rank-by', `expected one of ${RANK_BY.join(', ')}, got "${v}"`);
  return v as RankBy;
}

function positiveRate(option: string) {
  return (v: string): number => {
    const n = Number(v);
    if (v.trim() === '' || !Number.isFinite(n) || n <= 0 || n > 1e6) throw optionError(option, `expected a number > 0 (and at most 1e6), got "${v}"`);
    return n;
  };
}

function parseLabel(v: string): string {
  if (v.trim() === '' || v.length > MAX_LABEL_LENGTH || /[\u0000-\u001f]/.test(v)) {
    throw optionError('--label', `expected 1 to ${MAX_LABEL_LENGTH} printable characters, got ${JSON.stringify(v.slice(0, 40))}`);
  }
  return v;
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
  warmup: boolean;
  repeats?: number;
  rankBy: RankBy;
  targetBandwidth?: number;
  targetFlops?: number;
  label?: string;
  report: boolean;
  quiet?: boolean;
  json?: boolean;
  dryRun?: boolean;
  kernels?: string;
}

function summary(doc: ResultsDoc, files: Record<string, string | undefined>, interrupted: boolean) {
  const byMatrix = new Map<string, typeof doc.runs>();
  for (const r of doc.runs) byMatrix.set(r.matrix, [...(byMatrix.get(r.matrix) ?? []), r]);
  const rankOpts = rankOptionsFor(doc);
  const noise = timingNoise(doc.runs);
  return {
    status: interrupted ? 'interrupted' : 'complete',
    files,
    runs: doc.runs.length,
    converged: doc.runs.filter((r) => r.result?.converged).length,
    notConverged: doc.runs.filter((r) => r.result && !r.result.converged).length,
    errors: doc.runs.filter((r) => r.error !== undefined).length,
    flaggedRepeats: doc.runs.filter((r) => r.repeats?.consistent === false).map((r) => ({ matrix: r.matrix, recipe: r.recipe, differences: r.repeats?.differences ?? [] })),
    rankBy: rankOpts.by,
    noise: noise ?? null,
    machine: doc.machine ?? null,
    model: doc.model ?? null,
    winners: [...byMatrix].map(([matrix, runs]) => {
      const m = rankMatrix(runs, rankOpts);
      return { matrix, recipe: m.winner, firstPlace: m.firstPlace, partial: m.partial, ...(m.missing.length ? { missingRecipes: m.missing } : {}), ...(m.commonTolerance !== undefined ? { commonTolerance: m.commonTolerance } : {}) };
    }),
  };
}

function fmt(x: number, digits = 3): string {
  return Number.isFinite(x) ? Number(x.toPrecision(digits)).toString() : String(x);
}

/** Two lines under the tables: the timing protocol as run, the noise, the probe and the model rates. */
export function timingSummary(doc: ResultsDoc): string {
  const p = doc.parameters;
  const noise = timingNoise(doc.runs);
  const flagged = doc.runs.filter((r) => r.repeats?.consistent === false).length;
  const lines = [
    `timing: ${p.warmup ? 'warm-up + ' : ''}${p.repeats ?? 1} timed repeat${(p.repeats ?? 1) === 1 ? '' : 's'} per pair, median shown`
      + `${p.gc ? ', GC before each' : ''}; noise ${noise === undefined ? 'not measured (one repeat)' : `${fmt(noise * 100, 2)}% (median relative spread)`}`
      + `; ${p.jobs} job${p.jobs === 1 ? '' : 's'} on ${p.parallel?.cpus ?? '?'} CPUs, load ${p.parallel ? p.parallel.loadAverageStart.map((x) => x.toFixed(2)).join(' ') : '?'}`
      + (flagged ? `; ${flagged} run${flagged === 1 ? '' : 's'} FLAGGED: repeats differed` : ''),
  ];
  if (doc.machine) {
    const m = doc.model;
    lines.push(`machine: ${fmt(doc.machine.bandwidthGBs)} GB/s triad, ${fmt(doc.machine.flopRateGFLOPs)} GFLOP/s dense blocks (probe ${fmt(doc.machine.probeSeconds, 2)} s)`
      + (m && (m.bandwidthFrom === 'target' || m.flopRateFrom === 'target')
        ? `; modeled time projected to ${fmt(m.bandwidthGBs)} GB/s, ${fmt(m.flopRateGFLOPs)} GFLOP/s` : ''));
  }
  return lines.join('\n');
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
    .option('--no-warmup', 'skip the untimed warm-up solve each pair gets before its timed repeats (default: warm up, so JIT compilation stays out of the timings)')
    .option('--repeats <n>', `timed repeats per pair, each with a fresh setup; the median is reported (default: the suite's "timing.repeats", else 3)`, parseRepeats)
    .option('--rank-by <cost>', `rank converged recipes by ${RANK_BY.join(' | ')} (default time: median setup + solve seconds)`, parseRankBy, 'time' as RankBy)
    .option('--target-bandwidth <GB/s>', 'streaming bandwidth of the machine to project the modeled time to (default: this machine\'s probe)', positiveRate('--target-bandwidth'))
    .option('--target-flops <GFLOP/s>', 'dense block flop rate of the machine to project the modeled time to (default: this machine\'s probe)', positiveRate('--target-flops'))
    .option('--label <text>', 'label of this run in history.jsonl (default: the commit from the CI environment, e.g. GITHUB_SHA)', parseLabel)
    .option('--cache <dir>', 'folder for matrices built from generator entries (default OUT/matrices)')
    .option('--no-report', 'do not write report.html and the .svg plots')
    .option('--kernels <set>', 'kernel set for every solve: wasm, typescript, or auto = wasm when a solve fits one 4 GiB WebAssembly memory (default auto, or SLABBENCH_KERNELS)')
    .addOption(new Option('-q, --quiet', 'print nothing but errors').conflicts('json'))
    .option('--json', 'print a JSON summary on stdout (nothing else goes to stdout)')
    .option('--dry-run', 'list the matrix × recipe pairs the sweep would run (grids expanded, selection and shard applied) and stop; nothing is generated, solved or written')
    .addHelpText('after', `
Timing protocol: per pair one untimed warm-up solve, then --repeats timed solves (fresh setup and a
garbage collection before each); tables state the median. Recipes whose timed ranges overlap or whose
medians differ by less than this sweep's noise share a rank (=); ★ marks a winner only when it beats
the runner-up beyond noise. A short probe of this machine (streaming bandwidth, dense flop rate) gives
each run a modeled time = bytes / bandwidth + flops / flop rate; --target-* project it to another machine.
A run that does not converge is a result, not an error: sweep exits 0 when every pair ran.
Exit codes: 0 all pairs ran; 2 bad input (suite, option, or a pair that could not start — the
other pairs still ran and are in the results); 130 interrupted by Ctrl-C (finished runs are kept
in OUT/results.json with "status": "interrupted").

Examples:
  slabbench sweep                                   # the demo suite: generate, sweep, rank, report
  slabbench sweep my-suite.json --out runs/today --jobs 2
  slabbench sweep my-suite.json --only-matrix duct-pulse --only-recipe gmres-block-ilu0-downstream,fgmres-slab
  slabbench sweep my-suite.json --repeats 5 --rank-by modeled --target-bandwidth 200 --target-flops 50
  slabbench sweep my-suite.json --shard 2/4 --out shard-2   # then: slabbench merge shard-*/results.json --out all
  slabbench sweep matrices/ci/suite.json --out .ci-results --quiet
  slabbench sweep --json | jq '.winners'
  slabbench sweep my-suite.json --dry-run            # which pairs, after grids ("restart": [10, 30, 60]) expand
  slabbench sweep study.json --only-matrix bore-steps   # a "sequence" entry: totals, then a per-system table

A matrix entry with "sequence" (a list of { "file", "rhs" }, or "generate" with { "kind": "newton",
"steps": N } or { "kind": "slabs" }) runs each recipe through all its systems in order, with the
recipe's "reuse" ("rebuild", "fixed" + "reuseSystems", "on-growth" + "refreshFactor") and
"initialGuess" ("zero", "previous"); README "Sequences of systems".`)
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
          cacheDir: opts.cache, builder, depsModule, signal: ac.signal,
          // A suite's "timing" applies unless the option was given on the command line.
          ...(cmd.getOptionValueSource('warmup') === 'cli' ? { warmup: opts.warmup } : {}),
          ...(opts.repeats !== undefined ? { repeats: opts.repeats } : {}),
          rankBy: opts.rankBy,
          target: {
            ...(opts.targetBandwidth !== undefined ? { bandwidthGBs: opts.targetBandwidth } : {}),
            ...(opts.targetFlops !== undefined ? { flopRateGFLOPs: opts.targetFlops } : {}),
          },
          ...(opts.label !== undefined ? { label: opts.label } : {}),
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
        process.stdout.write(`\n${timingSummary(doc)}\n`);
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
