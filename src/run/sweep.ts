/**
 * The sweep runner: every selected matrix × recipe pair, on worker threads (or in this thread),
 * with results in suite order whatever the number of jobs, written atomically after each finished run.
 */
import { Worker } from 'node:worker_threads';
import { createRequire } from 'node:module';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { dirname, join, relative, resolve, isAbsolute, sep } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeFileAtomicSync } from '../util/atomic-write.js';
import { UserError } from '../util/errors.js';
import { VERSION } from '../version.js';
import type { CaseBuilder, RunDeps } from './deps.js';
import { siblingModuleUrl } from './deps.js';
import { appendHistory, historyEntry, lastHistoryEntry } from './history.js';
import type { MachineProbe, MatrixInfo, ModelRates, ParallelNote, ResultsDoc, RunRecord } from './results-types.js';
import { modeledSeconds, modelRates, probeMachine, runWork } from './probe.js';
import { environment, newResultsDoc, writeResults } from './results.js';
import { executeTask, type RunTask, type TaskCache, type TaskDone, type TaskMatrix } from './run-task.js';
import { recordedRecipe } from '../solvers/recipe.js';
import { shardPairs, type ShardSpec } from './shard.js';
import { canonicalJson, selectFromSuite, shortHash, type GeneratedMatrixEntry, type Suite, type SuiteMatrix } from './suite.js';

export const RESULTS_FILE = 'results.json';
export const CSV_FILE = 'results.csv';
export const HISTORY_FILE = 'history.jsonl';

export interface SweepOptions {
  suite: Suite;
  outDir: string;
  /** Worker threads (≥ 1). Ignored when inProcess is given. */
  jobs: number;
  shard?: ShardSpec;
  onlyMatrix?: string[];
  onlyRecipe?: string[];
  /** Where generated cases are built (default OUT/matrices). */
  cacheDir?: string;
  /** Builds generator cases (default: the real writeGeneratedCase, loaded when a generated matrix is needed). */
  builder?: CaseBuilder;
  /** Module the workers import for loadSystem/readMatrixMarketVector/solveSystem (default: solver-deps). */
  depsModule?: string;
  /** Run in this thread with these functions instead of workers (library use and tests). */
  inProcess?: RunDeps;
  signal?: AbortSignal;
  onProgress?(done: number, total: number, label: string): void;
  /** What starts now: "preparing NAME" (a generated case), "loading NAME for RECIPE" (first run on a matrix), "MATRIX × RECIPE". */
  onStatus?(label: string): void;
  log?(line: string): void;
  /** Append to OUT/history.jsonl after a complete sweep (default true). */
  history?: boolean;
  /** Solve each pair once untimed before the timed repeats (JIT warm-up). Default: the suite's
   *  `timing.warmup`, else true. */
  warmup?: boolean;
  /** Timed repeats per pair, each with a fresh setup. Default: the suite's `timing.repeats`, else 3. */
  repeats?: number;
  /** Machine probe: a function to call (tests pass a double), false for none. Default probeMachine. */
  probe?: false | (() => MachineProbe);
  /** Rates of the user's machine for the modeled time (each replaces the probe's figure). */
  target?: { bandwidthGBs?: number; flopRateGFLOPs?: number };
  /** Recorded in parameters.rankBy (the ranking itself is the report's). */
  rankBy?: ResultsDoc['parameters']['rankBy'];
  /** History label (--label); default: the commit from the CI environment, when there is one. */
  label?: string;
}

/** Default timed repeats of a sweep. */
export const DEFAULT_SWEEP_REPEATS = 3;

export interface SweepOutcome {
  doc: ResultsDoc;
  interrupted: boolean;
  /** Runs that could not start (unreadable matrix, recipe the matrix cannot serve…). */
  errors: number;
  files: { results: string; csv: string; history?: string };
}

/** Folder of a generated case in the cache: name plus a hash of the parameters (and sequence) and slabbench version. */
export function caseFolder(cacheDir: string, m: GeneratedMatrixEntry): string {
  const key = m.sequence === undefined ? { slabbench: VERSION, generate: m.generate } : { slabbench: VERSION, generate: m.generate, sequence: m.sequence };
  return join(cacheDir, `${m.name}-${shortHash(canonicalJson(key))}`);
}

const CASE_MARKER = 'case.json';

/**
 * The committed copy of a generated case (suite field `prebuilt`), when its three files exist and
 * its layout records exactly the generator parameters of the suite entry; otherwise undefined and
 * the case is built as usual. Keeps the quick start free of generation on a fresh clone.
 */
export function prebuiltCase(m: GeneratedMatrixEntry): { mtx: string; rhs: string } | undefined {
  if (!m.prebuiltPath) return undefined;
  const mtx = m.prebuiltPath;
  const base = mtx.replace(/\.mtx(\.gz)?$/i, '');
  const rhs = `${base}.rhs.mtx`;
  const layoutPath = `${base}.layout.json`;
  if (!existsSync(mtx) || !existsSync(rhs) || !existsSync(layoutPath)) return undefined;
  try {
    const layout = JSON.parse(readFileSync(layoutPath, 'utf8')) as { provenance?: { params?: unknown } };
    if (canonicalJson(layout.provenance?.params) !== canonicalJson(m.generate)) return undefined;
  } catch {
    return undefined;
  }
  return { mtx, rhs };
}

/** Build (or reuse) a generated case; returns absolute .mtx and rhs paths. */
export async function ensureGeneratedCase(
  cacheDir: string, m: GeneratedMatrixEntry, builder: CaseBuilder, log?: (line: string) => void,
): Promise<{ mtx: string; rhs: string }> {
  const committed = prebuiltCase(m);
  if (committed) return committed;
  const dir = caseFolder(cacheDir, m);
  const marker = join(dir, CASE_MARKER);
  if (existsSync(marker)) {
    try {
      const c = JSON.parse(readFileSync(marker, 'utf8')) as { mtx: string; rhs: string };
      const mtx = resolve(dir, c.mtx);
      const rhs = resolve(dir, c.rhs);
      if (existsSync(mtx) && existsSync(rhs)) return { mtx, rhs };
    } catch { /* rebuild below */ }
  }
  log?.(`building matrix ${m.name} into ${dir}`);
  mkdirSync(dir, { recursive: true });
  const files = await builder.writeGeneratedCase(m.generate, dir, m.name);
  const mtx = resolve(dir, files.mtx);
  const rhs = resolve(dir, files.rhs);
  // Written last, so a half-built case is never reused.
  writeFileAtomicSync(marker, `${JSON.stringify({ mtx: relative(dir, mtx), rhs: relative(dir, rhs), layout: relative(dir, resolve(dir, files.layout)) })}\n`);
  return { mtx, rhs };
}

/**
 * Build (or reuse) a generated sequence: its systems in order, cached like a generated case (one
 * folder per parameters + sequence + version, `case.json` listing the systems written last).
 */
export async function ensureGeneratedSequence(
  cacheDir: string, m: GeneratedMatrixEntry, builder: CaseBuilder, log?: (line: string) => void,
): Promise<Array<{ mtx: string; rhs: string; label: string }>> {
  const dir = caseFolder(cacheDir, m);
  const marker = join(dir, CASE_MARKER);
  if (existsSync(marker)) {
    try {
      const c = JSON.parse(readFileSync(marker, 'utf8')) as { systems: Array<{ mtx: string; rhs: string; label: string }> };
      const systems = c.systems.map((x) => ({ mtx: resolve(dir, x.mtx), rhs: resolve(dir, x.rhs), label: x.label }));
      if (systems.length > 0 && systems.every((x) => existsSync(x.mtx) && existsSync(x.rhs))) return systems;
    } catch { /* rebuild below */ }
  }
  if (!builder.writeGeneratedSequence) throw new UserError(`${m.name}: this build cannot generate sequences`);
  log?.(`building sequence ${m.name} into ${dir}`);
  mkdirSync(dir, { recursive: true });
  const built = await builder.writeGeneratedSequence(m.generate, m.sequence, dir, m.name);
  const systems = built.systems.map((x) => ({ mtx: resolve(dir, x.mtx), rhs: resolve(dir, x.rhs), label: x.label }));
  writeFileAtomicSync(marker, `${JSON.stringify({ systems: systems.map((x) => ({ mtx: relative(dir, x.mtx), rhs: relative(dir, x.rhs), label: x.label })) })}\n`);
  return systems;
}

function displayPath(outDir: string, p: string): string {
  const rel = relative(outDir, p);
  return rel === '' || isAbsolute(rel) ? p : rel.split(sep).join('/');
}

/** tsx's programmatic ESM API (only needed when running from the .ts sources). */
function tsxApiUrl(): string {
  const req = createRequire(import.meta.url);
  const pkg = req.resolve('tsx/package.json');
  return pathToFileURL(join(dirname(pkg), 'dist', 'esm', 'api', 'index.mjs')).href;
}

/**
 * Start a worker from worker.js (dist) or worker.ts (source under vitest/tsx). On Node 20 neither
 * `--import tsx` in the worker's execArgv nor importing the loader first reaches the worker's entry
 * module, so a tiny bootstrap loads the .ts entry through tsx's tsImport.
 */
function startWorker(depsModule: string): Worker {
  const url = siblingModuleUrl('worker');
  if (!url.pathname.endsWith('.ts')) return new Worker(url, { workerData: { depsModule } });
  const boot = `import(${JSON.stringify(tsxApiUrl())}).then((m) => m.tsImport(${JSON.stringify(url.href)}, ${JSON.stringify(url.href)}))`
    + '.catch((e) => { setImmediate(() => { throw e; }); });';
  return new Worker(boot, { eval: true, workerData: { depsModule }, execArgv: [] });
}

function failedRecord(task: RunTask, error: string): TaskDone {
  return { id: task.id, record: { matrix: task.matrix.name, recipe: task.recipe.name, recipeParams: recordedRecipe(task.recipe), error } };
}

/** Run tasks on up to `jobs` workers; resolves true when interrupted. */
function runOnWorkers(
  tasks: RunTask[], jobs: number, depsModule: string, onDone: (d: TaskDone) => void, signal?: AbortSignal,
  onStart?: (task: RunTask) => void,
): Promise<boolean> {
  return new Promise<boolean>((resolvePool, rejectPool) => {
    if (tasks.length === 0) { resolvePool(false); return; }
    let next = 0;
    let finished = 0;
    let stopped = false;
    const workers = new Set<Worker>();

    const stop = (interrupted: boolean, error?: Error): void => {
      if (stopped) return;
      stopped = true;
      signal?.removeEventListener('abort', onAbort);
      for (const w of workers) void w.terminate();
      if (error) rejectPool(error); else resolvePool(interrupted);
    };
    const onAbort = (): void => stop(true);

    const launch = (): void => {
      const w = startWorker(depsModule);
      workers.add(w);
      let current: RunTask | undefined;
      let ready = false;
      const give = (): void => {
        if (stopped) return;
        if (next < tasks.length) {
          current = tasks[next++];
          onStart?.(current);
          w.postMessage(current);
        } else {
          current = undefined;
          void w.terminate();
        }
      };
      const record = (d: TaskDone): void => {
        current = undefined;
        onDone(d);
        finished++;
        if (finished === tasks.length) stop(false);
      };
      w.on('message', (msg: TaskDone | { ready: true }) => {
        if (stopped) return;
        if ('ready' in msg) { ready = true; give(); return; }
        record(msg);
        give();
      });
      w.on('error', (err: Error) => {
        if (stopped) return;
        if (!ready) { stop(false, new Error(`sweep worker failed to start: ${err.message}`)); return; }
        if (current) record(failedRecord(current, `worker thread failed: ${err.message}`));
      });
      w.on('exit', () => {
        workers.delete(w);
        if (stopped) return;
        if (current) record(failedRecord(current, 'worker thread exited during the run (out of memory?)'));
        if (!stopped && next < tasks.length && workers.size < jobs) launch();
      });
    };

    if (signal?.aborted) { stop(true); return; }
    signal?.addEventListener('abort', onAbort);
    for (let i = 0; i < Math.min(jobs, tasks.length); i++) launch();
  });
}

async function runInProcess(tasks: RunTask[], deps: RunDeps, onDone: (d: TaskDone) => void, signal?: AbortSignal, onStart?: (task: RunTask) => void): Promise<boolean> {
  const cache: TaskCache = {};
  for (const task of tasks) {
    // Yield so a pending abort (Ctrl-C) is seen between runs.
    await new Promise((r) => setImmediate(r));
    if (signal?.aborted) return true;
    onStart?.(task);
    onDone(await executeTask(task, deps, cache));
  }
  return false;
}

export async function runSweep(opts: SweepOptions): Promise<SweepOutcome> {
  const { suite } = opts;
  const outDir = resolve(opts.outDir);
  const jobs = opts.jobs;
  if (!opts.inProcess && !(Number.isInteger(jobs) && jobs >= 1)) throw new UserError(`option --jobs: expected a positive integer, got ${jobs}`);
  const { matrices, recipes } = selectFromSuite(suite, opts.onlyMatrix, opts.onlyRecipe);
  const pairs = shardPairs(matrices.length, recipes.length, opts.shard);

  mkdirSync(outDir, { recursive: true });
  const files = { results: join(outDir, RESULTS_FILE), csv: join(outDir, CSV_FILE) };

  // Build generated cases this shard needs, in suite order, before any run starts.
  const cacheDir = resolve(opts.cacheDir ?? join(outDir, 'matrices'));
  const needed = [...new Set(pairs.map((p) => p.matrixIndex))];
  const taskMatrices = new Map<number, TaskMatrix>();
  for (const mi of needed) {
    if (opts.signal?.aborted) break;
    const m: SuiteMatrix = matrices[mi];
    if (m.kind === 'file') {
      taskMatrices.set(mi, {
        name: m.name, source: 'file', mtx: m.filePath, rhs: m.rhsPath, blockSize: m.blockSize, note: m.note,
        displayPath: displayPath(outDir, m.filePath),
      });
    } else if (m.kind === 'sequence-files') {
      const first = m.files[0]!;
      taskMatrices.set(mi, {
        name: m.name, source: 'file', mtx: first.filePath, rhs: first.rhsPath, blockSize: m.blockSize, note: m.note,
        displayPath: displayPath(outDir, first.filePath),
        sequence: { kind: 'files', systems: m.files.map((f, k) => ({ mtx: f.filePath, rhs: f.rhsPath, label: `file ${k + 1}` })) },
      });
    } else if (m.sequence !== undefined) {
      const builder = opts.builder ?? (await import('./real-deps.js'));
      opts.onStatus?.(`preparing ${m.name} (generated sequence: cached or built now)`);
      const systems = await ensureGeneratedSequence(cacheDir, m, builder, opts.log);
      const kind = (m.sequence as { kind: 'newton' | 'slabs' }).kind;
      taskMatrices.set(mi, {
        name: m.name, source: 'generated', mtx: systems[0]!.mtx, rhs: systems[0]!.rhs, note: m.note,
        displayPath: displayPath(outDir, systems[0]!.mtx), sequence: { kind, systems },
      });
    } else {
      const builder = opts.builder ?? (await import('./real-deps.js'));
      opts.onStatus?.(`preparing ${m.name} (generated case: cached, prebuilt or built now)`);
      const built = await ensureGeneratedCase(cacheDir, m, builder, opts.log);
      taskMatrices.set(mi, { name: m.name, source: 'generated', mtx: built.mtx, rhs: built.rhs, note: m.note, displayPath: displayPath(outDir, built.mtx) });
    }
  }

  const warmup = opts.warmup ?? suite.timing?.warmup ?? true;
  const repeats = opts.repeats ?? suite.timing?.repeats ?? DEFAULT_SWEEP_REPEATS;
  if (!(Number.isInteger(repeats) && repeats >= 1)) throw new UserError(`option --repeats: expected a positive integer, got ${repeats}`);
  const tasks: RunTask[] = opts.signal?.aborted ? [] : pairs.map((p, id) => ({
    id, matrix: taskMatrices.get(p.matrixIndex)!, recipe: recipes[p.recipeIndex], warmup, repeats,
  }));

  // The probe runs before any worker starts, so nothing of the sweep competes with it.
  const probeFn = opts.probe === undefined ? probeMachine : opts.probe;
  const machine: MachineProbe | undefined = probeFn && tasks.length > 0 ? probeFn() : undefined;
  const model: ModelRates | undefined = machine ? modelRates(machine, opts.target) : undefined;
  const parallel: ParallelNote = { jobs: opts.inProcess ? 1 : jobs, cpus: cpus().length, loadAverageStart: loadavg() };

  const env = environment();
  const records: Array<RunRecord | undefined> = new Array(pairs.length);
  const infos = new Map<string, MatrixInfo>();
  const matrixOrder = matrices.map((m) => m.name);
  const buildDoc = (status: ResultsDoc['status']): ResultsDoc => withProbe(newResultsDoc({
    env,
    suite: {
      path: suite.path, description: suite.description, fingerprint: suite.fingerprint,
      matrixNames: matrices.map((m) => m.name), recipeNames: recipes.map((r) => r.name),
    },
    parameters: {
      jobs: opts.inProcess ? 1 : jobs,
      ...(opts.shard ? { shard: { index: opts.shard.index, count: opts.shard.count } } : {}),
      ...(opts.onlyMatrix?.length ? { onlyMatrix: opts.onlyMatrix } : {}),
      ...(opts.onlyRecipe?.length ? { onlyRecipe: opts.onlyRecipe } : {}),
      warmup,
      repeats,
      ...(records.some((r) => r?.repeats) ? { gc: records.every((r) => !r?.repeats || r.repeats.gc) } : {}),
      ...(opts.rankBy ? { rankBy: opts.rankBy } : {}),
      ...(opts.target && (opts.target.bandwidthGBs !== undefined || opts.target.flopRateGFLOPs !== undefined) ? { target: { ...opts.target } } : {}),
      parallel,
    },
    status,
    matrices: matrixOrder.filter((n) => infos.has(n)).map((n) => infos.get(n)!),
    runs: records.filter((r): r is RunRecord => r !== undefined),
  }));
  // machine and model go before the matrices and runs, so a reader sees them near the top.
  const withProbe = (d: ResultsDoc): ResultsDoc => {
    const { matrices: ms, runs: rs, ...head } = d;
    return { ...head, ...(machine ? { machine } : {}), ...(model ? { model } : {}), matrices: ms, runs: rs };
  };

  let done = 0;
  const onDone = (d: TaskDone): void => {
    const work = model && d.record.result ? runWork(d.record.result) : undefined;
    if (work && model) d.record.modeled = modeledSeconds(work, model);
    records[d.id] = d.record;
    if (d.info && !infos.has(d.info.name)) infos.set(d.info.name, d.info);
    done++;
    writeResults(buildDoc(done === tasks.length ? 'complete' : 'partial'), files.results, files.csv);
    opts.onProgress?.(done, tasks.length, `${d.record.matrix} × ${d.record.recipe}`);
  };

  writeResults(buildDoc(tasks.length === 0 && !opts.signal?.aborted ? 'complete' : 'partial'), files.results, files.csv);
  opts.onProgress?.(0, tasks.length, '');
  // the first run on each matrix loads it (tasks go matrix by matrix), so say so
  const loadedFor = new Set<string>();
  const onStart = opts.onStatus ? (t: RunTask): void => {
    const first = !loadedFor.has(t.matrix.name);
    loadedFor.add(t.matrix.name);
    opts.onStatus!(first ? `loading ${t.matrix.name} for ${t.recipe.name}` : `${t.matrix.name} × ${t.recipe.name}`);
  } : undefined;
  const interrupted = (opts.signal?.aborted ?? false) || (opts.inProcess
    ? await runInProcess(tasks, opts.inProcess, onDone, opts.signal, onStart)
    : await runOnWorkers(tasks, jobs, opts.depsModule ?? siblingModuleUrl('solver-deps').href, onDone, opts.signal, onStart));

  parallel.loadAverageEnd = loadavg();
  const doc = buildDoc(interrupted ? 'interrupted' : 'complete');
  writeResults(doc, files.results, files.csv);
  let history: string | undefined;
  if (!interrupted && opts.history !== false) {
    history = join(outDir, HISTORY_FILE);
    appendHistory(history, historyEntry(doc, { label: opts.label, previous: lastHistoryEntry(history) }));
  }
  return { doc, interrupted, errors: doc.runs.filter((r) => r.error !== undefined).length, files: { ...files, ...(history ? { history } : {}) } };
}
