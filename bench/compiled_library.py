#!/usr/bin/env python3
"""Time the same matrix in a compiled general-purpose sparse library (petsc4py, Debian's
python3-petsc4py), for bench/compiled-library.bench.ts. Benchmarks only: never used by tests or CI.

Usage: compiled_library.py --serve FILE BS
Reads the matrix once, prints one JSON line {"ready": true, "library", "n", "bs", "nBlocks",
"readSeconds"}, then answers one JSON command per stdin line with one JSON line on stdout, so the
bench can interleave its own repeats with these on a warm process (ratios of runs minutes apart
swing with cache residency on a shared machine):
  {"op": "spmv", "repeats": k}            -> {"spmvSeconds": median of k products}
  {"op": "solve", "name": P, "iterations": m}
                                          -> {"setupSeconds", "solveSeconds", "iterations"} of one
                                             fresh solver (their GMRES may stop early on a breakdown test)
  {"op": "quit"}                          -> exits

Options used on their side (named here so the comparison can be checked):
  threads    one (OPENBLAS_NUM_THREADS=1, OMP_NUM_THREADS=1, set before the libraries load)
  matrix     seqbaij with the block size of the layout (their block CSR type), from the .mtx file
  Krylov     ksp gmres, restart 30, right preconditioning, modified Gram-Schmidt
             (-ksp_gmres_modifiedgramschmidt, as ours), rtol 1e-30 so exactly `iterations` run
  none       pc none
  block-jacobi  pc pbjacobi (inverts each bs x bs diagonal block: our block-jacobi, inverse blocks)
  block-ilu0    pc ilu, levels 0, natural ordering (block ILU(0) on the baij blocks: our block-ilu0)
  block-gs      pc sor, symmetric local sweep, omega 1, one iteration from a zero guess (on baij: the
                block version with inverted diagonal blocks: our block-gs sweep symmetric). Their sor
                inverts the diagonal blocks during its first application, so its setup time reads
                near zero and that work lands in each solve's first iteration.
"""
import glob
import json
import os
import sys
import time

# One thread, like our kernels: Debian links the library to the pthread build of OpenBLAS, whose dot
# products and axpys (their Gram-Schmidt steps) otherwise use every core above about 10^4 entries,
# and whose threaded sums round differently (their GMRES then stops early on its breakdown test).
# Set before numpy and the library load; the ready line reports it.
for _var in ('OPENBLAS_NUM_THREADS', 'OMP_NUM_THREADS'):
    os.environ[_var] = '1'

if 'PETSC_DIR' not in os.environ and not os.path.isdir('/usr/lib/petsc'):
    # Debian's alternatives link /usr/lib/petsc may be absent; point at the installed build
    found = sorted(glob.glob('/usr/lib/petscdir/petsc*/*-real/lib/python3/dist-packages'))
    if found:
        sys.path.append(found[-1])
        os.environ['PETSC_DIR'] = found[-1].rsplit('/lib/python3', 1)[0]

import numpy as np  # noqa: E402
import scipy.io  # noqa: E402
import scipy.sparse  # noqa: E402
import petsc4py  # noqa: E402

petsc4py.init(sys.argv[:1])
from petsc4py import PETSc  # noqa: E402


def load(file, bs):
    t0 = time.perf_counter()
    a = scipy.io.mmread(file).tocsr()
    a.sum_duplicates()
    b = scipy.sparse.bsr_matrix(a, blocksize=(bs, bs))
    b.sort_indices()
    read_s = time.perf_counter() - t0
    n = a.shape[0]
    data = np.ascontiguousarray(b.data.reshape(-1))
    A = PETSc.Mat().createBAIJ(size=(n, n), bsize=bs, csr=(b.indptr.astype(PETSc.IntType), b.indices.astype(PETSc.IntType), data))
    A.assemble()
    x = A.createVecRight()
    y = A.createVecLeft()
    x.set(1.0)
    A.mult(x, y)
    rhs = y.copy()
    info = {'ready': True, 'library': 'petsc4py %d.%d.%d' % PETSc.Sys.getVersion(), 'n': n, 'bs': bs, 'nBlocks': int(b.indptr[-1]), 'readSeconds': read_s,
            'blasThreads': os.environ['OPENBLAS_NUM_THREADS']}
    return A, x, y, rhs, info


def spmv(A, x, y, reps):
    times = []
    for _ in range(reps):
        t = time.perf_counter()
        A.mult(x, y)
        times.append(time.perf_counter() - t)
    return {'spmvSeconds': float(np.median(times))}


def solve(A, rhs, name, its):
    # their diagonal-block inverses are cached on the matrix (pbjacobi, sor); scaling by 1
    # marks them stale, so every fresh solver computes them again, as ours does
    A.scale(1.0)
    opts = PETSc.Options()
    opts['ksp_gmres_modifiedgramschmidt'] = None
    ksp = PETSc.KSP().create()
    ksp.setOperators(A)
    ksp.setType('gmres')
    ksp.setGMRESRestart(30)
    ksp.setPCSide(PETSc.PC.Side.RIGHT)
    ksp.setTolerances(rtol=1e-30, atol=0.0, divtol=1e30, max_it=its)
    ksp.setNormType(PETSc.KSP.NormType.UNPRECONDITIONED)
    pc = ksp.getPC()
    if name == 'none':
        pc.setType('none')
    elif name == 'block-jacobi':
        pc.setType('pbjacobi')
    elif name == 'block-ilu0':
        pc.setType('ilu')
        pc.setFactorLevels(0)
        pc.setFactorOrdering('natural')
    elif name == 'block-gs':
        pc.setType('sor')  # defaults: local symmetric sweep, omega 1, 1 iteration
    else:
        raise SystemExit('unknown preconditioner ' + name)
    ksp.setFromOptions()
    t = time.perf_counter()
    ksp.setUp()
    pc.setUp()
    setup = time.perf_counter() - t
    sol = A.createVecRight()
    sol.set(0.0)
    t = time.perf_counter()
    ksp.solve(rhs, sol)
    out = {'setupSeconds': setup, 'solveSeconds': time.perf_counter() - t, 'iterations': ksp.getIterationNumber()}
    ksp.destroy()
    return out


def main():
    if len(sys.argv) != 4 or sys.argv[1] != '--serve':
        raise SystemExit('usage: compiled_library.py --serve FILE BS')
    A, x, y, rhs, info = load(sys.argv[2], int(sys.argv[3]))
    print(json.dumps(info), flush=True)
    for line in sys.stdin:
        cmd = json.loads(line)
        if cmd['op'] == 'quit':
            break
        if cmd['op'] == 'spmv':
            out = spmv(A, x, y, int(cmd['repeats']))
        elif cmd['op'] == 'solve':
            out = solve(A, rhs, cmd['name'], int(cmd['iterations']))
        else:
            raise SystemExit('unknown command ' + cmd['op'])
        print(json.dumps(out), flush=True)


main()
