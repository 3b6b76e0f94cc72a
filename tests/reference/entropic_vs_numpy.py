"""Entropic transport against an independent log-domain Sinkhorn in numpy.

Outside reference: a plain log-domain Sinkhorn written with numpy and
scipy.special.logsumexp (the textbook updates f = eps log r - eps LSE((G+g)/eps),
g = eps log c - eps LSE((G+f)/eps), with epsilon-scaling), run to a marginal
violation of 1e-13, over epsilon from 1e-3 to 10 times the gain range.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.special import logsumexp

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

COUPLING_AGREEMENT = 1e-7   # max |P - P_ref| for unit mass
GAIN_AGREEMENT = 1e-8       # relative difference in total gain


def reference_sinkhorn(G, r, c, eps, access=None):
    logK = G.copy()
    if access is not None:
        logK[access == 0] = -np.inf
    f = np.zeros(len(r))
    g = np.zeros(len(c))
    stage = max(eps, np.ptp(G))
    while True:
        for _ in range(200000):
            f = stage * np.log(r) - stage * logsumexp((logK + g[None, :]) / stage, axis=1)
            g = stage * np.log(c) - stage * logsumexp((logK + f[:, None]) / stage, axis=0)
            P = np.exp((logK + f[:, None] + g[None, :]) / stage)
            if np.abs(P.sum(axis=1) - r).sum() < (1e-13 if stage == eps else 1e-6):
                break
        if stage == eps:
            return P
        stage = max(eps, stage / 2)


def write_vector(path, values):
    np.savetxt(path, values, fmt="%.17g")


def main():
    parser = test_parser()
    args = parser.parse_args()
    rng = np.random.default_rng(7)
    worst_coupling = worst_gain = 0.0
    cases = 0
    with tempfile.TemporaryDirectory() as tmp:
        for trial in range(6):
            n, m = rng.integers(3, 12), rng.integers(3, 12)
            if trial % 3 == 0:
                G = rng.random((n, m))
            elif trial % 3 == 1:
                x, y = np.sort(rng.random(n)), np.sort(rng.random(m))
                G = -np.abs(x[:, None] - y[None, :]) ** 1.5
            else:
                G = rng.integers(0, 4, size=(n, m)).astype(float)
            access = None
            if trial >= 3:
                access = np.ones((n, m), dtype=int)
                access[rng.random((n, m)) < 0.3] = 0
                access[np.arange(n), np.arange(n) % m] = 1
                access[np.arange(m) % n, np.arange(m)] = 1
            r = rng.random(n) + 0.3
            c = rng.random(m) + 0.3
            r /= r.sum()
            c /= c.sum()
            np.savetxt(os.path.join(tmp, "G.csv"), G, delimiter=",", fmt="%.17g")
            write_vector(os.path.join(tmp, "r.csv"), r)
            write_vector(os.path.join(tmp, "c.csv"), c)
            extra = []
            if access is not None:
                np.savetxt(os.path.join(tmp, "A.csv"), access, delimiter=",", fmt="%d")
                extra = ["--access", os.path.join(tmp, "A.csv")]
            for share in (1e-3, 1e-2, 0.1, 1.0, 10.0):
                eps = share * np.ptp(G)
                out = os.path.join(tmp, "P.csv")
                run = subprocess.run(
                    [args.allocsim, "solve", "--gains", os.path.join(tmp, "G.csv"),
                     "--budgets", os.path.join(tmp, "r.csv"), "--capacities", os.path.join(tmp, "c.csv"),
                     "--method", "entropic", "--epsilon", repr(eps), "--tolerance", "1e-13",
                     "--rescale", "--json", "--out", out] + extra,
                    capture_output=True, text=True)
                if run.returncode != 0:
                    print(f"trial {trial} eps {eps}: allocsim failed: {run.stderr}")
                    return 1
                summary = json.loads(run.stdout)
                P = np.loadtxt(out, delimiter=",", ndmin=2)
                P_ref = reference_sinkhorn(G, r, c, eps, access)
                gain_ref = float((G * P_ref).sum())
                worst_coupling = max(worst_coupling, np.abs(P - P_ref).max())
                worst_gain = max(worst_gain, abs(summary["total_gain"] - gain_ref) / max(abs(gain_ref), 1e-300))
                cases += 1
    print(f"{cases} cases: max |P - P_ref| = {worst_coupling:.3g}, "
          f"max relative total-gain difference = {worst_gain:.3g}")
    ok = worst_coupling <= COUPLING_AGREEMENT and worst_gain <= GAIN_AGREEMENT
    print("PASS" if ok else "FAIL")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
