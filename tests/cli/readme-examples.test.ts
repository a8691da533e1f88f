// The README's example outputs against a run of the same command: deterministic figures only
// (counts, iterations, causes, errors, bytes), never times. Columns are found by their heads, so a
// column added or moved elsewhere does not break the comparison; a checked column or line that
// disappears from either side does.
import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCli } from './cli-helpers.js';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const readme = readFileSync(join(root, 'README.md'), 'utf8');

/** The lines of the fenced block whose first line is `$ COMMAND` (the command line excluded). */
function exampleAfter(commandPrefix: string): { command: string; lines: string[] } {
  const blocks = readme.split('```');
  for (let i = 1; i < blocks.length; i += 2) {
    const lines = blocks[i].split('\n').slice(1); // drop the info string
    const k = lines.findIndex((l) => l.startsWith(`$ ${commandPrefix}`));
    if (k >= 0) return { command: lines[k].slice(2), lines: lines.slice(k + 1).filter((l) => l.trim() !== '') };
  }
  throw new Error(`README has no example block starting with "$ ${commandPrefix}"`);
}

/** The fenced block that contains a line starting with `marker`. */
function blockWith(marker: string): string[] {
  const blocks = readme.split('```');
  for (let i = 1; i < blocks.length; i += 2) {
    const lines = blocks[i].split('\n').slice(1);
    if (lines.some((l) => l.startsWith(marker))) return lines.filter((l) => l.trim() !== '');
  }
  throw new Error(`README has no block with a line starting with "${marker}"`);
}

const cells = (line: string): string[] => line.trim().split(/\s{2,}/);

/** Rows of a table as head → cell maps (head line found by its first head). */
function table(lines: string[], firstHead: string, keyHead: string): Map<string, Map<string, string>> {
  const h = lines.findIndex((l) => l.trim().startsWith(firstHead));
  expect(h, `table with head "${firstHead}"`).toBeGreaterThanOrEqual(0);
  const heads = cells(lines[h]);
  const out = new Map<string, Map<string, string>>();
  for (const line of lines.slice(h + 1)) {
    if (/^[\s─]*$/.test(line)) continue;
    const c = cells(line);
    if (c.length !== heads.length) continue; // notes and footers
    const row = new Map(heads.map((name, j) => [name, c[j]]));
    out.set(row.get(keyHead)!, row);
  }
  return out;
}

function compareTables(
  doc: Map<string, Map<string, string>>, run: Map<string, Map<string, string>>, checked: string[], what: string,
): void {
  expect(doc.size, `${what}: README rows`).toBeGreaterThan(0);
  for (const [key, row] of doc) {
    const got = run.get(key);
    expect(got, `${what}: row ${key} missing from the run`).toBeDefined();
    let compared = 0;
    for (const col of checked) {
      if (!row.has(col) || !got!.has(col)) continue;
      expect(got!.get(col), `${what}: ${key}, column ${col}`).toBe(row.get(col));
      compared++;
    }
    expect(compared, `${what}: ${key}: no checked column in both`).toBeGreaterThan(0);
  }
}

/** Label → cells of "label  value  value" lines (the estimate and inspect layouts). */
function labelled(lines: string[]): Map<string, string[]> {
  const out = new Map<string, string[]>();
  for (const l of lines) {
    const c = cells(l);
    if (c.length >= 2 && !out.has(c[0])) out.set(c[0], c.slice(1));
  }
  return out;
}

/** Command-line words (the README commands use no quoting). */
const words = (command: string): string[] => command.trim().split(/\s+/).slice(1);

describe('README examples match a run (deterministic figures)', () => {
  it('estimate: every line of the example', async () => {
    const ex = exampleAfter('slabbench estimate');
    const r = await runCli(words(ex.command));
    expect(r.code).toBe(0);
    const got = r.stdout.split('\n').filter((l) => l.trim() !== '');
    const doc = labelled(ex.lines), run = labelled(got);
    expect(doc.size).toBeGreaterThan(10);
    for (const [label, values] of doc) expect(run.get(label), `estimate: ${label}`).toEqual(values);
    // the title lines (basis functions, block size, block-count note)
    for (const line of ex.lines.slice(0, 3)) expect(got).toContain(line);
  });

  it('refine: cells, h, slabs, sizes, L2 errors, orders and solvers of the first meshes', async () => {
    // the first sizes only (each mesh is independent; the final time comes from the first): one
    // mesh of the 2D example (the next one takes seconds), two of the 1D one (an observed order)
    for (const [prefix, keep] of [['slabbench refine --physics advection ', 1], ['slabbench refine --physics advection-diffusion ', 2]] as const) {
      const ex = exampleAfter(prefix);
      const args = words(ex.command);
      const k = args.indexOf('--sizes');
      args[k + 1] = args[k + 1].split(',').slice(0, Math.max(2, keep)).join(',');
      if (keep === 1) { const first = Number(args[k + 1].split(',')[0]); args[k + 1] = `${first},${first + 1}`; }
      const r = await runCli(args);
      expect(r.code).toBe(0);
      const got = r.stdout.split('\n');
      expect(got[0]).toBe(ex.lines[0]);
      const doc = table(ex.lines, 'cells', 'cells');
      const run = table(got, 'cells', 'cells');
      for (const key of [...doc.keys()].slice(keep)) doc.delete(key);
      compareTables(doc, run, ['h', 'slabs', 'elements', 'unknowns', 'L2 error', 'order', 'solver'], prefix);
    }
  });

  it('inspect: the figures of the corridor-smoke example', async () => {
    const ex = exampleAfter('npx slabbench inspect');
    const r = await runCli(words(ex.command.replace(/^npx /, '')));
    expect(r.code).toBe(0);
    const doc = labelled(ex.lines), run = labelled(r.stdout.split('\n'));
    for (const label of ['size', 'blocks', 'slabs (layout)', 'storage BSR']) expect(doc.has(label), `README inspect line ${label}`).toBe(true);
    for (const [label, values] of doc) expect(run.get(label), `inspect: ${label}`).toEqual(values);
  });

  it('quick start: the stirred-tank table (iterations, restarts, cause, memory)', async () => {
    const lines = blockWith('stirred-tank');
    const out = mkdtempSync(join(tmpdir(), 'slabbench-readme-'));
    try {
      const r = await runCli(['sweep', join(root, 'matrices', 'suite.json'), '--only-matrix', 'stirred-tank', '--no-report', '--out', out]);
      expect(r.code).toBe(0);
      const got = r.stdout.split('\n');
      const i = got.findIndex((l) => l.startsWith('stirred-tank'));
      expect(got[i]).toBe(lines[0]);
      const doc = table(lines, 'rank', 'recipe'), run = table(got.slice(i), 'rank', 'recipe');
      compareTables(doc, run, ['iters', 'restarts', 'cause', 'memory'], 'stirred-tank');
    } finally {
      rmSync(out, { recursive: true, force: true });
    }
  });
});

describe('README sequence study', () => {
  it('generate --sequence, the suite of files, and the per-system table (iterations, rebuilds)', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-readme-seq-'));
    try {
      const gen = exampleAfter('npx slabbench generate --physics burgers');
      const args = words(gen.command).slice(1); // drop "slabbench"
      args[args.indexOf('--out') + 1] = join(dir, 'steps');
      const g = await runCli(args);
      expect(g.code).toBe(0);
      // the first line up to the (machine-dependent) seconds
      expect(g.stdout.split('\n')[0].replace(/; [\d.]+ s\)$/, '')).toBe(gen.lines[0].replace(/; [\d.]+ s\)$/, ''));
      const suite = blockWith('  "description": "Newton steps from my code');
      writeFileSync(join(dir, 'study.json'), suite.join('\n'));
      const sw = exampleAfter('npx slabbench sweep study.json');
      const r = await runCli(['sweep', join(dir, 'study.json'), '--out', join(dir, 'out'), '--no-report', '--repeats', '1', '--no-warmup']);
      expect(r.code).toBe(0);
      const got = r.stdout.split('\n');
      const ranked = (lines: string[]) => table(lines, 'rank', 'recipe');
      compareTables(ranked(sw.lines), ranked(got), ['iters', 'matvecs', 'applies', 'true res.', 'memory'], 'sequence study totals');
      const per = (lines: string[]) => table(lines.slice(lines.findIndex((l) => l.includes('per system:'))), 'recipe', 'recipe');
      compareTables(per(sw.lines), per(got), ['file 1', 'file 2', 'file 3', 'total', 'rebuilds'], 'sequence study per system');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
