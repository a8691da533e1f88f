import { defineConfig } from 'vitest/config';

// The test selection for mutation testing (`npm run mutate`, stryker.config.json): the tests of the
// numerical core only. The CLI, sweep-runner and report tests spawn workers and processes and
// check no kernel the mutants touch more closely than these do.
export default defineConfig({
  test: {
    include: ['tests/{dg,precond,solvers,sparse}/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
