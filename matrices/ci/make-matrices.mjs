#!/usr/bin/env node
// Rebuilds the committed CI matrices (matrices/ci/*.mtx.gz, *.rhs.mtx, *.layout.json) with the
// slabbench generator. Run from the repository root after `npm run build`:
//   node matrices/ci/make-matrices.mjs
// then refresh the baseline (README "Regression tracking in CI"):
//   node dist/cli/bin.js sweep matrices/ci/suite.json --out .ci-results --quiet
//   node dist/cli/bin.js check .ci-results/results.json --baseline matrices/ci/baseline.json --update
// The matrices are committed rather than generated in CI so that the regression check sees exactly the
// same input on every machine; the scenarios are invented.
import { mkdtempSync, readFileSync, writeFileSync, copyFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gzipSync } from 'node:zlib';
import { parseGeneratorParams, writeGeneratedCase } from '../../dist/dg/generate.js';

const here = dirname(fileURLToPath(import.meta.url));

export const CASES = {
  // Invented: a soft pressure pulse in a short duct with a slow mean flow (acoustics, 1D+t).
  'ci-duct': {
    physics: 'acoustics', dim: 1, order: 1, cells: [12], extent: [2], slabs: 3, layersPerSlab: 1, cfl: 0.5,
    periodic: [false], soundSpeed: 1, meanFlow: [0.2], travelling: false, initial: 'exp(-((x - 0.6) / 0.2)^2)', ordering: 'natural',
  },
  // Invented: dye carried round a small stirred tank (rotating advection, 2D+t).
  'ci-tank': {
    physics: 'advection', dim: 2, order: 1, cells: [4, 4], extent: [1, 1], slabs: 2, layersPerSlab: 1, cfl: 0.5,
    periodic: [false, false], velocity: ['-2*pi*(y - 0.5)', '2*pi*(x - 0.5)'], initial: 'exp(-((x - 0.7)^2 + (y - 0.5)^2) / 0.02)', ordering: 'downstream',
  },
  // Invented: smoke drifting and spreading along a short corridor (advection-diffusion, 2D+t).
  'ci-corridor': {
    physics: 'advection-diffusion', dim: 2, order: 1, cells: [6, 2], extent: [3, 1], slabs: 2, layersPerSlab: 1, cfl: 0.5,
    periodic: [false, false], velocity: [1, 0], diffusivity: 0.05, initial: 'exp(-((x - 0.8)^2 + (y - 0.5)^2) / 0.05)', ordering: 'downstream',
  },
};

const work = mkdtempSync(join(tmpdir(), 'slabbench-ci-'));
try {
  for (const [name, raw] of Object.entries(CASES)) {
    const params = parseGeneratorParams(raw, `make-matrices.mjs: ${name}`);
    const files = await writeGeneratedCase(params, work, name);
    writeFileSync(join(here, `${name}.mtx.gz`), gzipSync(readFileSync(files.mtx), { level: 9 }));
    copyFileSync(files.rhs, join(here, `${name}.rhs.mtx`));
    copyFileSync(files.layout, join(here, `${name}.layout.json`));
    process.stderr.write(`wrote matrices/ci/${name}.mtx.gz, .rhs.mtx, .layout.json\n`);
  }
} finally {
  rmSync(work, { recursive: true, force: true });
}
