#!/usr/bin/env python3
"""`allocsim trend` against scipy, numpy and statsmodels (the outside references).

Runs a small temperature x capacity-law sweep (tests/data/trend_sweep.ini)
with `allocsim run`, reads /summary with h5py, and checks per capacity law:
  * rho equals scipy.stats.spearmanr of (temperature, nodf_z_score);
  * the permutation p-value agrees with scipy.stats.permutation_test
    (permutation_type="pairings", two-sided) within Monte Carlo error;
  * the slope equals numpy.polyfit of the metric on log10(temperature);
  * the bootstrap interval holds the slope, and its half-width is within a
    factor 1.6 of statsmodels' OLS t-interval with group (x-level) dummies'
    residual variance (the same replicate spread the bootstrap resamples);
  * the counts of runs with z > 2 and z < -2 match the summary;
  * --csv writes the same numbers; --by with an unknown key exits 2 with one
    line naming the option.
Prints one summary line; exits non-zero on any failure.
Usage: trend_vs_scipy.py --allocsim PATH --data DIR
"""

import csv
import json
import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np
import scipy.stats
import statsmodels.api as sm

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

FAILURES = []
PERMUTATIONS = 9999
P_TOLERANCE = 0.02  # two Monte Carlo p-values of 9999 permutations: sd below 0.005


def check(condition, what):
    if not condition:
        FAILURES.append(what)
        print("FAIL:", what, file=sys.stderr)


def replicate_interval_half_width(x, y):
    """t half-width of the OLS slope on log10 x, with sigma from the spread within x levels."""
    logx = np.log10(x)
    levels = np.unique(x)
    residual = np.concatenate([y[x == v] - y[x == v].mean() for v in levels])
    df = len(y) - len(levels)
    sigma2 = (residual ** 2).sum() / df
    fit = sm.OLS(y, sm.add_constant(logx)).fit()
    sxx = ((logx - logx.mean()) ** 2).sum()
    check(abs(fit.params[1] - np.polyfit(logx, y, 1)[0]) < 1e-9, "statsmodels and numpy agree on the slope")
    return scipy.stats.t.ppf(0.975, df) * np.sqrt(sigma2 / sxx)


def main():
    parser = test_parser()
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        results = os.path.join(folder, "trend.h5")
        done = subprocess.run([args.allocsim, "run", os.path.join(args.data, "trend_sweep.ini"),
                               "--output.file", results, "--threads", "2"],
                              capture_output=True, text=True, cwd=folder)
        check(done.returncode == 0, "allocsim run exits 0: " + done.stderr)
        if done.returncode != 0:
            return report()
        table = os.path.join(folder, "trend.csv")
        done = subprocess.run([args.allocsim, "trend", results, "--by", "scenario.capacities",
                               "--json", "--csv", table, "--permutations", str(PERMUTATIONS)],
                              capture_output=True, text=True)
        check(done.returncode == 0, "allocsim trend exits 0: " + done.stderr)
        answer = json.loads(done.stdout)
        check(answer["metric"] == "nodf_z_score", "default metric is nodf_z_score")
        check(answer["null_model"] == "curveball", "the null model is named")
        with h5py.File(results, "r") as f:
            summary = f["summary"]
            temperature = summary["dynamics.temperature"][()]
            z = summary["nodf_z_score"][()]
            laws = np.array([v.decode() if isinstance(v, bytes) else v
                             for v in summary["scenario.capacities"][()]])
        levels = {row["level"]: row for row in answer["levels"]}
        check(len(levels) == len(np.unique(laws)), "one level per capacity law")
        with open(table) as f:
            csv_rows = {row["level"]: row for row in csv.DictReader(f)}
        for law in np.unique(laws):
            label = "scenario.capacities = " + law
            row = levels.get(label)
            check(row is not None, "level " + label)
            if row is None:
                continue
            keep = (laws == law) & np.isfinite(z)
            x, y = temperature[keep], z[keep]
            rho = scipy.stats.spearmanr(x, y).correlation
            check(abs(row["rho"] - rho) < 1e-9, f"{law}: rho {row['rho']} vs scipy {rho}")
            perm = scipy.stats.permutation_test(
                (y,), lambda yy: scipy.stats.spearmanr(x, yy).correlation,
                permutation_type="pairings", n_resamples=PERMUTATIONS, alternative="two-sided",
                random_state=np.random.default_rng(1))
            check(abs(row["p_value"] - perm.pvalue) < P_TOLERANCE,
                  f"{law}: p {row['p_value']} vs scipy permutation_test {perm.pvalue}")
            slope = np.polyfit(np.log10(x), y, 1)[0]
            check(abs(row["slope_per_tenfold"] - slope) < 1e-9 * max(1, abs(slope)),
                  f"{law}: slope {row['slope_per_tenfold']} vs numpy {slope}")
            check(row["slope_low"] <= slope <= row["slope_high"], f"{law}: interval holds the slope")
            half = 0.5 * (row["slope_high"] - row["slope_low"])
            reference = replicate_interval_half_width(x, y)
            check(reference / 1.6 <= half <= reference * 1.6,
                  f"{law}: bootstrap half-width {half} vs t interval {reference}")
            zz = z[laws == law]
            check(row["runs_above"] == int((zz > 2).sum()) and row["runs_below"] == int((zz < -2).sum()),
                  f"{law}: counts of |z| > 2")
            check(abs(float(csv_rows[label]["rho"]) - row["rho"]) < 1e-9, f"{law}: CSV rho")
            print(f"{law}: rho {rho:.3f}, p {row['p_value']:.4f} (scipy {perm.pvalue:.4f}), "
                  f"slope {slope:.3f} [{row['slope_low']:.3f}, {row['slope_high']:.3f}], t half-width "
                  f"{reference:.3f}; {row['sentence']}")
        bad = subprocess.run([args.allocsim, "trend", results, "--by", "scenario.nonsense"],
                             capture_output=True, text=True)
        check(bad.returncode == 2 and bad.stderr.count("\n") == 1 and "--by" in bad.stderr,
              "unknown --by key: exit 2 and one line naming --by: " + bad.stderr)
        text = subprocess.run([args.allocsim, "trend", results, "--metric", "nodf_z"],
                              capture_output=True, text=True)
        check(text.returncode == 0 and "nodf_z_score against dynamics.temperature" in text.stdout,
              "--metric accepts a unique start of a column name")
    return report()


def report():
    print("trend_vs_scipy: %s" % ("ok" if not FAILURES else "%d failures" % len(FAILURES)))
    return 1 if FAILURES else 0


if __name__ == "__main__":
    sys.exit(main())
