#!/usr/bin/env python3
"""Reference timings for the sparse LU bench (scripts/bench-lu.ts).

Reads matrices the bench wrote (one file each) and times one sparse LU of each
with SciPy's SuperLU and a minimum-degree ordering of A^T + A (the reference the
issue's targets are stated against). SuperLU is told the pattern is structurally
symmetric (SymmetricMode) and uses the product's pivot threshold 0.1, preferring the
diagonal; with its defaults (threshold 1.0, no symmetric mode) the same ordering
fills about six times more and runs about a hundred times slower here, which would
flatter the product. Prints one JSON line per matrix:
{"file": ..., "n": ..., "minMs": ..., "minCpuMs": ..., "medianMs": ..., "relError": ...}
(wall and CPU time of this process: on a loaded machine the CPU time is the steadier).

File layout (little endian): int32 n, int32 nnz, int32 colPtr[n+1],
int32 rowIdx[nnz], float64 values[2*nnz] (interleaved re, im).

Run by the bench only when python3 with scipy is present:
  python3 scripts/lu-reference.py REPS FILE...
With --solve=NRHS first, each timed call is a factorisation plus a solve with NRHS
right-hand sides (what one energy of a transmission sweep costs: the sweep reference of
scripts/bench-transmission.ts).
"""
import json
import os
import sys
import time

# One thread, like the product's bench: SuperLU calls BLAS, whose own threads would
# otherwise compete for the cores (and spin, inflating the CPU time).
for name in ('OPENBLAS_NUM_THREADS', 'OMP_NUM_THREADS', 'MKL_NUM_THREADS'):
    os.environ[name] = '1'

import numpy as np
from scipy.sparse import csc_matrix
from scipy.sparse.linalg import splu


def read_matrix(path):
    with open(path, 'rb') as f:
        head = np.frombuffer(f.read(8), dtype='<i4')
        n, nnz = int(head[0]), int(head[1])
        col_ptr = np.frombuffer(f.read(4 * (n + 1)), dtype='<i4')
        row_idx = np.frombuffer(f.read(4 * nnz), dtype='<i4')
        vals = np.frombuffer(f.read(16 * nnz), dtype='<f8')
    values = vals[0::2] + 1j * vals[1::2]
    return csc_matrix((values, row_idx, col_ptr), shape=(n, n))


def main():
    args = sys.argv[1:]
    nrhs = 0
    if args and args[0].startswith('--solve='):
        nrhs = int(args[0][len('--solve='):])
        args = args[1:]
    reps = int(args[0])
    for path in args[1:]:
        a = read_matrix(path)
        rhs = None
        if nrhs > 0:
            k = np.arange(a.shape[0] * nrhs).reshape(a.shape[0], nrhs)
            rhs = np.sin(0.37 * k) + 1j * np.cos(0.21 * k)
        lu = None
        times = []
        cpu = []
        # One untimed call first (page faults, library loading), then reps timed calls.
        for r in range(reps + 1):
            c0 = time.process_time()
            t0 = time.perf_counter()
            lu = splu(a, permc_spec='MMD_AT_PLUS_A', diag_pivot_thresh=0.1, options=dict(SymmetricMode=True))
            if rhs is not None:
                lu.solve(rhs)
            dt = (time.perf_counter() - t0) * 1e3
            dc = (time.process_time() - c0) * 1e3
            if r > 0:
                times.append(dt)
                cpu.append(dc)
        x = np.sin(0.37 * np.arange(a.shape[0])) + 1j * np.cos(0.21 * np.arange(a.shape[0]))
        y = lu.solve(a @ x)
        times.sort()
        print(json.dumps({
            'file': path,
            'n': a.shape[0],
            'minMs': times[0],
            'minCpuMs': min(cpu),
            'medianMs': times[len(times) // 2],
            'relError': float(np.linalg.norm(y - x) / np.linalg.norm(x)),
            'factorNonzeros': int(lu.L.nnz + lu.U.nnz),
        }), flush=True)


if __name__ == '__main__':
    main()
