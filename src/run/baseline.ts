/**
 * Regression check of a results document against a stored baseline (itself a results document).
 *
 * Per matrix × recipe pair: the cause must match; iterations may grow by at most the allowed slack
 * (exact by default); the work counters (matvecs, preconditioner applications, inner iterations, flops,
 * bytes moved, per phase) may grow by at most workPercent (exact by default) — the solve phase's are not
 * compared when the iterations grew within an allowed slack (its work follows the iterations); the final true relative
 * residual must stay ≤ max(rtol, baseline · residualFactor); counted buffer bytes (matrix + preconditioner
 * + Krylov + work, never RSS) within memoryPercent. A sequence run is compared on its totals (the
 * aggregate result: iterations and work summed over the systems, the largest true residual), and its
 * preconditioner rebuilds may not grow. Iterations, causes, work counters and byte counts are
 * deterministic for one code version, so the default check is machine-independent.
 *
 * Time only when asked, always as medians of the timed repeats (setup + solve seconds):
 *  - noise band (`check --time`): now ≤ baseline · max(NOISE_BAND_MIN, 1 + NOISE_BAND_FACTOR · (n_base + n_now)),
 *    where n_X is the larger of the pair's own relative spread (max − min) / median in run X and the
 *    timing noise of run X's whole sweep (timingNoise: the median of those spreads over its repeated runs);
 *  - fixed band (`--time-ratio r`, or timeRatio in a tolerances file): now ≤ baseline · r.
 * Pairs whose medians are both below MIN_TIMED_SECONDS are too short to compare.
 */
import { readFileSync } from 'node:fs';
import pc from 'picocolors';
import { isSolved, type Cause } from '../solvers/types.js';
import { UserError } from '../util/errors.js';
import type { MatrixInfo, ResultsDoc, RunRecord } from './results-types.js';
import { bufferBytes } from './results.js';
import { relativeSpread, timingNoise } from './timing.js';

export interface Tolerance {
  /** Allowed extra iterations (absolute). */
  iterationsSlack: number;
  /** Allowed extra iterations in percent of the baseline; the larger of slack and percent applies. */
  iterationsPercent: number;
  /** Allowed growth of counted buffer bytes, percent. */
  memoryPercent: number;
  /** The true residual may grow to baseline · residualFactor (and always to rtol). */
  residualFactor: number;
  /** Allowed growth of each work counter, percent (0: exact). */
  workPercent: number;
  /** When set: fail when the median setup + solve seconds grow by more than this factor (a fixed band). */
  timeRatio?: number;
}

export const DEFAULT_TOLERANCE: Readonly<Tolerance> = Object.freeze({
  iterationsSlack: 0,
  iterationsPercent: 0,
  memoryPercent: 10,
  residualFactor: 10,
  workPercent: 0,
});

/** The noise band: at least ×NOISE_BAND_MIN, else 1 + NOISE_BAND_FACTOR · (noise of the baseline + noise now). */
export const NOISE_BAND_FACTOR = 3;
export const NOISE_BAND_MIN = 1.25;

/** Work counter names, in the order tables and messages list them. */
export const WORK_COUNTERS = ['matvecs', 'preconditionerApplies', 'innerIterations', 'flops', 'bytes'] as const;
export type WorkCounterName = (typeof WORK_COUNTERS)[number];
export type WorkCountsLike = Record<WorkCounterName, number>;
export interface RunWorkCounts { setup: WorkCountsLike; solve: WorkCountsLike }

/** Full work counters of a result, when it carries them (every counter a number). */
export function workCounts(result: unknown): RunWorkCounts | undefined {
  const w = (result as { work?: { setup?: Record<string, unknown>; solve?: Record<string, unknown> } } | undefined)?.work;
  const phase = (p: Record<string, unknown> | undefined): WorkCountsLike | undefined => {
    if (!p) return undefined;
    const out = {} as WorkCountsLike;
    for (const k of WORK_COUNTERS) { if (typeof p[k] !== 'number') return undefined; out[k] = p[k] as number; }
    return out;
  };
  const setup = phase(w?.setup), solve = phase(w?.solve);
  return setup && solve ? { setup, solve } : undefined;
}

/** Default band for --time-ratio given without a value: timing on shared CI machines is noisy. */
export const DEFAULT_TIME_RATIO = 3;
/** Runs shorter than this (setup + solve, both sides) are too short to compare times. */
export const MIN_TIMED_SECONDS = 0.005;

export const TOLERANCES_SCHEMA = 'slabbench-tolerances/1';

export interface ToleranceFile {
  default?: Partial<Tolerance>;
  recipes?: Record<string, Partial<Tolerance>>;
}

const TOLERANCE_KEYS: Record<keyof Tolerance, { min: number; integer: boolean; what: string }> = {
  iterationsSlack: { min: 0, integer: true, what: 'an integer ≥ 0' },
  iterationsPercent: { min: 0, integer: false, what: 'a number ≥ 0' },
  memoryPercent: { min: 0, integer: false, what: 'a number ≥ 0' },
  residualFactor: { min: 1, integer: false, what: 'a number ≥ 1' },
  workPercent: { min: 0, integer: false, what: 'a number ≥ 0' },
  timeRatio: { min: 1, integer: false, what: 'a number ≥ 1' },
};

function parseToleranceObject(v: unknown, where: string): Partial<Tolerance> {
  if (typeof v !== 'object' || v === null || Array.isArray(v)) throw new UserError(`${where}: expected an object`);
  const out: Partial<Tolerance> = {};
  for (const [k, x] of Object.entries(v)) {
    const spec = (TOLERANCE_KEYS as Record<string, { min: number; integer: boolean; what: string } | undefined>)[k];
    if (!spec) throw new UserError(`${where}.${k}: unknown tolerance (expected ${Object.keys(TOLERANCE_KEYS).join(', ')})`);
    if (typeof x !== 'number' || !Number.isFinite(x) || x < spec.min || (spec.integer && !Number.isInteger(x))) {
      throw new UserError(`${where}.${k}: expected ${spec.what}, got ${JSON.stringify(x)}`);
    }
    (out as Record<string, number>)[k] = x;
  }
  return out;
}

/** Validate a tolerances file: { "schema": "slabbench-tolerances/1", "default": {…}, "recipes": { NAME: {…} } }. */
export function parseToleranceFile(obj: unknown, file: string): ToleranceFile {
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) throw new UserError(`${file}: expected a JSON object`);
  const o = obj as Record<string, unknown>;
  if (o.schema !== TOLERANCES_SCHEMA) throw new UserError(`${file}: schema: expected "${TOLERANCES_SCHEMA}", got ${JSON.stringify(o.schema)}`);
  for (const k of Object.keys(o)) {
    if (!['schema', 'default', 'recipes', '$comment'].includes(k)) throw new UserError(`${file}: ${k}: unknown key (expected schema, default, recipes)`);
  }
  const out: ToleranceFile = {};
  if (o.default !== undefined) out.default = parseToleranceObject(o.default, `${file}: default`);
  if (o.recipes !== undefined) {
    if (typeof o.recipes !== 'object' || o.recipes === null || Array.isArray(o.recipes)) throw new UserError(`${file}: recipes: expected an object keyed by recipe name`);
    out.recipes = {};
    for (const [name, t] of Object.entries(o.recipes)) out.recipes[name] = parseToleranceObject(t, `${file}: recipes.${name}`);
  }
  return out;
}

export function readToleranceFile(path: string): ToleranceFile {
  let obj: unknown;
  try {
    obj = JSON.parse(readFileSync(path, 'utf8'));
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UserError(`${path}: ${code === 'ENOENT' ? 'no such tolerances file' : code ? `cannot read (${code})` : `not valid JSON (${(e as Error).message})`}`);
  }
  return parseToleranceFile(obj, path);
}

/** Built-in defaults, then the file's "default", then command-line options, then the file's per-recipe entry. */
export function toleranceFor(recipe: string, cli: Partial<Tolerance>, file?: ToleranceFile): Tolerance {
  return { ...DEFAULT_TOLERANCE, ...file?.default, ...cli, ...file?.recipes?.[recipe] };
}

/** Largest iteration count that still passes. */
export function allowedIterations(base: number, t: Tolerance): number {
  return base + Math.max(t.iterationsSlack, Math.ceil((base * t.iterationsPercent) / 100 - 1e-9));
}

export type Verdict = 'pass' | 'improved' | 'regressed' | 'missing' | 'new' | 'error';

export interface RunNumbers {
  cause: Cause | 'error';
  iterations?: number;
  residual?: number;
  bytes?: number;
  /** Median setup + solve seconds over the repeats (the one timed solve for older results). */
  seconds?: number;
  /** Relative spread (max − min) / median of the repeats, when there were at least two. */
  spread?: number;
  work?: RunWorkCounts;
}

export interface CheckRow {
  matrix: string;
  recipe: string;
  verdict: Verdict;
  /** Why it fails (empty when it passes). */
  problems: string[];
  /** Worth knowing, not failing: improvements, changed recipe parameters, no baseline. */
  notes: string[];
  base?: RunNumbers;
  now?: RunNumbers;
  /** Median (setup + solve) now / baseline, when time was compared. */
  timeRatio?: number;
  /** The largest ratio that passes (noise band or fixed band). */
  timeLimit?: number;
  /** Work counters that differ, as "phase counter base→now". */
  workChanges?: string[];
  tolerance: Tolerance;
}

export interface CheckOutcome {
  rows: CheckRow[];
  failures: number;
  /** Run-level notes: suite changed, different machine. */
  notes: string[];
  timeCompared: boolean;
  /** Timing noise of each document (timingNoise), when time was compared. */
  noise?: { baseline?: number; current?: number };
}

export interface CheckOptions {
  cli?: Partial<Tolerance>;
  file?: ToleranceFile;
  /** 'noise': compare median times within the noise band (pairs with a timeRatio use their fixed band). */
  time?: 'noise';
}

function numbers(r: RunRecord): RunNumbers {
  const res = r.result;
  if (!res) return { cause: 'error' };
  const spread = relativeSpread(r.repeats);
  const work = workCounts(res);
  return {
    cause: res.cause,
    iterations: res.iterations,
    residual: res.trueRelativeResidual,
    bytes: bufferBytes(r),
    seconds: r.repeats ? r.repeats.median.totalSeconds : res.timing.setupSeconds + res.timing.solveSeconds,
    ...(spread !== undefined ? { spread } : {}),
    ...(work ? { work } : {}),
  };
}

/** The noise band's largest passing ratio for one pair (see the header comment). */
export function noiseBand(pairBase: number | undefined, sweepBase: number | undefined, pairNow: number | undefined, sweepNow: number | undefined): number {
  const nb = Math.max(pairBase ?? 0, sweepBase ?? 0);
  const nc = Math.max(pairNow ?? 0, sweepNow ?? 0);
  return Math.max(NOISE_BAND_MIN, 1 + NOISE_BAND_FACTOR * (nb + nc));
}

function fmtNum(x: number | undefined): string {
  if (x === undefined) return '—';
  if (!Number.isFinite(x)) return String(x);
  return x === 0 ? '0' : x.toExponential(2);
}

function fmtBytes(b: number | undefined): string {
  if (b === undefined) return '—';
  if (b < 1024) return `${b} B`;
  if (b < 1024 ** 2) return `${(b / 1024).toFixed(1)} KiB`;
  if (b < 1024 ** 3) return `${(b / 1024 ** 2).toFixed(1)} MiB`;
  return `${(b / 1024 ** 3).toFixed(2)} GiB`;
}

/** Recipe fields that differ, as "field a→b" (nested inner recipe fields as inner.field). */
function recipeDiff(a: Record<string, unknown>, b: Record<string, unknown>, prefix = ''): string[] {
  const out: string[] = [];
  for (const k of new Set([...Object.keys(a), ...Object.keys(b)])) {
    if (k === 'name') continue;
    const x = a[k];
    const y = b[k];
    if (typeof x === 'object' && x !== null && typeof y === 'object' && y !== null) {
      out.push(...recipeDiff(x as Record<string, unknown>, y as Record<string, unknown>, `${prefix}${k}.`));
    } else if (JSON.stringify(x) !== JSON.stringify(y)) {
      out.push(`${prefix}${k} ${JSON.stringify(x)}→${JSON.stringify(y)}`);
    }
  }
  return out;
}

function matrixDiff(a: MatrixInfo | undefined, b: MatrixInfo | undefined): string[] {
  if (!a || !b) return [];
  const out: string[] = [];
  for (const k of ['n', 'nnz', 'bs', 'nSlabs'] as const) if (a[k] !== b[k]) out.push(`${k} ${a[k]}→${b[k]}`);
  return out;
}

export function compareWithBaseline(current: ResultsDoc, baseline: ResultsDoc, opts: CheckOptions = {}): CheckOutcome {
  const notes: string[] = [];
  const noiseBase = timingNoise(baseline.runs);
  const noiseNow = timingNoise(current.runs);
  let workMissingNoted = false;
  if (current.suite.fingerprint && baseline.suite.fingerprint && current.suite.fingerprint !== baseline.suite.fingerprint) {
    notes.push('the suite changed since the baseline (matrices or recipes edited); numbers are compared pair by pair');
  }
  if (current.parameters.shard) {
    const { index, count } = current.parameters.shard;
    notes.push(`these results are shard ${index}/${count} only: pairs of other shards show as missing (merge the shards first)`);
  }
  const baseRuns = new Map(baseline.runs.map((r) => [`${r.matrix}\u0000${r.recipe}`, r]));
  const nowRuns = new Map(current.runs.map((r) => [`${r.matrix}\u0000${r.recipe}`, r]));
  const baseInfo = new Map(baseline.matrices.map((m) => [m.name, m]));
  const nowInfo = new Map(current.matrices.map((m) => [m.name, m]));
  const rows: CheckRow[] = [];
  let timeCompared = false;

  // Baseline order first (stable tables across runs), then pairs new in this run.
  const keys = [...baseRuns.keys(), ...[...nowRuns.keys()].filter((k) => !baseRuns.has(k))];
  for (const key of keys) {
    const b = baseRuns.get(key);
    const c = nowRuns.get(key);
    const [matrix, recipe] = key.split('\u0000');
    const tol = toleranceFor(recipe, opts.cli ?? {}, opts.file);
    const row: CheckRow = { matrix, recipe, verdict: 'pass', problems: [], notes: [], tolerance: tol };
    rows.push(row);
    if (b) row.base = numbers(b);
    if (c) row.now = numbers(c);
    if (!c) { row.verdict = 'missing'; row.problems.push('in the baseline but not in this run'); continue; }
    if (!b) { row.verdict = 'new'; row.notes.push('no baseline for this pair (accept it with --update)'); continue; }
    if (!c.result) {
      if (!b.result) { row.notes.push(`could not run, as in the baseline: ${c.error}`); continue; }
      row.verdict = 'error';
      row.problems.push(`could not run: ${c.error}`);
      continue;
    }
    if (!b.result) { row.verdict = 'improved'; row.notes.push('runs now; the baseline could not run it'); continue; }

    const md = matrixDiff(baseInfo.get(matrix), nowInfo.get(matrix));
    if (md.length) row.problems.push(`matrix changed (${md.join(', ')}): numbers not comparable, update the baseline`);
    const rd = recipeDiff(b.recipeParams as unknown as Record<string, unknown>, c.recipeParams as unknown as Record<string, unknown>);
    if (rd.length) row.notes.push(`recipe changed: ${rd.join(', ')}`);

    const br = b.result;
    const cr = c.result;
    let improved = false;
    if (br.cause !== cr.cause) {
      if (!isSolved(br.cause) && isSolved(cr.cause)) { improved = true; row.notes.push(`cause ${br.cause} → ${cr.cause}`); }
      else row.problems.push(`cause ${br.cause} → ${cr.cause}`);
    }
    const allowed = allowedIterations(br.iterations, tol);
    if (cr.iterations > allowed) {
      row.problems.push(`iterations ${br.iterations} → ${cr.iterations} (allowed ≤ ${allowed})`);
    } else if (cr.iterations < br.iterations) {
      improved = true;
      row.notes.push(`iterations ${br.iterations} → ${cr.iterations}`);
    }
    const residualLimit = Math.max(c.recipeParams.rtol, br.trueRelativeResidual * tol.residualFactor);
    if (!(cr.trueRelativeResidual <= residualLimit)) {
      row.problems.push(`true residual ${fmtNum(br.trueRelativeResidual)} → ${fmtNum(cr.trueRelativeResidual)} (allowed ≤ ${fmtNum(residualLimit)})`);
    }
    const bb = row.base!.bytes!;
    const cb = row.now!.bytes!;
    const bytesLimit = bb * (1 + tol.memoryPercent / 100);
    if (cb > bytesLimit) row.problems.push(`buffer bytes ${fmtBytes(bb)} → ${fmtBytes(cb)} (+${(((cb - bb) / bb) * 100).toFixed(1)}%, allowed +${tol.memoryPercent}%)`);
    const bw = row.base!.work, cw = row.now!.work;
    if (bw && cw) {
      const changes: string[] = [];
      // Solve-phase work follows the iterations: when they grew within an allowed slack, it is not compared.
      const slackUsed = cr.iterations > br.iterations && cr.iterations <= allowed;
      if (slackUsed) row.notes.push('solve-phase work not compared: the iterations grew within the allowed slack');
      for (const ph of slackUsed ? (['setup'] as const) : (['setup', 'solve'] as const)) {
        for (const k of WORK_COUNTERS) {
          const x = bw[ph][k], y = cw[ph][k];
          if (x === y) continue;
          changes.push(`${ph} ${k} ${x}→${y}`);
          const factor = 1 + tol.workPercent / 100;
          const limit = x * factor;
          if (y > limit) row.problems.push(`${ph} ${k} ${x} → ${y} (allowed ≤ ${Math.floor(limit)}${factor > 1 ? `, +${((factor - 1) * 100).toPrecision(3)}%` : ', exact'})`);
          else if (y < x) improved = true;
        }
      }
      if (changes.length) { row.workChanges = changes; if (!row.problems.some((p) => /^(setup|solve) /.test(p))) row.notes.push(`work ${changes.join(', ')}`); }
    } else if (!workMissingNoted && (bw || cw)) {
      workMissingNoted = true;
      notes.push(`work counters are missing from the ${bw ? 'current results' : 'baseline'}: not compared (refresh the baseline with --update)`);
    }
    // sequences: the totals above; the preconditioner set-ups must match too (deterministic for a policy)
    const bq = b.sequence?.totals, cq = c.sequence?.totals;
    if (bq && cq) {
      if (bq.systems !== cq.systems) row.problems.push(`sequence length ${bq.systems} → ${cq.systems} systems: numbers not comparable, update the baseline`);
      else if (cq.rebuilds > bq.rebuilds) row.problems.push(`preconditioner rebuilds ${bq.rebuilds} → ${cq.rebuilds} over the sequence`);
      else if (cq.rebuilds < bq.rebuilds) row.notes.push(`preconditioner rebuilds ${bq.rebuilds} → ${cq.rebuilds} over the sequence`);
    } else if (bq || cq) {
      row.problems.push(`${bq ? 'was' : 'is now'} a sequence of ${(bq ?? cq)!.systems} systems: numbers not comparable, update the baseline`);
    }
    if (tol.timeRatio !== undefined || opts.time === 'noise') {
      timeCompared = true;
      const bs = row.base!.seconds!;
      const cs = row.now!.seconds!;
      if (bs < MIN_TIMED_SECONDS && cs < MIN_TIMED_SECONDS) {
        row.notes.push('too fast to compare times');
      } else {
        row.timeRatio = cs / Math.max(bs, MIN_TIMED_SECONDS);
        row.timeLimit = tol.timeRatio ?? noiseBand(row.base!.spread, noiseBase, row.now!.spread, noiseNow);
        if (row.timeRatio > row.timeLimit) {
          row.problems.push(`median time ×${row.timeRatio.toFixed(2)} (allowed ×${row.timeLimit.toFixed(2)}${tol.timeRatio === undefined ? ', noise band' : ''})`);
        }
      }
    }
    row.verdict = row.problems.length ? 'regressed' : improved ? 'improved' : 'pass';
  }
  const failures = rows.filter((r) => r.problems.length > 0).length;
  if (timeCompared && (baseline.runs.some((r) => !r.repeats) || current.runs.some((r) => !r.repeats))) {
    notes.push('some runs have no timed repeats (older results): their single time is compared as the median');
  }
  if (timeCompared && baseline.cpu !== current.cpu) notes.push(`different CPU than the baseline (${baseline.cpu} → ${current.cpu}): times may not be comparable`);
  return { rows, failures, notes, timeCompared, ...(timeCompared ? { noise: { baseline: noiseBase, current: noiseNow } } : {}) };
}

function pad(s: string, w: number, right = false): string {
  const len = [...s].length;
  return len >= w ? s : right ? ' '.repeat(w - len) + s : s + ' '.repeat(w - len);
}

/** The diff table (plain text; colour only when asked, i.e. when stdout is a terminal). */
export function renderCheckTable(out: CheckOutcome, opts: { color?: boolean } = {}): string {
  const c = opts.color ? pc : { red: (s: string) => s, green: (s: string) => s, yellow: (s: string) => s, bold: (s: string) => s, dim: (s: string) => s };
  const header = ['matrix', 'recipe', 'iterations', 'cause', 'true residual (baseline)', 'buffer bytes', 'work', ...(out.timeCompared ? ['time (allowed)'] : []), 'verdict'];
  const rows = out.rows.map((r) => {
    const it = r.base?.iterations === r.now?.iterations ? `${r.now?.iterations ?? '—'}` : `${r.base?.iterations ?? '—'} → ${r.now?.iterations ?? '—'}`;
    const cause = r.base?.cause === r.now?.cause ? `${r.now?.cause ?? '—'}` : `${r.base?.cause ?? '—'} → ${r.now?.cause ?? '—'}`;
    const res = `${fmtNum(r.now?.residual)} (${fmtNum(r.base?.residual)})`;
    const bytes = r.base?.bytes === r.now?.bytes ? fmtBytes(r.now?.bytes) : `${fmtBytes(r.base?.bytes)} → ${fmtBytes(r.now?.bytes)}`;
    const time = r.timeRatio === undefined ? '—' : `×${r.timeRatio.toFixed(2)} (≤ ×${r.timeLimit!.toFixed(2)})`;
    const work = !r.base?.work || !r.now?.work ? '—' : r.workChanges?.length ? `${r.workChanges.length} changed` : 'same';
    return [r.matrix, r.recipe, it, cause, res, bytes, work, ...(out.timeCompared ? [time] : []), r.verdict];
  });
  const widths = header.map((h, i) => Math.max([...h].length, ...rows.map((r) => [...r[i]].length)));
  const lines: string[] = [];
  lines.push(c.bold(header.map((h, i) => pad(h, widths[i])).join('  ').trimEnd()));
  out.rows.forEach((r, k) => {
    const cells = rows[k].map((s, i) => pad(s, widths[i]));
    const v = cells.length - 1;
    cells[v] = r.problems.length ? c.red(cells[v]) : r.verdict === 'improved' || r.verdict === 'new' ? c.yellow(cells[v]) : c.green(cells[v]);
    lines.push(cells.join('  ').trimEnd());
  });
  lines.push('');
  for (const r of out.rows) {
    for (const p of r.problems) lines.push(c.red(`FAIL ${r.matrix} × ${r.recipe}: ${p}`));
    for (const n of r.notes) lines.push(c.dim(`note ${r.matrix} × ${r.recipe}: ${n}`));
  }
  for (const n of out.notes) lines.push(c.dim(`note: ${n}`));
  if (out.noise) {
    const f = (x: number | undefined): string => (x === undefined ? 'not measured' : `${(x * 100).toPrecision(2)}%`);
    lines.push(c.dim(`note: time compared as medians of repeats; timing noise: baseline ${f(out.noise.baseline)}, now ${f(out.noise.current)}`));
  }
  const nPass = out.rows.length - out.failures;
  lines.push(out.failures === 0
    ? c.green(`${nPass} of ${out.rows.length} pairs within tolerance`)
    : c.red(`${out.failures} of ${out.rows.length} pairs regressed`));
  return `${lines.join('\n')}\n`;
}

function xmlEscape(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;')
    // XML 1.0 forbids most control characters even when escaped.
    // eslint-disable-next-line no-control-regex
    .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f]/g, '');
}

/** JUnit XML: one testcase per matrix × recipe (classname = matrix, name = recipe), failures with the reasons. */
export function junitXml(out: CheckOutcome, opts: { suiteName?: string; timestamp?: string } = {}): string {
  const name = opts.suiteName ?? 'slabbench check';
  const seconds = (r: CheckRow): string => (r.now?.seconds ?? 0).toFixed(6);
  const total = out.rows.reduce((s, r) => s + (r.now?.seconds ?? 0), 0);
  const lines = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<testsuites name="${xmlEscape(name)}" tests="${out.rows.length}" failures="${out.failures}" errors="0" time="${total.toFixed(6)}">`,
    `  <testsuite name="${xmlEscape(name)}" tests="${out.rows.length}" failures="${out.failures}" errors="0" skipped="0" time="${total.toFixed(6)}"${opts.timestamp ? ` timestamp="${xmlEscape(opts.timestamp)}"` : ''}>`,
  ];
  for (const r of out.rows) {
    const open = `    <testcase classname="${xmlEscape(r.matrix)}" name="${xmlEscape(r.recipe)}" time="${seconds(r)}"`;
    const body: string[] = [];
    if (r.problems.length) {
      body.push(`      <failure type="${r.verdict}" message="${xmlEscape(r.problems.join('; '))}">${xmlEscape(r.problems.join('\n'))}</failure>`);
    }
    const detail = [
      `iterations: ${r.base?.iterations ?? '-'} -> ${r.now?.iterations ?? '-'}`,
      `cause: ${r.base?.cause ?? '-'} -> ${r.now?.cause ?? '-'}`,
      `true relative residual: ${fmtNum(r.base?.residual)} -> ${fmtNum(r.now?.residual)}`,
      `buffer bytes: ${r.base?.bytes ?? '-'} -> ${r.now?.bytes ?? '-'}`,
      ...(r.workChanges?.length ? [`work: ${r.workChanges.join(', ')}`] : []),
      ...(r.timeRatio !== undefined ? [`median time ratio: ${r.timeRatio.toFixed(3)} (allowed ${r.timeLimit!.toFixed(3)})`] : []),
      ...r.notes.map((n) => `note: ${n}`),
    ];
    body.push(`      <system-out>${xmlEscape(detail.join('\n'))}</system-out>`);
    lines.push(`${open}>`, ...body, '    </testcase>');
  }
  lines.push('  </testsuite>', '</testsuites>');
  return `${lines.join('\n')}\n`;
}
