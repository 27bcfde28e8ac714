#!/usr/bin/env python3
"""General-purpose reference timings for benches/scale.rs (numpy / scipy).

The same problems as the criterion ids, solved the way a user of numpy and
scipy would: NODF overlaps as matrix products (dense float32 `A @ A.T` with
BLAS, or scipy sparse products), and the largest singular value by
`scipy.sparse.linalg.svds(k=1)`. Inputs are random with the same shapes and
fills as the Rust benches (not the same cells: a different generator), built
before timing; each figure is the median of several runs, timed from the
in-memory 0/1 (or weighted) matrix to the value. Peak memory is the
process's maximum resident set size after each part, so run one part per
process (`--part`) for a memory figure that belongs to that part alone.

Usage: python3 benches/reference/scale_reference.py [--part dense|sparse|svds|all] [--threads 2]
"""
import argparse
import os
import resource
import statistics
import sys
import time


def median_time(f, runs):
    times = []
    value = None
    for _ in range(runs):
        t = time.perf_counter()
        value = f()
        times.append(time.perf_counter() - t)
    return statistics.median(times), value


def nodf_side_dense(a, np):
    """Sum of NODF pair values over the rows of dense 0/1 float32 `a`, sorted order."""
    d = a.sum(axis=1)
    o = a @ a.T  # overlaps, float32 (exact: integers below 2^24)
    upper = (d[:, None] > d[None, :]).astype(np.float32)  # row u (first index) is the upper
    s = (o * upper).sum(axis=0, dtype=np.float64)  # per lower row: sum of overlaps with uppers
    ok = d > 0
    return float((100.0 * s[ok] / d[ok]).sum())


def nodf_dense(a, np):
    m, n = a.shape
    pairs = m * (m - 1) // 2 + n * (n - 1) // 2
    at = np.ascontiguousarray(a.T)
    return (nodf_side_dense(a, np) + nodf_side_dense(at, np)) / pairs


def nodf_side_sparse(a, np):
    d = np.asarray(a.sum(axis=1)).ravel()
    o = (a @ a.T).tocoo()
    u, l, x = o.row, o.col, o.data
    keep = d[u] > d[l]
    return float((100.0 * x[keep] / d[l[keep]]).sum())


def nodf_sparse(a, np):
    m, n = a.shape
    pairs = m * (m - 1) // 2 + n * (n - 1) // 2
    return (nodf_side_sparse(a, np) + nodf_side_sparse(a.T.tocsr(), np)) / pairs


def peak_mb():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def main():
    p = argparse.ArgumentParser()
    p.add_argument("--part", default="all", choices=["dense", "sparse", "svds", "all"])
    p.add_argument("--threads", type=int, default=2)
    p.add_argument("--runs", type=int, default=5)
    args = p.parse_args()
    for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ[var] = str(args.threads)
    import numpy as np
    import scipy
    import scipy.sparse as sp
    from scipy.sparse.linalg import svds

    rng = np.random.default_rng(1)
    print(f"numpy {np.__version__}, scipy {scipy.__version__}, python {sys.version.split()[0]}, "
          f"{args.threads} BLAS threads")
    if args.part in ("dense", "all"):
        for m in (1000, 4000):
            a = (rng.random((m, m)) < 0.2).astype(np.float32)
            t, v = median_time(lambda: nodf_dense(a, np), args.runs)
            print(f"nodf_dense/{m}: numpy A@A.T float32  {t * 1e3:9.1f} ms  NODF={v:.6f}  peak {peak_mb():.0f} MB")
    if args.part in ("sparse", "all"):
        for n in (20000, 100000):
            rows = rng.integers(0, n, 10 * n)
            cols = rng.integers(0, n, 10 * n)
            a = sp.csr_matrix((np.ones(10 * n, dtype=np.float64), (rows, cols)), shape=(n, n))
            a.sum_duplicates()
            a.data[:] = 1.0
            t, v = median_time(lambda: nodf_sparse(a, np), args.runs)
            print(f"nodf_sparse/{n}: scipy sparse A@A.T  {t * 1e3:9.1f} ms  NODF={v:.6f}  peak {peak_mb():.0f} MB")
    if args.part in ("svds", "all"):
        n = 100000
        rows = rng.integers(0, n, 10 * n)
        cols = rng.integers(0, n, 10 * n)
        a = sp.csr_matrix((np.ones(10 * n), (rows, cols)), shape=(n, n))
        a.sum_duplicates()
        a.data[:] = 1.0  # the 0/1 matrix, as in spectral_sparse/100000
        t, v = median_time(lambda: svds(a, k=1, return_singular_vectors=False)[0], args.runs)
        print(f"spectral_sparse/{n}: scipy svds(k=1)  {t * 1e3:9.1f} ms  sigma={v:.10f}  peak {peak_mb():.0f} MB")


if __name__ == "__main__":
    main()
