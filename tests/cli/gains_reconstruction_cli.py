#!/usr/bin/python3
"""`allocsim analyze` with unknown gains: features, trait tables, latent rank.

Checks, end to end:
  * trait tables whose rows are shuffled (labels kept) give the same weight
    as the aligned ones; the weight equals that of the same feature given as
    a matrix file (the distance form built by hand, -(x_i - y_j)^2);
  * --latent-rank auto reports a rank, labelled scores, strengths with
    standard errors and a model table with independence and saturated rows;
  * bad input exits 2 with one line naming it: a trait table missing a
    label, --latent-rank at the saturated rank, --latent-rank two, only one
    of the trait tables, two collinear features.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402


def write(path, matrix, row_labels=None, column_labels=None, integer=False):
    with open(path, "w") as f:
        if column_labels is not None:
            f.write(",".join(([""] if row_labels is not None else []) + list(column_labels)) + "\n")
        for i, row in enumerate(matrix):
            cells = [str(int(v)) if integer else repr(float(v)) for v in row]
            f.write(",".join(([row_labels[i]] if row_labels is not None else []) + cells) + "\n")


def run(allocsim, args):
    return subprocess.run([allocsim, "analyze"] + args, capture_output=True, text=True)


def main():
    parser = test_parser()
    a = parser.parse_args()
    rng = np.random.default_rng(17)
    n, m = 7, 8
    x, y = rng.uniform(0, 3, n), rng.uniform(0, 3, m)
    eta = -0.7 * (x[:, None] - y[None, :]) ** 2
    counts = rng.multinomial(5000, (np.exp(eta) / np.exp(eta).sum()).ravel()).reshape(n, m)
    rows = [f"plant {i}" for i in range(n)]
    cols = [f"bee {j}" for j in range(m)]
    failures = []
    with tempfile.TemporaryDirectory() as d:
        p = lambda name: os.path.join(d, name)
        write(p("visits.csv"), counts, rows, cols, integer=True)
        write(p("gains.csv"), rng.normal(size=(n, m)), rows, cols)
        write(p("plants.csv"), x[:, None], rows, ["depth"])
        perm = rng.permutation(n)
        write(p("plants_shuffled.csv"), x[perm][:, None], [rows[i] for i in perm], ["depth"])
        write(p("bees.csv"), y[:, None], cols, ["depth"])
        write(p("distance.csv"), -(x[:, None] - y[None, :]) ** 2, rows, cols)
        base = ["--allocation", p("visits.csv"), "--gains", p("gains.csv"), "--json"]

        def weight(extra):
            out = run(a.allocsim, base + extra)
            if out.returncode != 0:
                failures.append(f"{extra}: exit {out.returncode}: {out.stderr.strip()}")
                return None
            return json.loads(out.stdout)["gains_reconstruction"]

        aligned = weight(["--row-traits", p("plants.csv"), "--column-traits", p("bees.csv")])
        shuffled = weight(["--row-traits", p("plants_shuffled.csv"), "--column-traits", p("bees.csv")])
        matrix = weight(["--features", p("distance.csv")])
        if aligned and shuffled and matrix:
            w1 = aligned["features"]["weights"]["-(depth)^2"]["weight"]
            w2 = shuffled["features"]["weights"]["-(depth)^2"]["weight"]
            w3 = matrix["features"]["weights"][p("distance.csv")]["weight"]
            if w1 != w2:
                failures.append(f"shuffled trait table gives {w2}, aligned {w1}")
            if abs(w1 - w3) > 1e-9 * abs(w3):
                failures.append(f"trait feature {w1} differs from the matrix feature {w3}")
            print(f"trait weight {w1:.6f} (true 0.7), shuffled rows identical, matrix form {w3:.6f}")

        latent = weight(["--latent-rank", "auto"])
        if latent:
            l = latent["latent"]
            models = latent["models"]
            ok = (l["rank"] >= 1 and list(l["row_scores"].keys()) == rows
                  and list(l["column_scores"].keys()) == cols
                  and len(l["strength_standard_errors"]) == l["rank"]
                  and "independence" in models and "saturated" in models
                  and "sigma_1" in l["strength_meaning"])
            if not ok:
                failures.append(f"latent report incomplete: {latent}")
            print(f"latent rank chosen {l['rank']}, sigma {l['strengths']}")

        write(p("plants_missing.csv"), x[:-1, None], rows[:-1], ["depth"])
        bad = {
            "a trait table missing a label": ["--row-traits", p("plants_missing.csv"), "--column-traits", p("bees.csv")],
            "latent rank at the saturated rank": ["--latent-rank", str(min(n, m) - 1)],
            "latent rank not a number": ["--latent-rank", "two"],
            "only the row traits": ["--row-traits", p("plants.csv")],
            "collinear features": ["--features", p("distance.csv"), p("distance.csv")],
        }
        for what, extra in bad.items():
            out = run(a.allocsim, base + extra)
            lines = out.stderr.strip().splitlines()
            if out.returncode != 2 or len(lines) != 1:
                failures.append(f"{what}: exit {out.returncode}, stderr {out.stderr!r}")
            else:
                print(f"{what}: exit 2, {lines[0]}")
    for f in failures:
        print("FAILED:", f)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
