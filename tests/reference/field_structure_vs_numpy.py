#!/usr/bin/python3
"""`allocsim analyze --allocation P.csv` without gains, on random count
matrices with all-zero rows and columns, against implementations written
here from the published definitions:

  NODF (Almeida-Neto et al. 2008, Oikos 117:1227, section "The NODF metric"):
      rows (columns) ordered by decreasing marginal total (degree); for each
      pair i above j, N_paired = 0 when MT_i <= MT_j, else 100 * (number of
      j's presences shared with i) / MT_j; NODF_rows = mean over the
      n(n-1)/2 row pairs, NODF_columns likewise, NODF = mean over all pairs.
  spectral radius: numpy.linalg.svd's largest singular value of the 0/1
      matrix (the spectral radius of the bipartite adjacency matrix).
  connectance: links / (rows x columns).
  weight concentration: numpy sort and cumulative sums.

All of them on the matrix with its all-zero rows and columns removed, which
the report must say it left out (by label). A perfectly nested 3x3 matrix
with one empty row must score NODF 100 (the paper's Fig. 1 logic: every
pair with decreasing fill nests fully).
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

TOLERANCE = 1e-9  # relative; both sides compute in double precision


def nodf_from_definition(m):
    def part(rows):
        degrees = rows.sum(axis=1)
        order = np.argsort(-degrees, kind="stable")
        rows, degrees = rows[order], degrees[order]
        scores = []
        for i in range(len(rows)):
            for j in range(i + 1, len(rows)):
                if degrees[i] <= degrees[j] or degrees[j] == 0:
                    scores.append(0.0)
                else:
                    shared = np.logical_and(rows[i], rows[j]).sum()
                    scores.append(100.0 * shared / degrees[j])
        return scores

    r, c = part(m), part(m.T)
    mean = lambda xs: float(np.mean(xs)) if xs else 0.0
    return mean(r), mean(c), mean(r + c)


def write_labelled(path, values, rows, cols):
    with open(path, "w") as f:
        f.write("," + ",".join(cols) + "\n")
        for label, row in zip(rows, values):
            f.write(label + "," + ",".join(str(int(v)) for v in row) + "\n")


def analyse(binary, folder, values, rows, cols, extra=()):
    path = os.path.join(folder, "P.csv")
    write_labelled(path, values, rows, cols)
    out = subprocess.run([binary, "analyze", "--allocation", path, "--json", *extra],
                         capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError(out.stderr)
    return json.loads(out.stdout)


def close(a, b):
    return abs(a - b) <= TOLERANCE * max(1.0, abs(b))


def check_case(binary, folder, seed):
    rng = np.random.default_rng(seed)
    n, m = rng.integers(6, 25), rng.integers(6, 25)
    counts = rng.poisson(rng.gamma(0.6, 2.0, (n, m)))
    empty_rows = rng.choice(n, size=rng.integers(1, 3), replace=False)
    empty_cols = rng.choice(m, size=rng.integers(0, 3), replace=False)
    counts[empty_rows, :] = 0
    counts[:, empty_cols] = 0
    rows = [f"plant{i}" for i in range(n)]
    cols = [f"visitor{j}" for j in range(m)]
    report = analyse(binary, folder, counts, rows, cols)
    keep_r = counts.sum(axis=1) > 0
    keep_c = counts.sum(axis=0) > 0
    kept = counts[keep_r][:, keep_c]
    links = (kept > 0).astype(float)
    nodf_r, nodf_c, nodf_t = nodf_from_definition(links)
    s = report["structure"]
    shares = np.sort(kept.ravel() / kept.sum())[::-1]
    cumulative = np.cumsum(shares)
    k = kept.shape[0] + kept.shape[1] - 1
    conc = report["concentration"]
    checks = {
        "NODF total (Almeida-Neto 2008)": close(s["nodf"], nodf_t),
        "NODF rows": close(s["nodf_rows"], nodf_r),
        "NODF columns": close(s["nodf_columns"], nodf_c),
        "spectral radius (numpy svd)": close(s["spectral_radius"], np.linalg.svd(links, compute_uv=False)[0]),
        "connectance": close(s["connectance"], links.sum() / links.size),
        "analysed shape": report["agents"] == kept.shape[0] and report["partners"] == kept.shape[1],
        "left-out labels": sorted(report["left_out"]["agents"]) == sorted(np.array(rows)[~keep_r].tolist())
        and sorted(report["left_out"]["partners"]) == sorted(np.array(cols)[~keep_c].tolist()),
        "temperature status no_gains": report["temperature"]["status"] == "no_gains",
        "share on n+m-1 largest cells": close(conc["share_on_forest_links"], shares[:k].sum()),
        "cells for 50/70/90%": [conc["cells_for_50"], conc["cells_for_70"], conc["cells_for_90"]]
        == [int(np.argmax(cumulative >= q * (1 - 1e-12))) + 1 for q in (0.5, 0.7, 0.9)],
    }
    failed = [name for name, ok in checks.items() if not ok]
    print(f"{'ok' if not failed else 'FAIL'}: seed {seed}, {n}x{m} with {len(empty_rows)} empty rows, "
          f"{len(empty_cols)} empty columns" + (f": {failed}" if failed else ""))
    return not failed


def check_nested_with_empty_row(binary, folder):
    nested = np.array([[1, 1, 1], [1, 1, 0], [1, 0, 0], [0, 0, 0]])
    report = analyse(binary, folder, nested * 3, ["a", "b", "c", "empty"], ["x", "y", "z"],
                     ["--nulls", "curveball", "--null-samples", "20"])
    ok = (report["structure"]["nodf"] == 100 and report["structure"]["connectance"] == 6 / 9
          and report["left_out"]["agents"] == ["empty"] and report["agents"] == 3
          and report["structure"]["nodf_null"]["null_mean"] == 100)
    print(f"{'ok' if ok else 'FAIL'}: perfectly nested 3x3 plus an empty row: NODF "
          f"{report['structure']['nodf']} (100 expected), null ensemble on the 3x3")
    return ok


def main():
    parser = test_parser()
    parser.add_argument("--seed", type=int, default=20261202)
    a = parser.parse_args()
    print(f"seed {a.seed}")
    ok = True
    with tempfile.TemporaryDirectory() as folder:
        ok &= check_nested_with_empty_row(a.allocsim, folder)
        for k in range(8):
            ok &= check_case(a.allocsim, folder, a.seed + k)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
