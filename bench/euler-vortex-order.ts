/**
 * Full refinement study of the isentropic vortex (Shu, NASA/CR-97-206253 / ICASE 97-65, 1997;
 * ε = 5, free stream (1, 1), Ω = [0, 10]² periodic, final time 0.5): on each mesh, Newton's method
 * (src/dg/newton.ts) from the projected exact solution to ‖R‖/‖R₀‖ ≤ 1e-10, then the space-time
 * L² error of the converged DG solution against the exact vortex, and the observed order between
 * meshes. Expected: order ≥ p + ½ (Johnson & Pitkäranta, Math. Comp. 46, 1986, for the linear
 * case; common practice for smooth nonlinear problems). tests/dg/newton.test.ts keeps the smallest
 * p = 1 pair; this script is the full study (minutes on 2 cores). It prints; it does not assert.
 *
 *   npx tsx bench/euler-vortex-order.ts            # p = 1 on 4, 8, 16 cells; p = 2 on 6, 8, 12, 16
 *   npx tsx bench/euler-vortex-order.ts --quick    # p = 1 on 4, 8; p = 2 on 6, 8
 *   npx tsx bench/euler-vortex-order.ts --flux llf
 */
import { loadavg } from 'node:os';
import { parseGeneratorParams } from '../src/dg/generate.js';
import { runRefinementStudy } from '../src/dg/refine.js';
import { formatStudyHead, formatStudyRow } from '../src/cli/refine.js';

const args = process.argv.slice(2);
const quick = args.includes('--quick');
const fluxAt = args.indexOf('--flux');
const flux = fluxAt >= 0 ? args[fluxAt + 1] : 'roe';
const studies: { order: number; sizes: number[] }[] = quick
  ? [{ order: 1, sizes: [4, 8] }, { order: 2, sizes: [6, 8] }]
  : [{ order: 1, sizes: [4, 8, 16] }, { order: 2, sizes: [6, 8, 12, 16] }];

console.log(`load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}; flux ${flux}`);
for (const { order, sizes } of studies) {
  const base = parseGeneratorParams({
    physics: 'euler', state: 'vortex', flux, dim: 2, order, cells: sizes[0], extent: [10, 10], periodic: [true, true],
    slabs: 1, slabThickness: 0.5,
  }, 'euler-vortex-order');
  const study = runRefinementStudy(base, sizes, {
    onStart: (head) => console.log(formatStudyHead(head)),
    onRow: (row) => console.log(`${formatStudyRow(row)}  newton ${row.newton!.iterations} it, ‖R‖/‖R₀‖ ${row.newton!.relativeResidual.toExponential(1)}`),
  });
  if (study.failure) console.log(`stopped at ${study.failure.cells.join('×')}: ${study.failure.message}`);
  const last = study.rows[study.rows.length - 1]?.observedOrder;
  if (last !== null && last !== undefined) {
    console.log(`p = ${order}: last observed order ${last.toFixed(2)} (expected ≥ ${order + 0.5}): ${last >= order + 0.5 ? 'met' : 'NOT met'}\n`);
  }
}
