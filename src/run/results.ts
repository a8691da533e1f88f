/**
 * The results document of a sweep (results.json) and its CSV twin (results.csv).
 * Types live in results-types.ts; this file builds, validates, and writes them.
 */
import { blockPattern } from '../report/pattern.js';
import { execFileSync } from 'node:child_process';
import { realpathSync, readFileSync } from 'node:fs';
import { cpus } from 'node:os';
import { fileURLToPath } from 'node:url';
import type { Bsr } from '../sparse/types.js';
import { writeFileAtomicSync } from '../util/atomic-write.js';
import { UserError } from '../util/errors.js';
import { VERSION } from '../version.js';
import { CAUSES, outcomeOf, type Cause } from '../solvers/types.js';
import { RESULTS_SCHEMA, RESULTS_SCHEMA_V1, type MatrixInfo, type ResultsDoc, type RunRecord } from './results-types.js';

/** Folder holding slabbench's package.json (src/run and dist/run are both two levels down). */
function packageRoot(): string {
  return fileURLToPath(new URL('../../', import.meta.url));
}

/**
 * Commit of the slabbench checkout being measured, when it is a git work tree; undefined otherwise
 * (an installed package inside someone else's repository does not borrow that repository's commit).
 */
export function gitCommit(root: string = packageRoot()): string | undefined {
  try {
    const out = execFileSync('git', ['rev-parse', '--show-toplevel', 'HEAD'], {
      cwd: root, encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'], timeout: 5000,
    }).trim().split('\n');
    if (out.length !== 2) return undefined;
    if (realpathSync(out[0]) !== realpathSync(root)) return undefined;
    return /^[0-9a-f]{40,64}$/.test(out[1]) ? out[1] : undefined;
  } catch {
    return undefined; // no git, not a repository, or no commit yet
  }
}

export interface Environment {
  slabbench: string;
  commit?: string;
  node: string;
  cpu: string;
  date: string;
}

export function environment(): Environment {
  const commit = gitCommit();
  return {
    slabbench: VERSION,
    ...(commit ? { commit } : {}),
    node: process.version,
    cpu: cpus()[0]?.model?.trim() || 'unknown',
    date: new Date().toISOString(),
  };
}

export function matrixInfo(
  base: { name: string; source: 'file' | 'generated'; path: string; note?: string },
  loaded: {
    csr: { nRows: number; values: Float64Array }; bsr: Bsr; bs: number; blockSizeSource?: string; slabOffsets?: Int32Array;
    /** A loaded system's sizes and block structure, read without building a format it does not hold. */
    n?: number; nnz?: number; blockStructure?: () => Bsr;
  },
): MatrixInfo {
  const bsr = loaded.blockStructure ? loaded.blockStructure() : loaded.bsr;
  return {
    name: base.name,
    source: base.source,
    path: base.path,
    ...(base.note !== undefined ? { note: base.note } : {}),
    n: loaded.n ?? loaded.csr.nRows,
    nnz: loaded.nnz ?? loaded.csr.values.length,
    bs: loaded.bs,
    nBlockRows: bsr.nBlockRows,
    nBlocks: bsr.colInd.length,
    nSlabs: loaded.slabOffsets && loaded.slabOffsets.length >= 2 ? loaded.slabOffsets.length - 1 : 1,
    // 64 cells keep results.json small; the report draws whatever grid it is given.
    pattern: blockPattern(bsr, loaded.slabOffsets, 64),
    ...(loaded.blockSizeSource !== undefined ? { blockSizeSource: loaded.blockSizeSource } : {}),
  };
}

/** Sum of the counted buffers (matrix, preconditioner, Krylov basis, work): machine-independent, unlike RSS. */
export function bufferBytes(r: RunRecord): number | undefined {
  const m = r.result?.memory;
  if (!m) return undefined;
  return m.matrixBytes + m.preconditionerBytes + m.krylovBytes + m.workBytes;
}

export const CSV_COLUMNS = [
  'matrix', 'recipe', 'krylov', 'preconditioner', 'ordering', 'restart', 'rtol',
  'outcome', 'cause', 'converged', 'iterations', 'restarts', 'trueRelativeResidual',
  'setupSeconds', 'solveSeconds', 'matrixBytes', 'preconditionerBytes', 'krylovBytes', 'workBytes',
  'bufferBytes', 'peakBytes',
  'matvecs', 'preconditionerApplies', 'innerIterations', 'setupFlops', 'setupBytes', 'solveFlops', 'solveBytes',
  'error',
  // timing protocol (added at the end, so older readers keep their columns)
  'repeats', 'totalSecondsMedian', 'totalSecondsMin', 'totalSecondsMax', 'repeatsConsistent', 'modeledSeconds',
  // sequences (empty for a single system): systems solved in order and preconditioner set-ups
  'systems', 'rebuilds',
] as const;

function csvCell(v: unknown): string {
  if (v === undefined || v === null) return '';
  const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : String(v)) : String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One row per run with the key numbers (the JSON document holds everything else). */
export function resultsCsv(doc: ResultsDoc): string {
  const lines = [CSV_COLUMNS.join(',')];
  for (const run of doc.runs) {
    const r = run.result;
    const p = run.recipeParams;
    const row: Record<(typeof CSV_COLUMNS)[number], unknown> = {
      matrix: run.matrix, recipe: run.recipe, krylov: p.krylov, preconditioner: p.preconditioner,
      ordering: p.ordering, restart: p.restart, rtol: p.rtol,
      outcome: r?.outcome ?? 'error', cause: r?.cause ?? 'error', converged: r ? r.converged : false, iterations: r?.iterations,
      restarts: r?.restarts, trueRelativeResidual: r?.trueRelativeResidual,
      setupSeconds: r?.timing.setupSeconds, solveSeconds: r?.timing.solveSeconds,
      matrixBytes: r?.memory.matrixBytes, preconditionerBytes: r?.memory.preconditionerBytes,
      krylovBytes: r?.memory.krylovBytes, workBytes: r?.memory.workBytes, bufferBytes: bufferBytes(run),
      peakBytes: r?.memory.peakBytes,
      matvecs: r?.work?.solve.matvecs, preconditionerApplies: r?.work?.solve.preconditionerApplies,
      innerIterations: r?.work?.solve.innerIterations, setupFlops: r?.work?.setup.flops, setupBytes: r?.work?.setup.bytes,
      solveFlops: r?.work?.solve.flops, solveBytes: r?.work?.solve.bytes,
      error: run.error,
      repeats: run.repeats?.count, totalSecondsMedian: run.repeats?.median.totalSeconds,
      totalSecondsMin: run.repeats?.min.totalSeconds, totalSecondsMax: run.repeats?.max.totalSeconds,
      repeatsConsistent: run.repeats?.consistent, modeledSeconds: run.modeled?.totalSeconds,
      systems: run.sequence?.totals.systems, rebuilds: run.sequence?.totals.rebuilds,
    };
    lines.push(CSV_COLUMNS.map((c) => csvCell(row[c])).join(','));
  }
  return `${lines.join('\n')}\n`;
}

/** JSON cannot hold NaN/Infinity; they become strings so a diverged run's numbers survive the round trip. */
function jsonReplacer(_key: string, v: unknown): unknown {
  if (typeof v === 'number' && !Number.isFinite(v)) return String(v);
  return v;
}

export function resultsJson(doc: ResultsDoc): string {
  return `${JSON.stringify(doc, jsonReplacer, 1)}\n`;
}

/** Write results.json and results.csv (each atomically). */
export function writeResults(doc: ResultsDoc, jsonPath: string, csvPath: string): void {
  writeFileAtomicSync(jsonPath, resultsJson(doc));
  writeFileAtomicSync(csvPath, resultsCsv(doc));
}

const NON_FINITE: Record<string, number> = { NaN: Number.NaN, Infinity: Number.POSITIVE_INFINITY, '-Infinity': Number.NEGATIVE_INFINITY };

/** Numbers written as "NaN"/"Infinity" by resultsJson come back as numbers in the numeric result fields. */
function reviveNumbers(r: Record<string, unknown> | undefined): void {
  if (!r) return;
  for (const k of ['trueRelativeResidual', 'referenceNorm', 'trueReferenceNorm']) {
    const v = r[k];
    if (typeof v === 'string' && v in NON_FINITE) r[k] = NON_FINITE[v];
  }
  const h = r.history;
  if (Array.isArray(h)) for (let i = 0; i < h.length; i++) if (typeof h[i] === 'string' && h[i] in NON_FINITE) h[i] = NON_FINITE[h[i]];
}

/**
 * Read and check a results document (a sweep's results.json, a merged file, or a baseline).
 * Checks the schema and the fields check/merge/report rely on; one-line UserError otherwise.
 */
export function readResults(path: string): ResultsDoc {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UserError(`${path}: ${code === 'ENOENT' ? 'no such results file' : `cannot read (${code ?? String(e)})`}`);
  }
  let obj: unknown;
  try {
    obj = JSON.parse(text);
  } catch (e) {
    throw new UserError(`${path}: not valid JSON (${(e as Error).message})`);
  }
  return validateResults(obj, path);
}

export function validateResults(obj: unknown, path: string): ResultsDoc {
  const fail = (what: string): never => { throw new UserError(`${path}: ${what}`); };
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) return fail('expected a results document (JSON object)');
  const d = obj as Record<string, unknown>;
  if (d.schema !== RESULTS_SCHEMA && d.schema !== RESULTS_SCHEMA_V1) {
    const newer = typeof d.schema === 'string' && /^slabbench-results\/\d+$/.test(d.schema)
      && Number(d.schema.split('/')[1]) > Number(RESULTS_SCHEMA.split('/')[1]);
    fail(`schema ${JSON.stringify(d.schema)} is not a results version this slabbench reads (it reads "${RESULTS_SCHEMA}" and converts "${RESULTS_SCHEMA_V1}")`
      + (newer ? '; the file was written by a newer slabbench' : '; regenerate it with `slabbench sweep`'));
  }
  const fromV1 = d.schema === RESULTS_SCHEMA_V1;
  if (!Array.isArray(d.runs)) fail('runs: expected an array');
  if (!Array.isArray(d.matrices)) fail('matrices: expected an array');
  if (typeof d.parameters !== 'object' || d.parameters === null) fail('parameters: expected an object');
  if (typeof d.suite !== 'object' || d.suite === null) fail('suite: expected an object');
  (d.runs as unknown[]).forEach((r, i) => {
    if (typeof r !== 'object' || r === null) fail(`runs[${i}]: expected an object`);
    const run = r as Record<string, unknown>;
    if (typeof run.matrix !== 'string') fail(`runs[${i}].matrix: expected a string`);
    if (typeof run.recipe !== 'string') fail(`runs[${i}].recipe: expected a string`);
    if (typeof run.recipeParams !== 'object' || run.recipeParams === null) fail(`runs[${i}].recipeParams: expected an object`);
    if (fromV1) upgradeRecipeV1(run.recipeParams as Record<string, unknown>);
    if (run.result === undefined && typeof run.error !== 'string') fail(`runs[${i}]: expected "result" or "error"`);
    if (run.result !== undefined) {
      const res = run.result as Record<string, unknown>;
      if (typeof res !== 'object' || res === null) fail(`runs[${i}].result: expected an object`);
      if (fromV1) {
        if (typeof res.reason !== 'string') fail(`runs[${i}].result.reason: expected a string`);
        const problem = upgradeResultV1(res);
        if (problem) fail(`runs[${i}].result.${problem}`);
      }
      if (typeof res.cause !== 'string' || !(CAUSES as readonly string[]).includes(res.cause)) {
        fail(`runs[${i}].result.cause: expected one of ${CAUSES.join(', ')}, got ${JSON.stringify(res.cause)}`);
      }
      if (res.outcome !== outcomeOf(res.cause as Cause)) {
        fail(`runs[${i}].result.outcome: expected "${outcomeOf(res.cause as Cause)}" for cause ${res.cause}, got ${JSON.stringify(res.outcome)}`);
      }
      if (typeof res.iterations !== 'number') fail(`runs[${i}].result.iterations: expected a number`);
      if (typeof res.memory !== 'object' || res.memory === null) fail(`runs[${i}].result.memory: expected an object`);
      if (res.work !== undefined) {
        const problem = workProblem(res.work);
        if (problem) fail(`runs[${i}].result.work${problem}`);
      }
      if (typeof res.timing !== 'object' || res.timing === null) fail(`runs[${i}].result.timing: expected an object`);
      reviveNumbers(res);
    }
  });
  if (fromV1) {
    d.schema = RESULTS_SCHEMA;
    d.convertedFrom = RESULTS_SCHEMA_V1;
  }
  return obj as ResultsDoc;
}

const WORK_FIELDS = ['matvecs', 'preconditionerApplies', 'innerIterations', 'flops', 'bytes'] as const;

/** Where a `work` value departs from { setup, solve } of WorkCounts (".solve.flops: …"), or undefined. */
function workProblem(w: unknown): string | undefined {
  if (typeof w !== 'object' || w === null) return ': expected an object { setup, solve }';
  for (const phase of ['setup', 'solve'] as const) {
    const p = (w as Record<string, unknown>)[phase];
    if (typeof p !== 'object' || p === null) return `.${phase}: expected an object`;
    for (const k of WORK_FIELDS) {
      const v = (p as Record<string, unknown>)[k];
      if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) return `.${phase}.${k}: expected a finite number ≥ 0, got ${JSON.stringify(v)}`;
    }
  }
  return undefined;
}

// ---- reading version-1 documents ----------------------------------------------------------------

/** Version-1 stop reasons and the causes that replaced them. */
const V1_REASONS: Readonly<Record<string, Cause>> = {
  'converged-rtol': 'relative-target',
  'converged-atol': 'absolute-target',
  'max-iterations': 'iteration-budget',
  diverged: 'residual-growth',
  breakdown: 'method-breakdown',
  'non-finite': 'non-finite-value',
  'preconditioner-failed': 'preconditioner-error',
};

/** The cause for a version-1 stop reason (undefined when it was not one). */
export function causeFromV1Reason(reason: string): Cause | undefined {
  return Object.prototype.hasOwnProperty.call(V1_REASONS, reason) ? V1_REASONS[reason] : undefined;
}

const V1_WATCHED: Readonly<Record<string, string>> = { true: 'plain', preconditioned: 'left-preconditioned' };
const V1_RELATIVE_TO: Readonly<Record<string, string>> = { rhs: 'rhs', 'initial-residual': 'start-residual' };

/** Rename key `from` to `to` in place (keeping the value), when present. */
function renameKey(o: Record<string, unknown>, from: string, to: string, map?: Readonly<Record<string, string>>): string | undefined {
  if (!(from in o)) return undefined;
  const v = o[from];
  delete o[from];
  if (map) {
    if (typeof v !== 'string' || !Object.prototype.hasOwnProperty.call(map, v)) {
      return `${from}: expected one of ${Object.keys(map).join(', ')} (version 1), got ${JSON.stringify(v)}`;
    }
    o[to] = map[v];
  } else o[to] = v;
  return undefined;
}

/** Version-1 recipe: `baseline` became `relativeTo` ('initial-residual' → 'start-residual'). */
function upgradeRecipeV1(r: Record<string, unknown>): void {
  if (typeof r.baseline === 'string' && r.baseline in V1_RELATIVE_TO) r.baseline = V1_RELATIVE_TO[r.baseline];
  renameKey(r, 'baseline', 'relativeTo');
  if (typeof r.inner === 'object' && r.inner !== null) upgradeRecipeV1(r.inner as Record<string, unknown>);
}

/**
 * Version-1 SolveResult → version 2, in place: reason → cause + outcome, monitored → watched,
 * baseline → relativeTo, baselineNorm → referenceNorm, trueBaselineNorm → trueReferenceNorm,
 * residualChecks[].monitoredValue → watchedValue. Returns a problem text, or undefined.
 */
function upgradeResultV1(res: Record<string, unknown>): string | undefined {
  const cause = causeFromV1Reason(res.reason as string);
  if (!cause) return `reason: expected one of ${Object.keys(V1_REASONS).join(', ')} (version 1), got ${JSON.stringify(res.reason)}`;
  delete res.reason;
  res.cause = cause;
  res.outcome = outcomeOf(cause);
  const problem = renameKey(res, 'monitored', 'watched', V1_WATCHED)
    ?? renameKey(res, 'baseline', 'relativeTo', V1_RELATIVE_TO);
  if (problem) return problem;
  renameKey(res, 'baselineNorm', 'referenceNorm');
  renameKey(res, 'trueBaselineNorm', 'trueReferenceNorm');
  if (Array.isArray(res.residualChecks)) {
    for (const c of res.residualChecks) if (typeof c === 'object' && c !== null) renameKey(c as Record<string, unknown>, 'monitoredValue', 'watchedValue');
  }
  return undefined;
}

export function newResultsDoc(init: {
  env: Environment;
  suite: ResultsDoc['suite'];
  parameters: ResultsDoc['parameters'];
  matrices?: MatrixInfo[];
  runs?: RunRecord[];
  status?: ResultsDoc['status'];
}): ResultsDoc {
  return {
    schema: RESULTS_SCHEMA,
    ...init.env,
    suite: init.suite,
    parameters: init.parameters,
    status: init.status ?? 'complete',
    matrices: init.matrices ?? [],
    runs: init.runs ?? [],
  };
}
