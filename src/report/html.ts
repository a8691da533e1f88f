import { mkdir, readdir, unlink } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import type { HistoryEntry, ResultsDoc, RunRecord } from '../run/results-types.js';
import { writeFileAtomic } from '../util/atomic-write.js';
import type { SolveResult } from '../solvers/types.js';
import { withPrefix } from '../util/errors.js';
import { runsByMatrix, recipeOrder, statusWarning, type MatrixRuns } from './group.js';
import { plural } from './format.js';
import { matrixSummary, MISMATCH_MARK, rankForTable, REBUILD_MARK, rowCells, sequenceTable, solveWork, WIDE_COLUMN_TITLES, WINNER_MARK } from './table.js';
import { formatCount, formatSeconds } from './format.js';
import { verdictLine } from './rank.js';
import { LIMITS_STATEMENT } from './limits.js';
import { esc } from './svg/common.js';
import { RESIDUAL_AXES, residualPlot, type ResidualAxis } from './svg/residuals.js';
import { ritzPlot } from './svg/ritz.js';
import { patternPlot } from './svg/pattern.js';
import { historyPlot } from './svg/history.js';
import { scaleForecastPlot } from './svg/scale.js';
import type { ScaleReport } from '../run/scale.js';

export interface ReportOptions {
  /** Stored runs (history file lines) for the history view; omitted or empty = no history section. */
  history?: HistoryEntry[];
  /** x axes of the residual plots, one figure each (default: iterations and matvecs). */
  axes?: readonly ResidualAxis[];
  /** Scaling forecasts (`slabbench scale --json`) to plot, each with the file it came from. */
  scale?: { file: string; report: ScaleReport }[];
}

export const DEFAULT_RESIDUAL_AXES: readonly ResidualAxis[] = ['iterations', 'matvecs'];

/** File name of a matrix's residual plot against an axis (iterations keep the plain name). */
function residualFile(slug: string, axis: ResidualAxis): string {
  return axis === 'iterations' ? `residuals-${slug}.svg` : `residuals-${slug}.${axis}.svg`;
}

/** Names `writeReport` writes (and so may remove when they no longer belong to the results). */
export const REPORT_FILE_PATTERN = new RegExp(`^(residuals|ritz|pattern|history|scale|sequence)-[a-z0-9-]+(\\.(${RESIDUAL_AXES.join('|')}))?\\.svg$`);

/**
 * x value of every history entry on an axis. matvecs: the solve's operator applications spread
 * evenly over its iterations (the exact counter when the results have one, else one per GMRES or
 * stationary iteration and two per BiCGStab iteration); seconds: setup time, then the solve time
 * spread evenly over the iterations.
 */
export function historyX(res: SolveResult, axis: ResidualAxis): number[] | undefined {
  if (axis === 'iterations') return undefined;
  const it = Math.max(1, res.iterations);
  const n = res.history.length;
  if (axis === 'matvecs') {
    const total = solveWork(res).matvecs ?? res.iterations * (res.method === 'bicgstab' ? 2 : 1);
    return Array.from({ length: n }, (_v, i) => (i * total) / it);
  }
  const setup = res.timing.setupSeconds, solve = res.timing.solveSeconds;
  return Array.from({ length: n }, (_v, i) => setup + (i * solve) / it);
}

/** The result a residual plot draws: a sequence run's last system (its history is the one stored), else the result itself. */
function lastSystemResult(r: RunRecord): SolveResult {
  const res = r.result!;
  const last = r.sequence?.systems[r.sequence.systems.length - 1];
  if (!last) return res;
  return {
    ...res, iterations: last.iterations, cause: last.cause, outcome: last.outcome, converged: last.outcome === 'solved',
    timing: { ...res.timing, setupSeconds: last.setupSeconds, solveSeconds: last.solveSeconds }, work: last.work,
  };
}

/** True when the history is the left-preconditioned residual ‖M⁻¹r‖. */
export function watchedLeft(res: SolveResult): boolean {
  const r = res as { watched?: string; monitored?: string };
  return r.watched === 'left-preconditioned' || r.monitored === 'preconditioned';
}

export interface ReportSvg {
  /** File name inside the output folder, e.g. "residuals-duct-pulse.svg". */
  file: string;
  svg: string;
}

/** Kebab-case file stem from a matrix name, made unique within one report. */
function slugger(): (name: string) => string {
  const used = new Set<string>();
  return (name) => {
    const base = name.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '') || 'matrix';
    let slug = base;
    for (let k = 2; used.has(slug); k++) slug = `${base}-${k}`;
    used.add(slug);
    return slug;
  };
}

const CSS = `
:root { --ink: #1f2328; --muted: #5f6670; --line: #d8dce1; --accent: #1d3f73; --win: #e7f4ea; --warn: #fbeaea; }
* { box-sizing: border-box; }
body { margin: 0; font: 15px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, Helvetica, Arial, sans-serif; color: var(--ink); background: #f6f7f9; }
main { max-width: 1320px; margin: 0 auto; padding: 24px 20px 64px; }
h1 { font-size: 26px; margin: 0 0 4px; }
h2 { font-size: 20px; margin: 0 0 2px; }
h3 { font-size: 15px; margin: 18px 0 6px; color: var(--muted); text-transform: uppercase; letter-spacing: .04em; }
.meta { color: var(--muted); font-size: 13px; margin: 0 0 16px; }
.meta span + span::before { content: " · "; }
.limits { border-left: 4px solid #c98a00; background: #fff8e6; padding: 10px 14px; margin: 16px 0 20px; font-size: 14px; }
nav { font-size: 14px; margin: 0 0 20px; }
nav a { margin-right: 14px; color: var(--accent); }
section.matrix, section.history, section.scale { background: #fff; border: 1px solid var(--line); border-radius: 8px; padding: 18px 20px 10px; margin: 0 0 24px; }
.summary { color: var(--muted); font-size: 13px; margin: 0 0 10px; }
table.ranked { border-collapse: collapse; font-size: 13px; width: 100%; margin: 4px 0 6px; font-variant-numeric: tabular-nums; }
table.ranked th { text-align: right; font-weight: 600; color: var(--muted); border-bottom: 2px solid var(--line); padding: 5px 8px; white-space: nowrap; }
table.ranked td { text-align: right; border-bottom: 1px solid var(--line); padding: 5px 8px; white-space: nowrap; }
table.ranked th.text, table.ranked td.text { text-align: left; }
table.ranked tr.winner td { background: var(--win); font-weight: 600; }
table.ranked tr.failed td.cause { color: #a3202f; }
.table-wrap { overflow-x: auto; }
.notes { font-size: 12px; color: var(--muted); margin: 0 0 8px; padding-left: 18px; }
.status { border-left: 4px solid #a3202f; background: var(--warn); padding: 10px 14px; margin: 16px 0 20px; font-size: 14px; }
p.incomplete { color: #a3202f; font-size: 13px; margin: 4px 0; }
.plots { display: flex; flex-wrap: wrap; gap: 14px; align-items: flex-start; }
figure { margin: 0 0 12px; background: #fff; border: 1px solid var(--line); border-radius: 6px; padding: 6px; max-width: 100%; }
figure svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 12px; color: var(--muted); padding: 4px 4px 0; }
figcaption a { color: var(--accent); }
footer { color: var(--muted); font-size: 12px; }
`;

function tableHtml(results: ResultsDoc, matrix: string, runs: RunRecord[]): string {
  const { ranked, missing, ranking } = rankForTable(results, matrix, runs);
  const heads = WIDE_COLUMN_TITLES;
  const textCols = new Set([heads.indexOf('recipe'), heads.indexOf('cause')]);
  const reasonCol = heads.indexOf('cause');
  let s = '<div class="table-wrap"><table class="ranked"><thead><tr>';
  heads.forEach((h, j) => { s += `<th${textCols.has(j) ? ' class="text"' : ''}>${esc(h)}</th>`; });
  s += '</tr></thead><tbody>';
  for (const r of ranked) {
    const cls = r.winner ? 'winner' : r.converged ? '' : 'failed';
    s += `<tr${cls ? ` class="${cls}"` : ''} data-recipe="${esc(r.run.recipe)}">`;
    rowCells(r).forEach((c, j) => {
      const klass = [textCols.has(j) ? 'text' : '', j === reasonCol ? 'cause' : ''].filter(Boolean).join(' ');
      s += `<td${klass ? ` class="${klass}"` : ''}>${esc(c)}</td>`;
    });
    s += '</tr>';
  }
  s += '</tbody></table></div>';
  const notes: string[] = [
    'matvecs = operator applications and applies = preconditioner applications in the solve: iteration counts of different methods are not comparable (one BiCGStab iteration is two of each)',
    'memory = preconditioner + Krylov basis bytes (the matrix itself is not included)',
  ];
  const seq = results.matrices.find((m) => m.name === matrix)?.sequence;
  if (seq) notes.unshift(`a sequence of ${plural(seq.systems, 'system')}: iterations, work and times are totals over the sequence, true res. the largest of its systems (per system below)`);
  if (missing.length > 0) {
    s += `<p class="incomplete" data-incomplete="${missing.length}">Incomplete: ${esc(plural(missing.length, 'recipe'))} of the sweep did not run on this matrix (${esc(missing.join(', '))}), so no winner is named.</p>`;
  } else {
  }
  notes.unshift(verdictLine(ranking, WINNER_MARK), ...ranking.notes.filter((n) => !n.startsWith('partial results:')));
  if (ranked.some((r) => r.run.result?.residualMismatch)) notes.push(`${MISMATCH_MARK} recursive and true residual disagree by more than 10×`);
  for (const r of ranked) {
    const why = r.run.error ?? r.run.result?.failure?.message;
    if (why) notes.push(withPrefix(r.run.recipe, why));
  }
  return `${s}<ul class="notes">${notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>`;
}

/** The per-system table of a sequence matrix (empty when the matrix is not a sequence). */
function sequenceTableHtml(results: ResultsDoc, matrix: string, runs: RunRecord[]): string {
  const { ranked } = rankForTable(results, matrix, runs);
  const t = sequenceTable(ranked, (it, rb, sec) => `${formatCount(it)}${rb ? REBUILD_MARK : ''} · ${formatSeconds(sec)} s`);
  if (!t) return '';
  let s = '<div class="table-wrap"><table class="ranked sequence" data-systems="' + (t.heads.length - 4) + '"><thead><tr>';
  t.heads.forEach((h, j) => { s += `<th${j === 0 ? ' class="text"' : ''}>${esc(h)}</th>`; });
  s += '</tr></thead><tbody>';
  t.rows.forEach((row, i) => {
    s += `<tr data-recipe="${esc(t.recipes[i]!)}">`;
    row.forEach((c, j) => { s += `<td${j === 0 ? ' class="text"' : ''}>${esc(c)}</td>`; });
    s += '</tr>';
  });
  s += '</tbody></table></div>';
  return `${s}<ul class="notes"><li>${esc(`per system: iterations ${REBUILD_MARK} (preconditioner set up for that system; without the mark an earlier set-up was reused) · setup + solve seconds of the stored repeat; then the totals over the sequence, which the ranking above uses`)}</li></ul>`;
}

function figure(svg: ReportSvg, caption: string): string {
  // The caption wraps to the plot's width instead of widening the figure.
  const w = /^<svg[^>]*?\swidth="([\d.]+)"/.exec(svg.svg);
  const style = w ? ` style="width: ${Math.ceil(Number(w[1])) + 14}px"` : '';
  return `<figure data-file="${esc(svg.file)}"${style}>${svg.svg}<figcaption>${esc(caption)} `
    + `<a href="${esc(svg.file)}">(${esc(svg.file)})</a></figcaption></figure>`;
}

/** Distinct x labels for stored runs: the entry's label or short commit, else its date; repeats get "·2", "·3". */
export function historyLabels(history: HistoryEntry[]): string[] {
  const seen = new Map<string, number>();
  return history.map((e, i) => {
    const own = (e as { label?: string }).label;
    const base = own ? own.slice(0, 12) : e.commit ? e.commit.slice(0, 7) : e.date ? e.date.slice(5, 16).replace('T', ' ') : `#${i + 1}`;
    const k = (seen.get(base) ?? 0) + 1;
    seen.set(base, k);
    return k === 1 ? base : `${base}·${k}`;
  });
}

/** Indices i where stored run i ran a different suite than run i − 1 (fingerprint changed, or the entry says so). */
export function suiteChanges(history: HistoryEntry[]): number[] {
  const out: number[] = [];
  for (let i = 1; i < history.length; i++) {
    const flagged = (history[i] as { suiteChanged?: boolean }).suiteChanged === true;
    const a = history[i - 1].suite?.fingerprint, b = history[i].suite?.fingerprint;
    if (flagged || (a !== undefined && b !== undefined && a !== b)) out.push(i);
  }
  return out;
}

function historyFigures(groups: MatrixRuns[], history: HistoryEntry[], color: (name: string) => number, slugOf: (m: string) => string): { html: string; svgs: ReportSvg[] } {
  // only matrices of these results: a matrix that was dropped from the suite has no section
  const matrices = groups.map((g) => g.matrix);
  const labels = historyLabels(history);
  const changes = suiteChanges(history);
  const svgs: ReportSvg[] = [];
  let html = '';
  for (const m of matrices) {
    const recipes: string[] = [];
    for (const e of history) for (const r of e.runs) if (r.matrix === m && !recipes.includes(r.recipe)) recipes.push(r.recipe);
    if (recipes.length === 0) continue;
    const series = recipes.map((name) => {
      const iterations: number[] = [], seconds: number[] = [], converged: boolean[] = [];
      for (const e of history) {
        const r = e.runs.find((q) => q.matrix === m && q.recipe === name);
        iterations.push(r ? r.iterations : NaN);
        seconds.push(r ? r.setupSeconds + r.solveSeconds : NaN);
        converged.push(r ? r.outcome === 'solved' : false);
      }
      return { name, colorIndex: color(name), iterations, seconds, converged };
    });
    const slug = slugOf(m);
    const svg: ReportSvg = {
      file: `history-${slug}.svg`,
      svg: historyPlot({ title: `${m}: iterations and time across stored runs`, runLabels: labels, series, idPrefix: `history-${slug}`, suiteChanges: changes }),
    };
    svgs.push(svg);
    html += figure(svg, `${m}: iterations (top) and setup + solve seconds (bottom) per recipe for ${history.length === 1 ? 'the one stored run' : `each of the ${history.length} stored runs, oldest left`}. Labels are the run's label or commit when known, else its date; a repeated label gets ·2, ·3. A vertical line marks a change of the suite between two runs.`);
  }
  return { html, svgs };
}

const RESIDUAL_CAPTION: Record<ResidualAxis, string> = {
  iterations: 'Relative residual against iteration for every recipe (log scale). Each recipe has its own colour, dash pattern and marker shape; a dotted line is a left-preconditioned residual ‖M⁻¹r‖, not the true one. Marks at the right edge are each recipe\'s rtol. A run that grows past 1000 × its start is cut at the top (arrow). Steep, straight descent is good; flat stretches are stagnation; jumps every cycle show GMRES restarts.',
  matvecs: 'The same histories against operator applications (matvecs), which cost about the same in every method: this compares BiCGStab (two per iteration) fairly with GMRES (one). The count is spread evenly over each run\'s iterations.',
  seconds: 'The same histories against time: setup first, then the solve time spread evenly over the iterations, so cheap-to-build and cheap-to-apply preconditioners can be told apart. Timing varies between runs; prefer the matvec plot for fine differences.',
};

/**
 * Render the whole report: one self-contained HTML page (inline CSS and inline SVG; no scripts,
 * no network) plus each plot as its own SVG document. Deterministic for a given input.
 */
export function renderReport(results: ResultsDoc, opts: ReportOptions = {}): { html: string; svgs: ReportSvg[] } {
  const groups = runsByMatrix(results);
  const order = recipeOrder(results);
  const colorMap = new Map(order.map((n, i) => [n, i]));
  const color = (name: string): number => {
    if (!colorMap.has(name)) colorMap.set(name, colorMap.size);
    return colorMap.get(name)!;
  };
  const slug = slugger();
  const slugs = new Map<string, string>();
  const slugOf = (m: string): string => {
    if (!slugs.has(m)) slugs.set(m, slug(m));
    return slugs.get(m)!;
  };
  const svgs: ReportSvg[] = [];
  const sections: string[] = [];
  const axes = opts.axes && opts.axes.length > 0 ? opts.axes : DEFAULT_RESIDUAL_AXES;
  const warning = statusWarning(results);

  for (const g of groups) {
    const sl = slugOf(g.matrix);
    // Plots list recipes in ranking order (colours stay fixed per recipe across the report).
    const withResult = rankForTable(results, g.matrix, g.runs).ranked.map((r) => r.run).filter((r) => r.result);
    const resSvgs: ReportSvg[] = axes.map((axis) => ({
      file: residualFile(sl, axis),
      svg: residualPlot({
        title: `${g.matrix}: residual histories${g.info?.sequence ? ' (last system)' : ''}`,
        idPrefix: `residuals-${sl}-${axis}`,
        axis,
        series: withResult.map((r) => {
          // a sequence's result holds totals; its history is the last system's, so plot that system's own figures
          const res = lastSystemResult(r);
          return {
            name: r.recipe,
            history: res.history,
            x: historyX(res, axis),
            colorIndex: color(r.recipe),
            rtol: r.recipeParams?.rtol,
            leftPreconditioned: watchedLeft(res),
            note: `${res.iterations} it${res.converged ? '' : `, ${res.cause}`}`,
          };
        }),
      }),
    }));
    const ritz: ReportSvg = {
      file: `ritz-${sl}.svg`,
      svg: ritzPlot({
        title: `${g.matrix}: Ritz values`,
        idPrefix: `ritz-${sl}`,
        series: withResult.filter((r) => r.result!.ritz && r.result!.ritz.re.length > 0).map((r) => ({
          name: r.recipe, re: r.result!.ritz!.re, im: r.result!.ritz!.im, colorIndex: color(r.recipe),
        })),
      }),
    };
    const pat: ReportSvg = {
      file: `pattern-${sl}.svg`,
      svg: patternPlot({ title: `${g.matrix}: block sparsity`, pattern: g.info?.pattern, idPrefix: `pattern-${sl}` }),
    };
    svgs.push(...resSvgs, ritz, pat);
    const seqRuns = withResult.filter((r) => r.sequence);
    const seqSvg: ReportSvg | undefined = seqRuns.length === 0 ? undefined : {
      file: `sequence-${sl}.svg`,
      svg: historyPlot({
        kind: 'sequence',
        title: `${g.matrix}: cost per system of the sequence`,
        idPrefix: `sequence-${sl}`,
        runLabels: seqRuns[0]!.sequence!.systems.map((q) => q.label),
        series: seqRuns.map((r) => ({
          name: r.recipe, colorIndex: color(r.recipe),
          iterations: r.sequence!.systems.map((q) => q.iterations),
          seconds: r.sequence!.systems.map((q) => q.setupSeconds + q.solveSeconds),
          converged: r.sequence!.systems.map((q) => q.outcome === 'solved'),
        })),
      }),
    };
    if (seqSvg) svgs.push(seqSvg);
    const source = g.info ? `${g.info.source === 'generated' ? 'generated' : 'file'} ${g.info.path}` : '';
    sections.push(
      `<section class="matrix" id="m-${esc(sl)}" data-matrix="${esc(g.matrix)}">`
      + `<h2>${esc(g.matrix)}</h2>`
      + `<p class="summary">${esc(matrixSummary(g.info))}${source ? ` · ${esc(source)}` : ''}${g.info?.note ? ` · ${esc(g.info.note)}` : ''}</p>`
      + '<h3>Ranking</h3>'
      + tableHtml(results, g.matrix, g.runs)
      + (seqSvg ? '<h3>Per system</h3>' + sequenceTableHtml(results, g.matrix, g.runs) : '')
      + '<h3>Plots</h3><div class="plots">'
      + (seqSvg ? figure(seqSvg, 'Iterations (top) and setup + solve seconds (bottom) of each system of the sequence, per recipe. A recipe that reuses its preconditioner has no setup time on the systems it reuses it for; the residual plots beside show the last system.') : '')
      + resSvgs.map((f, k) => figure(f, RESIDUAL_CAPTION[axes[k]])).join('')
      + figure(ritz, 'Ritz values of the first GMRES cycle: estimates of the eigenvalues of the preconditioned operator. Values gathered tightly around 1 and away from 0 mean fast convergence.')
      + figure(pat, 'Where the stored blocks sit (darker = more blocks per cell). Dashed lines are slab boundaries; with upwinding in time no block lies above a slab-diagonal square.')
      + '</div></section>',
    );
  }

  let historySection = '';
  if (opts.history && opts.history.length > 0) {
    const h = historyFigures(groups, opts.history, color, slugOf);
    svgs.push(...h.svgs);
    historySection = `<section class="history" id="history"><h2>History</h2>`
      + `<p class="summary">${esc(plural(opts.history.length, 'stored run'))} of the suite.</p>`
      + `<div class="plots">${h.html}</div></section>`;
  }

  let scaleSection = '';
  if (opts.scale && opts.scale.length > 0) {
    const scaleSlug = slugger();
    const figs = opts.scale.map(({ file, report }) => {
      const slug = scaleSlug(file.replace(/\.scale\.json$/, ''));
      const svg: ReportSvg = { file: `scale-${slug}.svg`, svg: scaleForecastPlot(report, `scale-${slug}-`) };
      svgs.push(svg);
      const m = report.machine;
      const how = `${report.partition.method === 'coordinates' ? 'coordinate' : 'graph'} bisection, parts ${report.partition.slabs === 'within' ? 'inside' : 'across'} slabs`;
      return figure(svg, `${file}: iterations of the partitioned algebra (exact, solved on one core; top) and the modelled time per iteration (bottom, log scale; dashed: its compute share) against the number of parts P (${how}). Target: ${m.bandwidth / 1e9} GB/s memory bandwidth, ${m.latency * 1e6} µs latency, ${m.networkBandwidth / 1e9} GB/s network per process — a model, not a measurement.`);
    });
    scaleSection = '<section class="scale" id="scale"><h2>Scaling forecasts</h2>'
      + `<p class="summary">${esc(plural(opts.scale.length, 'forecast'))} of <code>slabbench scale</code> found beside the results (files *.scale.json). The time is the α–β model (Hockney 1994) on the target stated in each caption, not a measurement of a real cluster.</p>`
      + `<div class="plots">${figs.join('')}</div></section>`;
  }

  const meta = [
    `slabbench ${results.slabbench}`,
    results.commit ? `commit ${results.commit.slice(0, 12)}` : '',
    `Node ${results.node}`,
    results.cpu,
    results.date,
    results.suite?.path ? `suite ${results.suite.path}` : '',
    results.parameters?.shard ? `shard ${results.parameters.shard.index}/${results.parameters.shard.count}` : '',
  ].filter(Boolean);
  const nav = groups.map((g) => `<a href="#m-${esc(slugOf(g.matrix))}">${esc(g.matrix)}</a>`).join('')
    + (historySection ? '<a href="#history">history</a>' : '')
    + (scaleSection ? '<a href="#scale">scaling forecasts</a>' : '');
  const html = '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
    + '<meta name="viewport" content="width=device-width, initial-scale=1">'
    + `<title>slabbench report${results.suite?.description ? ` — ${esc(results.suite.description)}` : ''}</title>`
    + `<style>${CSS}</style></head><body><main>`
    + '<h1>slabbench report</h1>'
    + `<p class="meta">${meta.map((m) => `<span>${esc(m)}</span>`).join('')}</p>`
    + (results.suite?.description ? `<p>${esc(results.suite.description)}</p>` : '')
    + (warning ? `<p class="status" data-status="${esc(results.status ?? '')}"><strong>Not a finished sweep.</strong> ${esc(warning[0].toUpperCase() + warning.slice(1))}.</p>` : '')
    + `<p class="limits"><strong>Limits.</strong> ${esc(LIMITS_STATEMENT)}</p>`
    + `<nav>${nav}</nav>`
    + (sections.length ? sections.join('') : '<p>No runs in the results.</p>')
    + historySection
    + scaleSection
    + `<footer>Ranking: converged runs first by setup + solve time (ties: fewer iterations), then the rest by final true relative residual. ${esc(WINNER_MARK)} marks the winner.</footer>`
    + '</main></body></html>\n';
  return { html, svgs };
}

/**
 * Write report.html and every plot as its own .svg into outDir (created if missing), each file
 * atomically. Plot files of an earlier report in the same folder that these results no longer
 * produce (a matrix left out, an axis not drawn) are removed; only names of our own pattern
 * (REPORT_FILE_PATTERN) are touched. `removed` lists them.
 */
export async function writeReport(results: ResultsDoc, outDir: string, opts: ReportOptions = {}): Promise<{ htmlPath: string; svgPaths: string[]; removed: string[] }> {
  const { html, svgs } = renderReport(results, opts);
  const dir = resolve(outDir);
  await mkdir(dir, { recursive: true });
  const svgPaths: string[] = [];
  for (const s of svgs) {
    const p = join(dir, s.file);
    await writeFileAtomic(p, `<?xml version="1.0" encoding="UTF-8"?>\n${s.svg}\n`);
    svgPaths.push(p);
  }
  const htmlPath = join(dir, 'report.html');
  await writeFileAtomic(htmlPath, html);
  const keep = new Set(svgs.map((s) => s.file));
  const removed: string[] = [];
  for (const name of await readdir(dir)) {
    if (!REPORT_FILE_PATTERN.test(name) || keep.has(name)) continue;
    try { await unlink(join(dir, name)); removed.push(join(dir, name)); } catch { /* gone already, or not ours to remove */ }
  }
  return { htmlPath, svgPaths, removed };
}
