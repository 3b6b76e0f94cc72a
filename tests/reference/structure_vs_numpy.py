#!/usr/bin/python3
"""Generator of tests/data/structure_reference.csv: numpy's values for the
spectral radius and ECI/PCI of the fixed matrices tests/data/structure_*.csv.

The C++ tests (nestedness_test, rankings_test) read the reference file and
compare; numpy is the outside source. Run once after changing a matrix:

    /usr/bin/python3 tests/reference/structure_vs_numpy.py --data tests/data
    /usr/bin/python3 tests/reference/structure_vs_numpy.py --data tests/data --check

--write-inputs regenerates the input matrices themselves (seeded), which
should never be needed; --check recomputes and compares with the stored file.

Definitions used here (independent of the C++ code paths):
  spectral radius = largest singular value, numpy.linalg.svd.
  ECI (Hidalgo & Hausmann 2009): eigenvector of the second-largest eigenvalue
      of W = (M / k) (M / h)^T, i.e. W_ii' = sum_j M_ij M_i'j / (k_i h_j),
      from numpy.linalg.eig on the non-symmetric W; sign so that it
      correlates positively with diversity k; standardised (population sd).
  PCI: the same on W_p = (M / h)^T (M / k) with numpy.linalg.eig; sign so
      that it correlates positively with each column's mean ECI of its rows.
"""
import argparse
import csv
import glob
import os
import sys

import numpy as np

REFERENCE = "structure_reference.csv"


def write_inputs(data):
    rng = np.random.default_rng(20240605)

    def save(name, matrix, fmt):
        np.savetxt(os.path.join(data, name), matrix, fmt=fmt, delimiter=",")

    def connected_binary(rows, cols, density):
        while True:
            m = (rng.random((rows, cols)) < density).astype(int)
            if m.sum(axis=1).min() > 0 and m.sum(axis=0).min() > 0:
                return m

    save("structure_random_30x40.csv", connected_binary(30, 40, 0.25), "%d")
    save("structure_tall_40x6.csv", connected_binary(40, 6, 0.4), "%d")
    # Nested by a threshold on row and column traits, with 5% of cells flipped.
    a = np.sort(rng.random(25))[::-1][:, None]
    b = np.sort(rng.random(20))[None, :]
    nested = (a + 1.0 - b > 0.9).astype(int)
    flips = rng.random(nested.shape) < 0.05
    nested = np.where(flips, 1 - nested, nested)
    nested[nested.sum(axis=1) == 0, 0] = 1
    nested[0, nested.sum(axis=0) == 0] = 1
    save("structure_nested_25x20.csv", nested, "%d")
    weights = np.round(rng.gamma(0.7, 3.0, (12, 9)), 3)
    save("structure_weighted_12x9.csv", weights, "%.3f")


def second_eigenvector(w):
    values, vectors = np.linalg.eig(w)
    order = np.argsort(-values.real)
    return values[order[1]].real, vectors[:, order[1]].real


def standardise(v):
    return (v - v.mean()) / v.std()


def complexity_indices(m):
    k = m.sum(axis=1)
    h = m.sum(axis=0)
    w_rows = (m / k[:, None]) @ (m / h[None, :]).T
    second, eci = second_eigenvector(w_rows)
    if np.corrcoef(eci, k)[0, 1] < 0:
        eci = -eci
    eci = standardise(eci)
    w_cols = (m / h[None, :]).T @ (m / k[:, None])
    _, pci = second_eigenvector(w_cols)
    mean_eci = (m.T @ eci) / h
    if np.corrcoef(pci, mean_eci)[0, 1] < 0:
        pci = -pci
    return second, eci, standardise(pci)


def reference_rows(data):
    rows = []
    for path in sorted(glob.glob(os.path.join(data, "structure_*.csv"))):
        name = os.path.basename(path)
        if name == REFERENCE:
            continue
        m = np.loadtxt(path, delimiter=",", ndmin=2)
        rows.append((name, "spectral_radius", 0, np.linalg.svd(m, compute_uv=False)[0]))
        if not np.all((m == 0) | (m == 1)):
            continue  # ECI is defined on binary matrices only
        second, eci, pci = complexity_indices(m)
        rows.append((name, "second_eigenvalue", 0, second))
        rows += [(name, "eci", i, v) for i, v in enumerate(eci)]
        rows += [(name, "pci", j, v) for j, v in enumerate(pci)]
    return rows


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--data", required=True, help="the tests/data folder")
    parser.add_argument("--write-inputs", action="store_true",
                        help="regenerate the input matrices (seeded)")
    parser.add_argument("--check", action="store_true",
                        help="compare with the stored reference instead of writing it")
    args = parser.parse_args()
    if args.write_inputs:
        write_inputs(args.data)
    rows = reference_rows(args.data)
    target = os.path.join(args.data, REFERENCE)
    if args.check:
        with open(target) as f:
            stored = list(csv.reader(f))[1:]
        bad = [r for r, s in zip(rows, stored)
               if (r[0], r[1], str(r[2])) != tuple(s[:3]) or abs(r[3] - float(s[3])) > 1e-12]
        if bad or len(stored) != len(rows):
            print(f"{target} is stale: {len(bad)} differing rows", file=sys.stderr)
            return 1
        print(f"{target}: {len(rows)} values agree")
        return 0
    with open(target, "w", newline="") as f:
        out = csv.writer(f)
        out.writerow(["matrix", "quantity", "index", "value"])
        for name, quantity, index, value in rows:
            out.writerow([name, quantity, index, repr(float(value))])
    print(f"wrote {len(rows)} values to {target}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
