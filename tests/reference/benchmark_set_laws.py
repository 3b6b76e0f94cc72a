#!/usr/bin/python3
"""A blind benchmark set of `allocsim synth` against the laws it states.

Outside references: scipy.stats.kstest against scipy.stats.loguniform for the
drawn epsilons (and, on log scale, the drawn units), scipy.stats.spearmanr
for the information the case order carries, scipy.stats.chisquare for the
shape draws (uniform on whole numbers) and the family counts.

On a 500-case set (three families, epsilon loguniform(0.01, 1)):
  * |Spearman(case index, true epsilon)| < 0.1, and likewise for the family
    code and the units: the order carries no information;
  * families are interleaved: no family runs for more than 10 cases in a row
    (a run of 11 has probability about 500 * (1/3)^10 = 0.8% in a random
    order, common practice for a runs check) and each family holds a third
    of every half of the set (chi-square, p > 0.01);
  * the epsilons pass a Kolmogorov-Smirnov test against loguniform(0.01, 1)
    (p > 0.01), and a grid (log(0.02, 0.5, 5)) keeps exactly its values;
  * agents and partners are uniform on 10..60 and 10..80 (chi-square on
    five bins, p > 0.01) and stay in range.
"""
import csv
import itertools
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

SEED = 11
P_FLOOR = 0.01
RANK_LIMIT = 0.1
LONGEST_RUN = 10

failures = []


def check(condition, message):
    print(("ok   " if condition else "FAIL ") + message)
    if not condition:
        failures.append(message)


def synth(binary, folder, *options):
    made = subprocess.run([binary, "synth", "--out-dir", folder, *options], capture_output=True, text=True)
    if made.returncode != 0:
        sys.exit(f"synth failed: {made.stderr}")
    return list(csv.DictReader(open(os.path.join(folder, "truth.csv"))))


def main():
    parser = test_parser()
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    with tempfile.TemporaryDirectory() as tmp:
        rows = synth(binary, os.path.join(tmp, "set"), "--cases", "500", "--epsilon", "loguniform(0.01, 1)",
                     "--units", "loguniform(200, 50000)", "--shape", "agents=10..60, partners=10..80",
                     "--seed", str(SEED))
        index = np.arange(len(rows))
        check([r["case"] for r in rows] == [f"case-{k:04d}" for k in index], "500 cases named case-0000..case-0499")
        eps = np.array([float(r["true_epsilon"]) for r in rows])
        units = np.array([float(r["units"]) for r in rows])
        families = sorted({r["family"] for r in rows})
        code = np.array([families.index(r["family"]) for r in rows])
        for name, values in [("true epsilon", eps), ("family", code), ("units", units)]:
            rho = stats.spearmanr(index, values).correlation
            check(abs(rho) < RANK_LIMIT, f"Spearman(case index, {name}) = {rho:+.4f}, |rho| < {RANK_LIMIT}")
        longest = max(len(list(run)) for _, run in itertools.groupby(code))
        check(longest <= LONGEST_RUN, f"longest run of one family: {longest} cases (<= {LONGEST_RUN})")
        for half, part in [("first", code[:250]), ("second", code[250:])]:
            p = stats.chisquare(np.bincount(part, minlength=3)).pvalue
            check(p > P_FLOOR, f"families in the {half} half {np.bincount(part).tolist()}: chi-square p = {p:.3f}")
        ks = stats.kstest(eps, stats.loguniform(0.01, 1).cdf)
        check(ks.pvalue > P_FLOOR, f"epsilon vs loguniform(0.01, 1): KS D = {ks.statistic:.4f}, p = {ks.pvalue:.3f}")
        check(eps.min() >= 0.01 and eps.max() <= 1, "epsilons within [0.01, 1]")
        # Units are rounded to whole numbers: compare log(units) with the uniform law on
        # [log 200, log 50000], which rounding moves by at most 1/400 in log.
        ks = stats.kstest(np.log(units), stats.uniform(np.log(200), np.log(50000) - np.log(200)).cdf)
        check(ks.pvalue > P_FLOOR, f"log(units) vs uniform: KS D = {ks.statistic:.4f}, p = {ks.pvalue:.3f}")
        for name, low, high in [("agents", 10, 60), ("partners", 10, 80)]:
            values = np.array([int(r[name]) for r in rows])
            check(values.min() >= low and values.max() <= high, f"{name} within {low}..{high}")
            edges = np.linspace(low, high + 1, 6)
            counts, _ = np.histogram(values, bins=edges)
            expected = np.diff(np.ceil(edges)) / (high - low + 1) * len(values)
            p = stats.chisquare(counts, expected).pvalue
            check(p > P_FLOOR, f"{name} on five bins {counts.tolist()}: chi-square p = {p:.3f}")

        grid = synth(binary, os.path.join(tmp, "grid"), "--epsilon", "log(0.02, 0.5, 5)", "--replicates", "2",
                     "--units", "300", "--agents", "5", "--partners", "4")
        values = sorted({float(r["true_epsilon"]) for r in grid})
        check(len(grid) == 30 and np.allclose(values, np.geomspace(0.02, 0.5, 5), rtol=1e-11),
              f"a grid keeps its values: {len(grid)} cases at {values}")
        cells = {(r["family"], r["true_epsilon"]) for r in grid}
        check(len(cells) == 15, "every family meets every grid value")
    print(f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
