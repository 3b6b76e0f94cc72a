#!/usr/bin/env python3
"""The gumbel and price rules agree in distribution (McFadden 1974).

Outside reference: scipy.stats (chi2_contingency, chisquare, chi2).

With fixed prices (price_step = 0, so every price stays 0) each unit of
agent i goes to partner j with the logit probability
    p_ij = exp(G_ij / T) / sum_k exp(G_ik / T)
under `price` (sampled from it directly) and under `gumbel` (argmax of
G_ij + T * Gumbel noise): McFadden's result says the two are the same
distribution. The script runs both rules through `allocsim simulate` on a
small scenario of our own, reads the cumulative allocations with h5py and
checks, per agent, then pooled over agents (independent rows: statistics
and degrees of freedom add):
  * two-sample homogeneity of the gumbel and price counts
    (scipy.stats.chi2_contingency on each 2 x m table);
  * goodness of fit of each rule's counts to the closed-form logit
    probabilities computed here with numpy (scipy.stats.chisquare);
each at false-alarm rate 1e-3 (p-value above 0.001). To show the test can
fail, the gumbel counts must be rejected (p < 1e-6) against the logit
probabilities at 1.1 T.

Usage: sim_gumbel_vs_price.py --allocsim PATH --data DIR
"""

import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np
from scipy import stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

ALPHA = 1e-3
TEMPERATURE = 0.15


def run(allocsim, folder, rule):
    out = os.path.join(folder, rule + ".h5")
    subprocess.run([allocsim, "simulate", "--quiet", "--out", out,
                    "--scenario.agents", "5", "--scenario.partners", "7",
                    "--scenario.gains", "random", "--scenario.budgets", "zipf",
                    "--scenario.seed", "23", "--dynamics.rule", rule,
                    "--dynamics.temperature", str(TEMPERATURE), "--dynamics.price_step", "0",
                    "--dynamics.units", "4000", "--dynamics.rounds", "10",
                    "--dynamics.burn_in", "0", "--dynamics.window", "10"], check=True,
                   stdout=subprocess.DEVNULL)
    with h5py.File(out, "r") as f:
        run_group = f["runs/run-000000"]
        return run_group["allocation/total"][...], run_group["scenario/gains"][...]


def logit(gains, temperature):
    weights = np.exp((gains - gains.max(axis=1, keepdims=True)) / temperature)
    return weights / weights.sum(axis=1, keepdims=True)


def pooled_fit(counts, probabilities):
    statistic, dof = 0.0, 0
    for row, p in zip(counts, probabilities):
        s, _ = stats.chisquare(row, row.sum() * p)
        statistic += s
        dof += len(row) - 1
    return stats.chi2.sf(statistic, dof)


def pooled_homogeneity(a, b):
    statistic, dof = 0.0, 0
    for row_a, row_b in zip(a, b):
        s, _, d, _ = stats.chi2_contingency(np.vstack([row_a, row_b]), correction=False)
        statistic += s
        dof += d
    return stats.chi2.sf(statistic, dof)


def main():
    parser = test_parser()
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as folder:
        gumbel, gains = run(args.allocsim, folder, "gumbel")
        price, _ = run(args.allocsim, folder, "price")
    probabilities = logit(gains, TEMPERATURE)
    results = {
        "gumbel vs price (homogeneity)": pooled_homogeneity(gumbel, price),
        "gumbel vs logit (fit)": pooled_fit(gumbel, probabilities),
        "price vs logit (fit)": pooled_fit(price, probabilities),
    }
    wrong = pooled_fit(gumbel, logit(gains, 1.1 * TEMPERATURE))
    failures = [name for name, p in results.items() if not p > ALPHA]
    if not wrong < 1e-6:
        failures.append("gumbel vs logit at 1.1 T not rejected")
    summary = ", ".join(f"{name} p = {p:.3g}" for name, p in results.items())
    print(f"sim_gumbel_vs_price: {summary}; wrong temperature p = {wrong:.3g}")
    if failures:
        print("FAIL: " + "; ".join(failures), file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
