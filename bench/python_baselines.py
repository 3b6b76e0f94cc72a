#!/usr/bin/python3
"""Reference timings for allocsim_bench, written for it (numpy and scipy only).

allocsim_bench writes an instance as raw float64 files (gains.bin row-major
n*m, budgets.bin, capacities.bin; masses sum to 1) into a folder and calls

  python_baselines.py info
  python_baselines.py highs  FOLDER N M
  python_baselines.py plain  FOLDER N M EPS TOL MAX_ITER BUDGET_SECONDS
  python_baselines.py log    FOLDER N M EPS TOL MAX_ITER BUDGET_SECONDS
  python_baselines.py nodf   FOLDER N M COUNT

Each prints one JSON object on stdout. Timers start after the files are read
(and, for HiGHS, after the sparse constraint matrix is built): they time the
solve only.

highs: scipy.optimize.linprog(method="highs-ipm") on max <G, P> subject to
       the row and column sums. Interior point with crossover is the fastest
       of scipy's HiGHS methods on these dense problems (measured at n = m =
       300: 1.6 s, against 10 s for the dual simplex that method="highs"
       picks; at n = m = 1000 the simplex takes minutes).
plain: textbook Sinkhorn in scaling form, K = exp((G - max G) / eps),
       u = r / (K v), v = c / (K^T u), no stabilisation, no epsilon-scaling.
log:   textbook log-domain Sinkhorn, f = eps log r - eps LSE_j((G_ij + g_j)/eps),
       g = eps log c - eps LSE_i((G_ij + f_i)/eps), no epsilon-scaling.
nodf:  NODF (Almeida-Neto et al. 2008) of counts.bin binarised by cell > 0,
       by degree, from the overlap matrices B B^T and B^T B (BLAS), computed
       COUNT times (the metric only); prints the time and the value.
Both Sinkhorns stop when the row violation |P 1 - r|_1 (columns are exact
after the column update) is <= TOL, after MAX_ITER sweeps, or when the time
budget is spent; a sweep that leaves floating-point range stops them with
"failed": true.
"""
import json
import sys
import time

import numpy as np


def load(folder, n, m):
    gains = np.fromfile(folder + "/gains.bin", dtype=np.float64).reshape(n, m)
    budgets = np.fromfile(folder + "/budgets.bin", dtype=np.float64)
    capacities = np.fromfile(folder + "/capacities.bin", dtype=np.float64)
    return gains, budgets, capacities


def highs(gains, r, c):
    from scipy.optimize import linprog
    from scipy.sparse import csr_matrix

    n, m = gains.shape
    cells = np.arange(n * m)
    rows = np.concatenate([cells // m, n + cells % m])
    matrix = csr_matrix((np.ones(2 * n * m), (rows, np.concatenate([cells, cells]))),
                        shape=(n + m, n * m))
    rhs = np.concatenate([r, c])
    start = time.perf_counter()
    res = linprog(-gains.ravel(), A_eq=matrix, b_eq=rhs, bounds=(0, None),
                  method="highs-ipm")
    seconds = time.perf_counter() - start
    return {"seconds": seconds, "status": int(res.status),
            "total_gain": float(-res.fun) if res.status == 0 else None}


def row_lse(x):
    top = x.max(axis=1)
    return top + np.log(np.exp(x - top[:, None]).sum(axis=1))


def sinkhorn_plain(gains, r, c, eps, tol, max_iter, budget):
    start = time.perf_counter()
    kernel = np.exp((gains - gains.max()) / eps)
    u = np.ones_like(r)
    v = np.ones_like(c)
    sweeps, violation, failed = 0, float("inf"), False
    with np.errstate(all="ignore"):
        while sweeps < max_iter and time.perf_counter() - start < budget:
            sweeps += 1
            kv = kernel @ v
            if sweeps > 1:
                violation = float(np.abs(u * kv - r).sum())
                if violation <= tol:
                    break
            u = r / kv
            v = c / (kernel.T @ u)
            if not (np.isfinite(u).all() and np.isfinite(v).all()):
                failed, violation = True, float("nan")
                break
    return finish(start, sweeps, violation, tol, failed)


def sinkhorn_log(gains, r, c, eps, tol, max_iter, budget):
    start = time.perf_counter()
    scaled = gains / eps
    log_r, log_c = np.log(r), np.log(c)
    f = np.zeros_like(r)  # f / eps
    g = np.zeros_like(c)  # g / eps
    sweeps, violation, failed = 0, float("inf"), False
    while sweeps < max_iter and time.perf_counter() - start < budget:
        sweeps += 1
        lse = row_lse(scaled + g[None, :])
        if sweeps > 1:
            violation = float(np.abs(np.exp(f + lse) - r).sum())
            if violation <= tol:
                break
        f = log_r - lse
        g = log_c - row_lse((scaled + f[:, None]).T)
        if not (np.isfinite(f).all() and np.isfinite(g).all()):
            failed, violation = True, float("nan")
            break
    return finish(start, sweeps, violation, tol, failed)


def nodf_part(b):
    """Sum over pairs with k_upper > k_lower > 0 of overlap / k_lower, and the pair count."""
    k = b.sum(axis=1)
    overlap = b @ b.T
    upper_fuller = (k[:, None] > k[None, :]) & (k[None, :] > 0)
    scores = np.where(upper_fuller, overlap / np.maximum(k[None, :], 1.0), 0.0)
    rows = b.shape[0]
    return scores.sum(), rows * (rows - 1) / 2.0


def nodf_loop(counts, count):
    links = (counts > 0).astype(np.float64)
    start = time.perf_counter()
    for _ in range(count):
        row_sum, row_pairs = nodf_part(links)
        column_sum, column_pairs = nodf_part(links.T)
        value = 100.0 * (row_sum + column_sum) / (row_pairs + column_pairs)
    seconds = time.perf_counter() - start
    return {"seconds": seconds, "seconds_per_matrix": seconds / count, "nodf": float(value)}


def finish(start, sweeps, violation, tol, failed):
    seconds = time.perf_counter() - start
    return {"seconds": seconds, "iterations": sweeps, "violation": violation,
            "converged": bool(violation <= tol), "failed": failed,
            "seconds_per_iteration": seconds / max(sweeps, 1)}


def main(argv):
    task = argv[1]
    if task == "info":
        print(json.dumps({"numpy": np.__version__, "python": sys.version.split()[0]}))
        return 0
    folder, n, m = argv[2], int(argv[3]), int(argv[4])
    if task == "nodf":
        counts = np.fromfile(folder + "/counts.bin", dtype=np.float64).reshape(n, m)
        print(json.dumps(nodf_loop(counts, int(argv[5]))))
        return 0
    gains, r, c = load(folder, n, m)
    if task == "highs":
        out = highs(gains, r, c)
    else:
        eps, tol, max_iter, budget = float(argv[5]), float(argv[6]), int(argv[7]), float(argv[8])
        solver = sinkhorn_plain if task == "plain" else sinkhorn_log
        out = solver(gains, r, c, eps, tol, max_iter, budget)
    print(json.dumps(out))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
