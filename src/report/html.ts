import { mkdir } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import type { HistoryEntry, ResultsDoc, RunRecord } from '../run/results-types.js';
import { writeFileAtomic } from '../util/atomic-write.js';
import { runsByMatrix, recipeOrder, type MatrixRuns } from './group.js';
import { rankMatrix, rankOptionsFor, rankRuns, verdictLine, type RankOptions } from './rank.js';
import { matrixSummary, MISMATCH_MARK, rowCells, WINNER_MARK } from './table.js';
import { LIMITS_STATEMENT } from './limits.js';
import { esc } from './svg/common.js';
import { residualPlot } from './svg/residuals.js';
import { ritzPlot } from './svg/ritz.js';
import { patternPlot } from './svg/pattern.js';
import { historyPlot } from './svg/history.js';

export interface ReportOptions {
  /** Stored runs (history file lines) for the history view; omitted or empty = no history section. */
  history?: HistoryEntry[];
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

/** The one rtol all runs share, if they do (then the residual plot draws it). */
function commonRtol(runs: RunRecord[]): number | undefined {
  const set = new Set(runs.filter((r) => r.result).map((r) => r.recipeParams?.rtol));
  if (set.size !== 1) return undefined;
  const v = [...set][0];
  const sameReference = new Set(runs.filter((r) => r.result).map((r) => r.result!.relativeTo)).size === 1;
  return typeof v === 'number' && v > 0 && sameReference ? v : undefined;
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
section.matrix, section.history { background: #fff; border: 1px solid var(--line); border-radius: 8px; padding: 18px 20px 10px; margin: 0 0 24px; }
.summary { color: var(--muted); font-size: 13px; margin: 0 0 10px; }
table.ranked { border-collapse: collapse; font-size: 13px; width: 100%; margin: 4px 0 6px; font-variant-numeric: tabular-nums; }
table.ranked th { text-align: right; font-weight: 600; color: var(--muted); border-bottom: 2px solid var(--line); padding: 5px 8px; white-space: nowrap; }
table.ranked td { text-align: right; border-bottom: 1px solid var(--line); padding: 5px 8px; white-space: nowrap; }
table.ranked th.text, table.ranked td.text { text-align: left; }
table.ranked tr.winner td { background: var(--win); font-weight: 600; }
table.ranked tr.failed td.cause { color: #a3202f; }
.table-wrap { overflow-x: auto; }
.notes { font-size: 12px; color: var(--muted); margin: 0 0 8px; padding-left: 18px; }
.plots { display: flex; flex-wrap: wrap; gap: 14px; align-items: flex-start; }
figure { margin: 0 0 12px; background: #fff; border: 1px solid var(--line); border-radius: 6px; padding: 6px; max-width: 100%; }
figure svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 12px; color: var(--muted); padding: 4px 4px 0; }
figcaption a { color: var(--accent); }
footer { color: var(--muted); font-size: 12px; }
`;

function tableHtml(runs: RunRecord[], rankOpts: RankOptions = {}): string {
  const ranking = rankMatrix(runs, rankOpts);
  const ranked = ranking.ranked;
  const heads = ['rank', 'recipe', 'iterations', 'restarts', 'cause', 'true rel. residual', 'setup s', 'solve s', 'memory'];
  const textCols = new Set([1, 4]);
  let s = '<div class="table-wrap"><table class="ranked"><thead><tr>';
  heads.forEach((h, j) => { s += `<th${textCols.has(j) ? ' class="text"' : ''}>${esc(h)}</th>`; });
  s += '</tr></thead><tbody>';
  for (const r of ranked) {
    const cls = r.winner ? 'winner' : r.converged ? '' : 'failed';
    s += `<tr${cls ? ` class="${cls}"` : ''} data-recipe="${esc(r.run.recipe)}">`;
    rowCells(r).forEach((c, j) => {
      const klass = [textCols.has(j) ? 'text' : '', j === 4 ? 'cause' : ''].filter(Boolean).join(' ');
      s += `<td${klass ? ` class="${klass}"` : ''}>${esc(c)}</td>`;
    });
    s += '</tr>';
  }
  s += '</tbody></table></div>';
  const notes: string[] = ['memory = preconditioner + Krylov basis bytes (the matrix itself is not included)'];
  notes.unshift(verdictLine(ranking, WINNER_MARK), ...ranking.notes);
  if (ranked.some((r) => r.run.result?.residualMismatch)) notes.push(`${MISMATCH_MARK} recursive and true residual disagree by more than 10×`);
  for (const r of ranked) {
    const why = r.run.error ?? r.run.result?.failure?.message;
    if (why) notes.push(`${r.run.recipe}: ${why}`);
  }
  return `${s}<ul class="notes">${notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>`;
}

function figure(svg: ReportSvg, caption: string): string {
  // The caption wraps to the plot's width instead of widening the figure.
  const w = /^<svg[^>]*?\swidth="([\d.]+)"/.exec(svg.svg);
  const style = w ? ` style="width: ${Math.ceil(Number(w[1])) + 14}px"` : '';
  return `<figure data-file="${esc(svg.file)}"${style}>${svg.svg}<figcaption>${esc(caption)} `
    + `<a href="${esc(svg.file)}">(${esc(svg.file)})</a></figcaption></figure>`;
}

function historyFigures(groups: MatrixRuns[], history: HistoryEntry[], color: (name: string) => number, slugOf: (m: string) => string): { html: string; svgs: ReportSvg[] } {
  const matrices: string[] = [];
  const seen = new Set<string>();
  for (const g of groups) { if (!seen.has(g.matrix)) { seen.add(g.matrix); matrices.push(g.matrix); } }
  for (const e of history) for (const r of e.runs) if (!seen.has(r.matrix)) { seen.add(r.matrix); matrices.push(r.matrix); }
  const labels = history.map((e, i) => (e.commit ? e.commit.slice(0, 7) : e.date.slice(0, 10) || `#${i + 1}`));
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
      svg: historyPlot({ title: `${m}: iterations and time across stored runs`, runLabels: labels, series, idPrefix: `history-${slug}` }),
    };
    svgs.push(svg);
    html += figure(svg, `${m}: iterations (top) and setup + solve seconds (bottom) per recipe for each of the ${history.length} stored runs, oldest left. Labels are commits when known, else dates.`);
  }
  return { html, svgs };
}

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

  for (const g of groups) {
    const sl = slugOf(g.matrix);
    // Plots list recipes in ranking order (colours stay fixed per recipe across the report).
    const withResult = rankRuns(g.runs).map((r) => r.run).filter((r) => r.result);
    const res: ReportSvg = {
      file: `residuals-${sl}.svg`,
      svg: residualPlot({
        title: `${g.matrix}: residual histories`,
        idPrefix: `residuals-${sl}`,
        rtol: commonRtol(g.runs),
        series: withResult.map((r) => ({
          name: r.recipe,
          history: r.result!.history,
          colorIndex: color(r.recipe),
          note: `${r.result!.iterations} it${r.result!.converged ? '' : `, ${r.result!.cause}`}`,
        })),
      }),
    };
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
    svgs.push(res, ritz, pat);
    const source = g.info ? `${g.info.source === 'generated' ? 'generated' : 'file'} ${g.info.path}` : '';
    sections.push(
      `<section class="matrix" id="m-${esc(sl)}" data-matrix="${esc(g.matrix)}">`
      + `<h2>${esc(g.matrix)}</h2>`
      + `<p class="summary">${esc(matrixSummary(g.info))}${source ? ` · ${esc(source)}` : ''}${g.info?.note ? ` · ${esc(g.info.note)}` : ''}</p>`
      + '<h3>Ranking</h3>'
      + tableHtml(g.runs, rankOptionsFor(results))
      + '<h3>Plots</h3><div class="plots">'
      + figure(res, 'Relative residual against iteration for every recipe (log scale). The dashed level is the common rtol when all recipes share one. Steep, straight descent is good; flat stretches are stagnation; jumps every cycle show GMRES restarts.')
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
      + `<p class="summary">${opts.history.length} stored run${opts.history.length === 1 ? '' : 's'} of the suite.</p>`
      + `<div class="plots">${h.html}</div></section>`;
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
    + (historySection ? '<a href="#history">history</a>' : '');
  const html = '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
    + '<meta name="viewport" content="width=device-width, initial-scale=1">'
    + `<title>slabbench report${results.suite?.description ? ` — ${esc(results.suite.description)}` : ''}</title>`
    + `<style>${CSS}</style></head><body><main>`
    + '<h1>slabbench report</h1>'
    + `<p class="meta">${meta.map((m) => `<span>${esc(m)}</span>`).join('')}</p>`
    + (results.suite?.description ? `<p>${esc(results.suite.description)}</p>` : '')
    + `<p class="limits"><strong>Limits.</strong> ${esc(LIMITS_STATEMENT)}</p>`
    + `<nav>${nav}</nav>`
    + (sections.length ? sections.join('') : '<p>No runs in the results.</p>')
    + historySection
    + `<footer>Ranking: converged runs first by setup + solve time (ties: fewer iterations), then the rest by final true relative residual. ${esc(WINNER_MARK)} marks the winner.</footer>`
    + '</main></body></html>\n';
  return { html, svgs };
}

/** Write report.html and every plot as its own .svg into outDir (created if missing), each file atomically. */
export async function writeReport(results: ResultsDoc, outDir: string, opts: ReportOptions = {}): Promise<{ htmlPath: string; svgPaths: string[] }> {
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
  return { htmlPath, svgPaths };
}
