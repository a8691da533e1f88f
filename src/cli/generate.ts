import type { Command } from 'commander';
import { resolve, join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { UserError, optionError } from '../util/errors.js';
import { writeGeneratedCase, type GeneratorParams } from '../dg/generate.js';
import { readSuiteCases } from '../dg/suite-cases.js';
import { addGeneratorOptions, generatorParamsFromOptions, progressPrinter, rejectGeneratorOptions } from './generator-options.js';
import { readFileSync } from 'node:fs';
import { parseSequenceSpec, writeGeneratedSequence, type SequenceSpec } from '../dg/sequence.js';

/** `--sequence newton:N` or `--sequence slabs`, validated against the parameters. */
function sequenceOption(raw: unknown, params: GeneratorParams): SequenceSpec {
  const text = String(raw);
  const m = /^newton:(\d+)$/.exec(text);
  if (!m && text !== 'slabs') throw optionError('--sequence', `expected newton:N (N Newton steps) or slabs (slab marching), got "${text}"`);
  return parseSequenceSpec(m ? { kind: 'newton', steps: Number(m[1]) } : { kind: 'slabs' }, 'option --sequence', params);
}

/** The demo suite shipped with the package (matrices/suite.json). */
export function defaultSuitePath(): string {
  const here = dirname(fileURLToPath(import.meta.url));
  // src/cli or dist/cli → package root.
  return resolve(here, '..', '..', 'matrices', 'suite.json');
}

interface CaseSummary {
  name: string;
  files: { mtx: string; rhs: string; layout: string };
  /** The numerically nonzero block graph has no cycles: one block sweep in its order solves the system. */
  triangularUnderPermutation: boolean;
  physics: string;
  dim: number;
  order: number;
  nElements: number;
  blockSize: number;
  nSlabs: number;
  n: number;
  seconds: number;
}

async function buildCase(params: GeneratorParams, outDir: string, name: string, gzip: boolean): Promise<CaseSummary> {
  const t0 = performance.now();
  const { triangularUnderPermutation, ...files } = await writeGeneratedCase(params, outDir, name, progressPrinter(`generating ${name}`), { gzip });
  const layout = JSON.parse(readFileSync(files.layout, 'utf8')) as { blockSize: number; slabOffsets: number[]; provenance: Record<string, unknown> };
  const nElements = layout.provenance.nElements as number;
  return {
    name, files, triangularUnderPermutation, physics: params.physics, dim: params.dim, order: params.order, nElements,
    blockSize: layout.blockSize, nSlabs: layout.slabOffsets.length - 1, n: nElements * layout.blockSize,
    seconds: (performance.now() - t0) / 1000,
  };
}

function plural(n: number): string {
  return `${n} system${n === 1 ? '' : 's'}`;
}

export function registerGenerate(program: Command): void {
  const cmd = program
    .command('generate')
    .description('Generate a space-time DG Jacobian (NAME.mtx), its right-hand side (NAME.rhs.mtx) and layout (NAME.layout.json)');
  addGeneratorOptions(cmd);
  cmd
    .option('--name <NAME>', 'base name of the output files (default <physics>-<d>d-p<order>)')
    .option('--out <dir>', 'output folder (default .)')
    .option('--case <NAME>', 'build the generator case NAME of the suite file')
    .option('--suite <FILE>', 'suite file for --case / --all-cases (default: the demo suite matrices/suite.json)')
    .option('--all-cases', 'build every generator case of the suite into --out')
    .option('--gzip', 'write the matrix gzip-compressed (NAME.mtx.gz); every command reads it as it is')
    .option('--sequence <KIND>', 'write a sequence of systems sharing one pattern: newton:N (N Newton steps, burgers/euler) or slabs (one system per slab); files NAME-s01.mtx, NAME-s01.rhs.mtx, … in order')
    .option('--json', 'print a machine-readable summary on stdout')
    .addHelpText('after', `
Examples:
  slabbench generate --physics advection --dim 2 --order 2 --cells 16 --slabs 4 --ordering downstream
  slabbench generate --physics advection --dim 2 --velocity "-2*pi*(y-0.5)" --velocity "2*pi*(x-0.5)" \\
      --initial "exp(-((x-0.7)^2+(y-0.5)^2)/0.01)" --name tank --out cases
  slabbench generate --physics acoustics --dim 1 --order 3 --cells 64 --periodic x --mean-flow 0.3
  slabbench generate --physics burgers --dim 1 --order 2 --cells 100 --initial "0.6-0.4*tanh((x-0.3)/0.05)"
  slabbench generate --case duct-pulse --out /tmp/demo
  slabbench generate --all-cases --out matrices/demo
  slabbench generate --physics euler --dim 2 --order 2 --cells 16 --state vortex --extent 10 --periodic all --gzip
  slabbench generate --physics advection --dim 1 --cells 64 --aspect-ratio 1000 --front-grading 2 --name front
  slabbench generate --physics advection --dim 2 --cells 32,8 --velocity 1 --velocity 0.3 --periodic x \
      --aspect-ratio 100 --front-grading 1.5 --front-position 0.4 --jitter 0.1
  slabbench generate --physics burgers --dim 1 --order 2 --cells 40 --periodic x --initial "0.6+0.2*sin(2*pi*x)" --sequence newton:3 --name bore
  slabbench generate --physics advection --dim 2 --cells 8 --slabs 4 --velocity 1 --velocity 0.5 --sequence slabs --name march

A generated matrix whose numerically nonzero block graph has no cycles (upwind transport without
recirculation) is block triangular under a permutation: one block Gauss–Seidel sweep in that order
solves it, so it ranks nothing. generate says so on stderr (and "triangularUnderPermutation" in --json).

--aspect-ratio switches on the front-aligned mesh map: the cells of one axis cluster at the front
x·n = x0 + s·t (--front-direction, --front-speed: 'align' = the constant velocity) with geometric
grading (--front-grading) and move with it, giving thin elements along its trajectory.

The layout file records the block size, the slab offsets (in block rows), the element quality
(aspect ratio min/median/max, smallest det J) and every parameter needed to rebuild the case
(with defaults filled in). Elements are numbered slab by slab; the
matrix is block lower triangular by slabs.

--sequence newton:N writes the Jacobians of N Newton steps (each at the state after the previous
update, computed by a tight slab-by-slab solve) with right-hand side minus the residual;
--sequence slabs writes each slab's diagonal block with the computed solution of the slab before
as inflow. Each layout records its place ("sequence": kind, index, count, …). List the files in a
suite entry "sequence": [ { "file", "rhs" }, … ] to run a sequence study (README "Sequences").`)
    .action(async (opts: Record<string, unknown>) => {
      const outDir = String(opts.out ?? '.');
      const json = opts.json === true;
      const jobs: { params: GeneratorParams; name: string }[] = [];
      if (opts.case !== undefined && opts.allCases) throw optionError('--case', 'cannot be combined with --all-cases');
      if (opts.case !== undefined || opts.allCases) {
        rejectGeneratorOptions(opts, opts.allCases ? '--all-cases' : '--case');
        const suitePath = opts.suite !== undefined ? String(opts.suite) : defaultSuitePath();
        const cases = readSuiteCases(suitePath);
        if (opts.allCases) {
          if (opts.name !== undefined) throw optionError('--name', 'cannot be combined with --all-cases (each case keeps its name)');
          if (cases.length === 0) throw new UserError(`${suitePath}: no generator cases (matrices with a "generate" object)`);
          for (const c of cases) jobs.push({ params: c.params, name: c.name });
        } else {
          const c = cases.find((x) => x.name === opts.case);
          if (!c) {
            throw optionError('--case', `no generator case '${String(opts.case)}' in ${suitePath} (cases: ${cases.map((x) => x.name).join(', ') || 'none'})`);
          }
          jobs.push({ params: c.params, name: opts.name !== undefined ? String(opts.name) : c.name });
        }
      } else {
        if (opts.suite !== undefined) throw optionError('--suite', 'only used with --case or --all-cases');
        const params = generatorParamsFromOptions(opts);
        const name = opts.name !== undefined ? String(opts.name) : `${params.physics}-${params.dim}d-p${params.order}`;
        jobs.push({ params, name });
      }
      if (opts.sequence !== undefined) {
        if (opts.case !== undefined || opts.allCases) throw optionError('--sequence', 'only with generator options (a suite case gets its sequence from the suite; sweep builds it)');
        if (opts.gzip === true) throw optionError('--gzip', 'has no effect with --sequence (the systems are written uncompressed); remove it');
        const job = jobs[0]!;
        const spec = sequenceOption(opts.sequence, job.params);
        const t0 = performance.now();
        const out = await writeGeneratedSequence(job.params, spec, outDir, job.name);
        const seconds = (performance.now() - t0) / 1000;
        if (json) {
          process.stdout.write(`${JSON.stringify({ schema: 'slabbench-generate/1', outDir: join(outDir), sequence: { name: job.name, kind: spec.kind, systems: out.systems, seconds } }, null, 2)}\n`);
        } else {
          process.stdout.write(`${job.name}: ${plural(out.systems.length)} (${spec.kind === 'newton' ? 'Newton steps' : 'slab marching'}, ${job.params.physics} ${job.params.dim}D+t, order ${job.params.order}; ${seconds.toFixed(2)} s)\n`);
          for (const f of out.systems) process.stdout.write(`  ${f.label}: ${f.mtx}, ${f.rhs}\n`);
        }
        return;
      }
      const summaries: CaseSummary[] = [];
      for (const job of jobs) {
        const s = await buildCase(job.params, outDir, job.name, opts.gzip === true);
        summaries.push(s);
        if (s.triangularUnderPermutation) {
          process.stderr.write(`slabbench: warning: ${s.name} is block triangular under a permutation (its nonzero block graph has no cycles): one block sweep in that order solves it exactly, so solver rankings on it say little\n`);
        }
        if (!json) {
          process.stdout.write(`${s.name}: ${s.physics} ${s.dim}D+t, order ${s.order}, ${s.nElements} elements in ${s.nSlabs} slab${s.nSlabs === 1 ? '' : 's'}, `
            + `block size ${s.blockSize}, n = ${s.n} (${s.seconds.toFixed(2)} s)\n  wrote ${s.files.mtx}, ${s.files.rhs}, ${s.files.layout}\n`);
        }
      }
      if (json) process.stdout.write(`${JSON.stringify({ schema: 'slabbench-generate/1', outDir: join(outDir), cases: summaries }, null, 2)}\n`);
    });
}
