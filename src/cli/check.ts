import { plural } from '../report/format.js';
import { existsSync, mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { type Command, Option } from 'commander';
import { EXIT, optionError, UserError } from '../util/errors.js';
import { writeFileAtomicSync } from '../util/atomic-write.js';
import { readResults, resultsJson } from '../run/results.js';
import {
  compareWithBaseline, DEFAULT_TIME_RATIO, DEFAULT_TOLERANCE, junitXml, NOISE_BAND_FACTOR, NOISE_BAND_MIN, readToleranceFile, renderCheckTable, type Tolerance,
} from '../run/baseline.js';
import { shouldUseColor } from '../report/table.js';

function nonNegative(option: string, integer: boolean) {
  return (v: string): number => {
    const n = Number(v);
    if (v.trim() === '' || !Number.isFinite(n) || n < 0 || (integer && !Number.isInteger(n))) {
      throw optionError(option, `expected ${integer ? 'an integer' : 'a number'} ≥ 0, got "${v}"`);
    }
    return n;
  };
}

function atLeastOne(option: string) {
  return (v: string): number => {
    const n = Number(v);
    if (v.trim() === '' || !Number.isFinite(n) || n < 1) throw optionError(option, `expected a number ≥ 1, got "${v}"`);
    return n;
  };
}

interface CheckCliOptions {
  baseline: string;
  iterationsSlack?: number;
  iterationsPercent?: number;
  memoryPercent?: number;
  residualFactor?: number;
  timeRatio?: number | true;
  time?: boolean;
  workPercent?: number;
  tolerances?: string;
  junit?: string;
  update?: boolean;
  json?: boolean;
}

export function registerCheck(program: Command): void {
  program
    .command('check')
    .description('Compare sweep results with a stored baseline; exit 1 on any regression (for CI)')
    .argument('<results>', 'results.json of a sweep (or of `slabbench merge`)')
    .requiredOption('-b, --baseline <file>', 'baseline results document (created or replaced by --update)')
    .option('--iterations-slack <k>', `allow up to k more iterations than the baseline (default ${DEFAULT_TOLERANCE.iterationsSlack}: exact)`, nonNegative('--iterations-slack', true))
    .option('--iterations-percent <p>', 'allow up to p% more iterations (the larger of slack and percent applies)', nonNegative('--iterations-percent', false))
    .option('--memory-percent <p>', `allow counted buffer bytes to grow by p% (default ${DEFAULT_TOLERANCE.memoryPercent})`, nonNegative('--memory-percent', false))
    .option('--residual-factor <f>', `allow the final true residual to grow to baseline·f, and always to rtol (default ${DEFAULT_TOLERANCE.residualFactor})`, atLeastOne('--residual-factor'))
    .option('--work-percent <p>', `allow each work counter (matvecs, preconditioner applications, inner iterations, flops, bytes; per phase) to grow by p% (default ${DEFAULT_TOLERANCE.workPercent}: exact)`, nonNegative('--work-percent', false))
    .addOption(new Option('--time', `also compare median setup + solve time within the noise band: fail above max(${NOISE_BAND_MIN}, 1 + ${NOISE_BAND_FACTOR}·(noise of baseline + noise now)) × baseline`)
      .conflicts('timeRatio'))
    .addOption(new Option('--time-ratio [r]', `also compare median setup + solve time with a fixed band: fail above r × baseline (default r ${DEFAULT_TIME_RATIO})`)
      .argParser(atLeastOne('--time-ratio')))
    .option('--tolerances <file>', 'per-recipe tolerances (JSON, schema slabbench-tolerances/1)')
    .option('--junit <file>', 'also write JUnit XML (one testcase per matrix × recipe) for CI test reporters')
    .option('--update', 'accept these results as the new baseline (written atomically); exit 0')
    .option('--json', 'print the comparison as JSON on stdout instead of the table')
    .addHelpText('after', `
Checked per matrix × recipe: the cause must match; iterations exact unless a slack is given;
the final true relative residual ≤ max(rtol, baseline × residual factor); counted buffer bytes (matrix,
preconditioner, Krylov basis, work — not RSS) within the memory percentage; work counters (per phase:
matvecs, preconditioner applications, inner iterations, flops, bytes moved) exact unless --work-percent.
Time only with --time (noise band from the repeats of both runs) or --time-ratio (fixed band), always as
medians of the timed repeats.
Fewer iterations or a run that now converges pass as "improved"; refresh the baseline with --update.
A tolerances file sets defaults and per-recipe values:
  { "schema": "slabbench-tolerances/1", "default": { "iterationsSlack": 0 },
    "recipes": { "gmres-bjac": { "iterationsPercent": 10, "memoryPercent": 5 } } }
Exit codes: 0 within tolerance (or --update), 1 regression, 2 unusable input.

Examples:
  slabbench check .ci-results/results.json --baseline matrices/ci/baseline.json --junit .ci-results/junit.xml
  slabbench check results.json --baseline base.json --time        # also median times, within the noise band
  slabbench check results.json --baseline base.json --iterations-slack 2 --time-ratio 2
  slabbench check results.json --baseline base.json --update      # accept the current numbers`)
    .action((resultsPath: string, opts: CheckCliOptions) => {
      const current = readResults(resultsPath);
      if (current.status === 'partial' || current.status === 'interrupted') {
        throw new UserError(`${resultsPath}: the sweep did not finish (status ${current.status}); run it again before checking`);
      }
      const baselineExists = existsSync(opts.baseline);
      if (!baselineExists && !opts.update) {
        throw new UserError(`${opts.baseline}: no such baseline file (create it from these results with --update)`);
      }
      if (!baselineExists) {
        writeFileAtomicSync(opts.baseline, resultsJson(current));
        if (!opts.json) process.stdout.write(`baseline created: ${opts.baseline} (${plural(current.runs.length, 'run')})\n`);
        else process.stdout.write(`${JSON.stringify({ updated: true, created: true, baseline: opts.baseline, failures: 0, rows: [] })}\n`);
        return;
      }
      const baseline = readResults(opts.baseline);
      const cli: Partial<Tolerance> = {};
      if (opts.iterationsSlack !== undefined) cli.iterationsSlack = opts.iterationsSlack;
      if (opts.iterationsPercent !== undefined) cli.iterationsPercent = opts.iterationsPercent;
      if (opts.memoryPercent !== undefined) cli.memoryPercent = opts.memoryPercent;
      if (opts.residualFactor !== undefined) cli.residualFactor = opts.residualFactor;
      if (opts.timeRatio !== undefined) cli.timeRatio = opts.timeRatio === true ? DEFAULT_TIME_RATIO : opts.timeRatio;
      if (opts.workPercent !== undefined) cli.workPercent = opts.workPercent;
      const file = opts.tolerances !== undefined ? readToleranceFile(opts.tolerances) : undefined;
      const outcome = compareWithBaseline(current, baseline, { cli, file, ...(opts.time ? { time: 'noise' as const } : {}) });

      if (opts.junit) {
        const p = resolve(opts.junit);
        mkdirSync(dirname(p), { recursive: true });
        writeFileAtomicSync(p, junitXml(outcome, { timestamp: current.date }));
      }
      if (opts.update) writeFileAtomicSync(opts.baseline, resultsJson(current));

      if (opts.json) {
        process.stdout.write(`${JSON.stringify({ updated: opts.update === true, baseline: opts.baseline, failures: outcome.failures, notes: outcome.notes, ...(outcome.noise ? { noise: outcome.noise } : {}), rows: outcome.rows }, null, 1)}\n`);
      } else {
        process.stdout.write(renderCheckTable(outcome, { color: shouldUseColor(process.stdout) }));
        if (opts.update) process.stdout.write(`baseline updated: ${opts.baseline}\n`);
      }
      if (outcome.failures > 0 && !opts.update) {
        throw new UserError(`${outcome.failures} of ${outcome.rows.length} matrix × recipe pairs regressed against ${opts.baseline}`, EXIT.failed);
      }
    });
}
