/**
 * Combine the result files of the shards of one sweep into one results document.
 * Refuses to mix suites, selections or slabbench versions, and names every duplicated or missing pair.
 */
import { UserError } from '../util/errors.js';
import type { MatrixInfo, ResultsDoc, RunRecord } from './results-types.js';
import { newResultsDoc } from './results.js';

export interface ShardFile {
  path: string;
  doc: ResultsDoc;
}

function listSome(items: string[], max = 6): string {
  return items.length <= max ? items.join(', ') : `${items.slice(0, max).join(', ')} and ${items.length - max} more`;
}

function same(a: string[] | undefined, b: string[] | undefined): boolean {
  return JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
}

function joinDistinct(values: string[]): string {
  const d = [...new Set(values)];
  return d.length === 1 ? d[0] : `mixed: ${d.join('; ')}`;
}

export function mergeResults(files: ShardFile[]): ResultsDoc {
  if (files.length === 0) throw new UserError('merge: no result files given');
  const first = files[0];
  const fd = first.doc;
  if (!fd.suite.matrixNames || !fd.suite.recipeNames) {
    throw new UserError(`${first.path}: suite.matrixNames/recipeNames missing: not written by slabbench sweep, cannot tell which pairs belong to the sweep`);
  }
  const matrixNames = fd.suite.matrixNames;
  const recipeNames = fd.suite.recipeNames;

  for (const f of files) {
    const d = f.doc;
    if (d.status === 'partial' || d.status === 'interrupted') {
      const shard = d.parameters.shard ? ` (shard ${d.parameters.shard.index}/${d.parameters.shard.count})` : '';
      throw new UserError(`${f.path}: this sweep${shard} did not finish (status ${d.status}); run it again before merging`);
    }
    if (d.suite.fingerprint !== fd.suite.fingerprint) {
      throw new UserError(`${f.path}: from a different suite than ${first.path} (fingerprint ${d.suite.fingerprint ?? 'none'} vs ${fd.suite.fingerprint ?? 'none'})`);
    }
    if (!same(d.suite.matrixNames, matrixNames) || !same(d.suite.recipeNames, recipeNames)) {
      throw new UserError(`${f.path}: selects different matrices or recipes than ${first.path} (--only-matrix/--only-recipe must be the same for every shard)`);
    }
    // A shard run outside a git checkout has no commit; then only the version can be compared.
    const commitsDiffer = d.commit !== undefined && fd.commit !== undefined && d.commit !== fd.commit;
    if (d.slabbench !== fd.slabbench || commitsDiffer) {
      throw new UserError(`${f.path}: ran slabbench ${d.slabbench}${d.commit ? ` at ${d.commit.slice(0, 12)}` : ''}, but ${first.path} ran ${fd.slabbench}${fd.commit ? ` at ${fd.commit.slice(0, 12)}` : ''}; merge shards of one version only`);
    }
  }

  // Shard numbering: all sharded with one count, each index once.
  const counts = new Set(files.map((f) => f.doc.parameters.shard?.count ?? 0));
  if (counts.size > 1) throw new UserError(`merge: the files come from different shard counts (${[...counts].map((c) => (c === 0 ? 'unsharded' : `N=${c}`)).join(', ')})`);
  const shardCount = [...counts][0];
  const missingShards: number[] = [];
  if (shardCount > 0) {
    const seen = new Map<number, string>();
    for (const f of files) {
      const k = f.doc.parameters.shard!.index;
      const prev = seen.get(k);
      if (prev !== undefined) throw new UserError(`merge: shard ${k}/${shardCount} given twice (${prev} and ${f.path})`);
      seen.set(k, f.path);
    }
    for (let k = 1; k <= shardCount; k++) if (!seen.has(k)) missingShards.push(k);
  }

  // Pairs: each exactly once.
  const mIndex = new Map(matrixNames.map((n, i) => [n, i]));
  const rIndex = new Map(recipeNames.map((n, i) => [n, i]));
  const byPair = new Map<string, { run: RunRecord; path: string }>();
  const duplicates: string[] = [];
  const unexpected: string[] = [];
  for (const f of files) {
    for (const run of f.doc.runs) {
      const label = `${run.matrix} × ${run.recipe}`;
      if (!mIndex.has(run.matrix) || !rIndex.has(run.recipe)) { unexpected.push(`${label} in ${f.path}`); continue; }
      const key = `${run.matrix}\u0000${run.recipe}`;
      const prev = byPair.get(key);
      if (prev) duplicates.push(`${label} (${prev.path} and ${f.path})`);
      else byPair.set(key, { run, path: f.path });
    }
  }
  if (unexpected.length) throw new UserError(`merge: ${unexpected.length} run(s) not in the sweep's matrix × recipe list: ${listSome(unexpected)}`);
  if (duplicates.length) throw new UserError(`merge: ${duplicates.length} pair(s) appear twice: ${listSome(duplicates)}`);
  const missing: string[] = [];
  for (const m of matrixNames) for (const r of recipeNames) if (!byPair.has(`${m}\u0000${r}`)) missing.push(`${m} × ${r}`);
  if (missing.length) {
    const hint = missingShards.length ? ` (shard${missingShards.length > 1 ? 's' : ''} ${missingShards.map((k) => `${k}/${shardCount}`).join(', ')} not given)` : '';
    throw new UserError(`merge: ${missing.length} pair(s) missing${hint}: ${listSome(missing)}`);
  }

  const runs = [...byPair.values()].map((x) => x.run).sort((a, b) =>
    (mIndex.get(a.matrix)! - mIndex.get(b.matrix)!) || (rIndex.get(a.recipe)! - rIndex.get(b.recipe)!));
  const infos = new Map<string, MatrixInfo>();
  for (const f of files) for (const mi of f.doc.matrices) if (!infos.has(mi.name)) infos.set(mi.name, mi);
  const dates = files.map((f) => f.doc.date).sort();
  const commit = files.find((f) => f.doc.commit !== undefined)?.doc.commit;

  return newResultsDoc({
    env: {
      slabbench: fd.slabbench,
      ...(commit ? { commit } : {}),
      node: joinDistinct(files.map((f) => f.doc.node)),
      cpu: joinDistinct(files.map((f) => f.doc.cpu)),
      date: dates[dates.length - 1],
    },
    suite: { ...fd.suite },
    parameters: {
      jobs: Math.max(...files.map((f) => f.doc.parameters.jobs)),
      ...(fd.parameters.onlyMatrix ? { onlyMatrix: fd.parameters.onlyMatrix } : {}),
      ...(fd.parameters.onlyRecipe ? { onlyRecipe: fd.parameters.onlyRecipe } : {}),
      ...(fd.parameters.warmup ? { warmup: true } : {}),
      // Timing protocol and ranking settings, when every shard used the same ones.
      ...(files.every((f) => f.doc.parameters.repeats === fd.parameters.repeats) && fd.parameters.repeats !== undefined ? { repeats: fd.parameters.repeats } : {}),
      ...(files.every((f) => f.doc.parameters.rankBy === fd.parameters.rankBy) && fd.parameters.rankBy ? { rankBy: fd.parameters.rankBy } : {}),
      ...(fd.parameters.target && files.every((f) => JSON.stringify(f.doc.parameters.target) === JSON.stringify(fd.parameters.target)) ? { target: fd.parameters.target } : {}),
      mergedShards: files.length,
    },
    status: 'complete',
    matrices: matrixNames.filter((n) => infos.has(n)).map((n) => infos.get(n)!),
    runs,
  });
}
