import { defineConfig } from 'vitest/config';

// The test selection for mutation testing (`npm run mutate`, stryker.config.json): the tests of the
// numerical core only. The CLI, sweep-runner and report tests spawn workers and processes and
// check no kernel the mutants touch more closely than these do.
//
// STRYKER_TESTS (comma-separated globs) narrows the selection for one file's run, e.g.
//   STRYKER_TESTS=tests/precond/dense.test.ts,tests/kernels/precond.test.ts \
//     npm run mutate -- --mutate src/precond/dense.ts
// Instrumented hot kernels (dense.ts, bsr.ts) run the heavy DG and multilevel tests 20–30× slower
// than normal (one AIR test: 2.5 s → over 60 s), so a run over every test that covers a kernel
// would take days on 2 cores; README, "Mutation testing", lists the selection used per file.
const narrowed = process.env.STRYKER_TESTS?.split(',').map((s) => s.trim()).filter((s) => s !== '');

export default defineConfig({
  test: {
    include: narrowed && narrowed.length > 0 ? narrowed : ['tests/{dg,precond,solvers,sparse}/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
