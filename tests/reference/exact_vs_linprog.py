#!/usr/bin/env python3
"""Exact transport of `allocsim solve --method exact` against scipy's HiGHS.

Outside reference: scipy.optimize.linprog(method="highs") solving the same
linear programme (maximise <G, P> subject to row sums r, column sums c,
P >= 0, P = 0 where access is 0).

For seeded random instances (several gain families, with and without access
masks that keep the problem feasible, shares and whole-number counts) the
script writes CSV files to a temporary folder, runs

    allocsim solve --gains G.csv --budgets r.csv --capacities c.csv
                   [--access A.csv] --method exact --json --out P.csv

and checks:
  * status "optimal", and the relative gap in total gain
        |gain_allocsim - gain_highs| / max(|gain_highs|, range(G) * sum(r))
    is at most 1e-7;
  * P.csv: non-negative, zero where access is 0, marginals met (relative L1
    error <= 1e-8), <G, P> equal to the reported total gain, support size as
    reported and <= n+m-1, support a forest (edges = nodes - components,
    scipy.sparse.csgraph);
  * a few instances with a Hall violation built in: allocsim reports
    "infeasible" (exit code 1, no P.csv) and HiGHS agrees (status 2).

Prints one summary line; exits non-zero on any failure.
Usage: exact_vs_linprog.py --allocsim PATH --data DIR [--instances N] [--seed S]
"""

import argparse
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import sparse
from scipy.optimize import linprog
from scipy.sparse.csgraph import connected_components

GAP_TOLERANCE = 1e-7          # relative gap in total gain against HiGHS
MARGINAL_TOLERANCE = 1e-8     # relative L1 marginal error of P.csv
CONSISTENCY_TOLERANCE = 1e-9  # reported total gain against <G, P.csv>
GAIN_FAMILIES = ("uniform", "rank-product", "trait-distance", "integer-ties")


def north_west_corner_support(r, c):
    """Cells of the north-west corner coupling of (r, c): a feasible support."""
    r, c = r.astype(float).copy(), c.astype(float).copy()
    cells, i, j = [], 0, 0
    while i < len(r) and j < len(c):
        amount = min(r[i], c[j])
        cells.append((i, j))
        r[i] -= amount
        c[j] -= amount
        if r[i] <= c[j]:
            i += 1
        else:
            j += 1
    return cells


def random_gains(rng, n, m, family):
    if family == "uniform":
        return rng.uniform(0.0, 1.0, (n, m))
    if family == "rank-product":
        x, y = rng.uniform(0.0, 1.0, n), rng.uniform(0.0, 1.0, m)
        return np.outer(x, y)
    if family == "trait-distance":
        p = rng.choice([0.5, 1.0, 2.0])
        x, y = rng.uniform(0.0, 1.0, n), rng.uniform(0.0, 1.0, m)
        return -np.abs(x[:, None] - y[None, :]) ** p
    if family == "integer-ties":
        return rng.integers(0, 4, (n, m)).astype(float)
    raise ValueError(family)


def random_masses(rng, n, m, counts):
    if counts:  # whole numbers with equal totals
        total = int(rng.integers(max(n, m), 50 * max(n, m)))
        r = 1 + rng.multinomial(total - n, np.ones(n) / n)
        c = 1 + rng.multinomial(total - m, np.ones(m) / m)
        return r.astype(float), c.astype(float)
    r = rng.uniform(0.05, 1.0, n)
    c = rng.uniform(0.05, 1.0, m)
    return r / r.sum(), c / c.sum()


def feasible_access(rng, r, c, density):
    """Random cells plus the north-west corner support under random orders."""
    n, m = len(r), len(c)
    rows, cols = rng.permutation(n), rng.permutation(m)
    access = (rng.uniform(size=(n, m)) < density).astype(np.uint8)
    for i, j in north_west_corner_support(r[rows], c[cols]):
        access[rows[i], cols[j]] = 1
    return access


def hall_violating_access(r, c):
    """Confines the largest budgets, more than the smallest capacity in all,
    to the partner of smallest capacity: infeasible by Hall's condition."""
    n, m = len(r), len(c)
    target = int(np.argmin(c))
    order = np.argsort(r)[::-1]
    size = int(np.searchsorted(np.cumsum(r[order]), 1.001 * c[target], side="right")) + 1
    access = np.ones((n, m), dtype=np.uint8)
    access[order[:size], :] = 0
    access[order[:size], target] = 1
    return access


def make_instance(rng, index):
    family = GAIN_FAMILIES[index % len(GAIN_FAMILIES)]
    large = index % 17 == 0
    n = int(rng.integers(60, 121)) if large else int(rng.integers(1, 41))
    m = int(rng.integers(60, 121)) if large else int(rng.integers(1, 41))
    counts = index % 5 == 4
    r, c = random_masses(rng, n, m, counts)
    mask_kind = index % 3  # 0: none, 1: sparse mask, 2: dense mask
    access = None
    if mask_kind and n > 1 and m > 1:
        access = feasible_access(rng, r, c, 0.15 if mask_kind == 1 else 0.6)
    return {"gains": random_gains(rng, n, m, family), "budgets": r, "capacities": c,
            "access": access, "family": family, "counts": counts}


def write_csv(path, values, integer=False):
    fmt = "%d" if integer else "%.17g"
    np.savetxt(path, np.atleast_2d(values) if values.ndim == 2 else values.reshape(-1, 1),
               fmt=fmt, delimiter=",")


def highs_optimum(inst):
    """Maximum total gain by scipy HiGHS, or None when infeasible."""
    g, r, c, access = inst["gains"], inst["budgets"], inst["capacities"], inst["access"]
    n, m = g.shape
    allowed = np.ones((n, m), dtype=bool) if access is None else access.astype(bool)
    rows, cols = np.nonzero(allowed)
    k = len(rows)
    a_eq = sparse.vstack([
        sparse.csr_matrix((np.ones(k), (rows, np.arange(k))), shape=(n, k)),
        sparse.csr_matrix((np.ones(k), (cols, np.arange(k))), shape=(m, k)),
    ]).tocsr()
    result = linprog(-g[rows, cols], A_eq=a_eq, b_eq=np.concatenate([r, c]),
                     bounds=(0, None), method="highs")
    if result.status == 2:
        return None
    if result.status != 0:
        raise RuntimeError("HiGHS: " + result.message)
    return -result.fun


def run_allocsim(binary, folder, inst, name):
    paths = {key: os.path.join(folder, f"{name}_{key}.csv")
             for key in ("gains", "budgets", "capacities", "access", "coupling")}
    write_csv(paths["gains"], inst["gains"])
    write_csv(paths["budgets"], inst["budgets"], integer=inst["counts"])
    write_csv(paths["capacities"], inst["capacities"], integer=inst["counts"])
    command = [binary, "solve", "--gains", paths["gains"], "--budgets", paths["budgets"],
               "--capacities", paths["capacities"], "--method", "exact", "--json",
               "--out", paths["coupling"]]
    if inst["access"] is not None:
        write_csv(paths["access"], inst["access"], integer=True)
        command += ["--access", paths["access"]]
    done = subprocess.run(command, capture_output=True, text=True, timeout=300)
    report = json.loads(done.stdout) if done.stdout.strip() else {}
    coupling = None
    if os.path.exists(paths["coupling"]):
        coupling = np.loadtxt(paths["coupling"], delimiter=",", ndmin=2)
    return done.returncode, report, coupling, done.stderr.strip()


def is_forest(coupling):
    n, m = coupling.shape
    rows, cols = np.nonzero(coupling > 0)
    graph = sparse.csr_matrix((np.ones(len(rows)), (rows, n + cols)), shape=(n + m, n + m))
    components, _ = connected_components(graph, directed=False)
    return len(rows) == n + m - components


def check_feasible(inst, code, report, coupling, reference):
    """Failures (as text) of one instance that HiGHS solved."""
    g, r, c, access = inst["gains"], inst["budgets"], inst["capacities"], inst["access"]
    n, m = g.shape
    if code != 0 or report.get("status") != "optimal" or coupling is None:
        return [f"exit {code}, status {report.get('status')}, coupling file "
                f"{'present' if coupling is not None else 'missing'}"], None
    failures = []
    if report.get("method") != "exact":
        failures.append(f"method {report.get('method')!r}")
    allowed = np.ones((n, m), dtype=bool) if access is None else access.astype(bool)
    spread = np.ptp(g[allowed]) if allowed.any() else 0.0
    scale = max(abs(reference), spread * r.sum(), 1e-300)
    gap = abs(report["total_gain"] - reference) / scale
    if gap > GAP_TOLERANCE:
        failures.append(f"total gain {report['total_gain']!r} vs HiGHS {reference!r} (gap {gap:.3g})")
    if coupling.shape != (n, m):
        return failures + [f"P.csv is {coupling.shape}, expected {(n, m)}"], gap
    if (coupling < 0).any():
        failures.append("negative cells in P.csv")
    if (coupling[~allowed] != 0).any():
        failures.append("P.csv uses cells where access is 0")
    marginal = (np.abs(coupling.sum(1) - r).sum() + np.abs(coupling.sum(0) - c).sum()) / r.sum()
    if marginal > MARGINAL_TOLERANCE:
        failures.append(f"marginal error of P.csv {marginal:.3g}")
    own_gain = float((g * coupling).sum())
    if abs(own_gain - report["total_gain"]) > CONSISTENCY_TOLERANCE * scale:
        failures.append(f"<G, P.csv> = {own_gain!r} but reported {report['total_gain']!r}")
    support = int((coupling > 0).sum())
    if support != report.get("support_size"):
        failures.append(f"P.csv has {support} links, reported {report.get('support_size')}")
    if support > n + m - 1:
        failures.append(f"{support} links > n+m-1 = {n + m - 1}")
    if not is_forest(coupling) or report.get("is_forest") is not True:
        failures.append("support is not a forest")
    return failures, gap


def check_infeasible(code, report, coupling):
    failures = []
    if code != 1 or report.get("status") != "infeasible":
        failures.append(f"expected exit 1 and status infeasible, got exit {code}, "
                        f"status {report.get('status')}")
    if not report.get("message"):
        failures.append("no message says why the problem is infeasible")
    if coupling is not None:
        failures.append("a coupling file was written for an infeasible problem")
    return failures


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--allocsim", required=True, help="path to the allocsim program")
    parser.add_argument("--data", required=True, help="tests/data folder (not needed here)")
    parser.add_argument("--instances", type=int, default=60, help="feasible random instances")
    parser.add_argument("--infeasible", type=int, default=6, help="instances with a Hall violation")
    parser.add_argument("--seed", type=int, default=20240611, help="seed of the instance generator")
    args = parser.parse_args()

    rng = np.random.default_rng(args.seed)
    failures, max_gap, max_links_share = [], 0.0, 0.0
    with tempfile.TemporaryDirectory(prefix="exact_vs_linprog_") as folder:
        for index in range(args.instances):
            inst = make_instance(rng, index)
            name = f"instance{index}"
            reference = highs_optimum(inst)
            if reference is None:
                failures.append(f"{name}: HiGHS finds the generated instance infeasible")
                continue
            code, report, coupling, stderr = run_allocsim(args.allocsim, folder, inst, name)
            problems, gap = check_feasible(inst, code, report, coupling, reference)
            if gap is not None:
                max_gap = max(max_gap, gap)
            n, m = inst["gains"].shape
            if coupling is not None and coupling.shape == (n, m):
                max_links_share = max(max_links_share, (coupling > 0).sum() / (n + m - 1))
            for problem in problems:
                failures.append(f"{name} ({n}x{m}, {inst['family']}, "
                                f"{'mask' if inst['access'] is not None else 'no mask'}, "
                                f"{'counts' if inst['counts'] else 'shares'}): {problem}"
                                + (f" [stderr: {stderr}]" if stderr else ""))
        for index in range(args.infeasible):
            inst = make_instance(rng, 3 * index)  # family varies, no mask of its own
            if min(inst["gains"].shape) < 2:
                inst = dict(inst, gains=rng.uniform(size=(5, 4)), counts=False)
                inst["budgets"], inst["capacities"] = random_masses(rng, 5, 4, False)
            inst["access"] = hall_violating_access(inst["budgets"], inst["capacities"])
            name = f"infeasible{index}"
            if highs_optimum(inst) is not None:
                failures.append(f"{name}: HiGHS finds the Hall-violating instance feasible")
                continue
            code, report, coupling, _ = run_allocsim(args.allocsim, folder, inst, name)
            failures += [f"{name}: {problem}" for problem in check_infeasible(code, report, coupling)]

    print(f"exact_vs_linprog: {args.instances} feasible and {args.infeasible} infeasible "
          f"instances (seed {args.seed}), max relative gap "
          f"{max_gap:.3g} against scipy HiGHS (tolerance {GAP_TOLERANCE:g}), largest support "
          f"{max_links_share:.2f} of n+m-1; {len(failures)} failure(s)")
    for failure in failures:
        print("  FAIL " + failure)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
