import { bsrToCsr } from '../sparse/bsr.js';
import { writeMatrixMarket, writeMatrixMarketVector } from '../sparse/matrix-market.js';
import { writeLayout } from '../sparse/layout.js';
import type { Bsr, Layout } from '../sparse/types.js';

/**
 * The one place where a generated case touches the disk: matrix (every entry of every stored
 * block, zeros included, so the block pattern survives), right-hand side, layout sidecar.
 */
export async function writeCaseFiles(
  paths: { mtx: string; rhs: string; layout: string },
  system: { bsr: Bsr; rhs: Float64Array; layout: Layout },
  name: string,
): Promise<void> {
  const p = system.layout.provenance ?? {};
  const comment = `slabbench generate: ${name} (${String(p.physics)}, ${String(p.dim)}D+t, order ${String(p.order)}, ${String(p.nElements)} elements, block size ${system.layout.blockSize}); parameters in ${name}.layout.json`;
  await writeMatrixMarket(paths.mtx, bsrToCsr(system.bsr), { comments: [comment] });
  await writeMatrixMarketVector(paths.rhs, system.rhs, { comments: [`right-hand side of ${name}`] });
  writeLayout(paths.layout, system.layout);
}
