import { gmres } from './src/solvers/gmres.js';
import { gmresDr } from './src/solvers/gmres-dr.js';
import { gcroDr } from './src/solvers/gcro-dr.js';
import { csrOperator } from './src/solvers/operator.js';
import { csrFromTriplets } from './tests/sparse/model-matrices.js';
const n = 1000;
const e: [number, number, number][] = [];
for (let i = 0; i < n; i++) { e.push([i, i, i + 1]); if (i + 1 < n) e.push([i, i + 1, 0.1]); }
const A = csrOperator(csrFromTriplets(n, e));
const b = new Float64Array(n).fill(1);
const base = { side: 'right', orthogonalization: 'mgs', rtol: 1e-10, atol: 0, maxIterations: 20000, divergence: 1e10, relativeTo: 'rhs' } as any;
for (const [m, k] of [[10, 4], [20, 10], [30, 10], [25, 10], [15, 5]]) {
  const it = (f: any, o: any) => f(A, b, new Float64Array(n), { ...base, restart: m, ...o }).iterations;
  const carry = {};
  const s = [0, 1, 2].map(() => gcroDr(A, b, new Float64Array(n), { ...base, restart: m, deflate: k, carry }).iterations);
  console.log(m, k, 'gmres', it(gmres, {}), 'dr', it(gmresDr, { deflate: k }), 'gcro seq', s.join(' '));
}
