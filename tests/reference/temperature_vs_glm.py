#!/usr/bin/python3
"""Temperature estimate of `allocsim analyze` against a Poisson log-linear model.

Outside reference: statsmodels' GLM (Poisson family, log link) of the counts
on row and column fixed effects with the gains as covariate. Its gains
coefficient is beta = 1/epsilon (the log-linear model of a two-way table,
Agresti, Categorical Data Analysis ch. 9). Checks, for several seeded cases:
  * epsilon = 1 / coefficient to 1e-6 relative;
  * stderr = bse / coefficient^2 (Fisher information, delta method) to 1e-4;
  * the interval ends: refitting the GLM with the gains term fixed at
    beta = 1/ci_low and 1/ci_high (an offset) raises the deviance by
    scipy.stats.chi2.ppf(0.95, 1), to 1e-3 relative.
Structural zeros (access 0) are left out of the GLM.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
import statsmodels.api as sm
from scipy.stats import chi2

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

EPS_TOLERANCE = 1e-6
SE_TOLERANCE = 1e-4
LR_TOLERANCE = 1e-3


def sinkhorn(gains, r, c, eps, allowed):
    kernel = np.exp((gains - gains.max()) / eps) * allowed
    u, v = np.ones(len(r)), np.ones(len(c))
    for _ in range(3000):
        u = r / (kernel @ v)
        v = c / (kernel.T @ u)
    return u[:, None] * kernel * v[None, :]


def make_case(family, seed):
    rng = np.random.default_rng(seed)
    n, m = rng.integers(5, 9), rng.integers(4, 10)
    if family == "trait":
        gains = -np.abs(rng.uniform(size=n)[:, None] - rng.uniform(size=m)[None, :]) ** 2
    elif family == "product":
        gains = np.outer(np.arange(1, n + 1) / n, np.arange(1, m + 1) / m)
    else:
        gains = rng.uniform(size=(n, m))
    allowed = np.ones((n, m))
    if family == "random":  # a few forbidden pairs
        for _ in range(3):
            allowed[rng.integers(n), rng.integers(m)] = 0
    r = rng.lognormal(0, 0.5, n)
    c = rng.lognormal(0, 0.5, m)
    r, c = r / r.sum(), c / c.sum()
    eps = 0.15 * (gains.max() - gains.min())
    plan = sinkhorn(gains, r, c, eps, allowed)
    counts = rng.multinomial(int(rng.integers(2000, 20000)), plan.ravel() / plan.sum())
    return gains, counts.reshape(n, m).astype(float), allowed


def write_csv(path, matrix, integer=False):
    with open(path, "w") as f:
        for row in matrix:
            f.write(",".join(str(int(v)) if integer else repr(float(v)) for v in row) + "\n")


def read_csv(path):
    rows = [line.strip().split(",") for line in open(path) if line.strip()]
    return np.array([[float(v) for v in row[1:]] for row in rows[1:]])


def glm_design(gains, counts, allowed):
    n, m = gains.shape
    cells = [(i, j) for i in range(n) for j in range(m) if allowed[i, j] > 0]
    # Drop all-zero rows and columns: their effects run to -infinity (allocsim drops them too).
    keep_r = counts.sum(axis=1) > 0
    keep_c = counts.sum(axis=0) > 0
    cells = [(i, j) for i, j in cells if keep_r[i] and keep_c[j]]
    rows = [i for i in range(n) if keep_r[i]]
    cols = [j for j in range(m) if keep_c[j]]
    x = np.zeros((len(cells), len(rows) + len(cols) - 1))
    for k, (i, j) in enumerate(cells):
        x[k, rows.index(i)] = 1
        if cols.index(j) > 0:
            x[k, len(rows) + cols.index(j) - 1] = 1
    y = np.array([counts[i, j] for i, j in cells])
    g = np.array([gains[i, j] for i, j in cells])
    return x, y, g


def glm_fit(x, y, offset=None):
    return sm.GLM(y, x, family=sm.families.Poisson(), offset=offset).fit(tol=1e-14, maxiter=500)


def check(name, gains, counts, allowed, allocsim, folder):
    paths = {k: os.path.join(folder, f"{name}_{k}.csv") for k in ("gains", "counts", "access")}
    write_csv(paths["gains"], gains)
    write_csv(paths["counts"], counts, integer=True)
    args = [allocsim, "analyze", "--allocation", paths["counts"], "--gains", paths["gains"], "--json"]
    if (allowed == 0).any():
        write_csv(paths["access"], allowed, integer=True)
        args += ["--access", paths["access"]]
    return compare(name, gains, counts, allowed, args)


def compare(name, gains, counts, allowed, args):
    out = subprocess.run(args, capture_output=True, text=True)
    if out.returncode != 0:
        print(f"{name}: allocsim failed: {out.stderr.strip()}")
        return False
    t = json.loads(out.stdout)["temperature"]
    x, y, g = glm_design(gains, counts, allowed)
    full = glm_fit(np.column_stack([x, g]), y)
    beta, se_beta = full.params[-1], full.bse[-1]
    errors = []
    eps_rel = abs(t["epsilon"] - 1 / beta) * beta
    if not eps_rel <= EPS_TOLERANCE:
        errors.append(f"epsilon {t['epsilon']} vs 1/coef {1 / beta} (rel {eps_rel:.2e})")
    se_glm = se_beta / beta**2
    if not abs(t["stderr"] - se_glm) <= SE_TOLERANCE * se_glm:
        errors.append(f"stderr {t['stderr']} vs bse/coef^2 {se_glm}")
    target = chi2.ppf(0.95, 1)
    for end in ("ci_low", "ci_high"):
        if t[end] is None:
            errors.append(f"{end} missing")
            continue
        fixed = glm_fit(x, y, offset=g / t[end])
        rise = fixed.deviance - full.deviance
        if not abs(rise - target) <= LR_TOLERANCE * target:
            errors.append(f"{end}: deviance rises by {rise:.6f}, chi2 0.95 point {target:.6f}")
    status = "ok" if not errors else "FAIL: " + "; ".join(errors)
    print(f"{name}: epsilon {t['epsilon']:.8g} vs GLM {1 / beta:.8g} (rel {eps_rel:.1e}), "
          f"stderr {t['stderr']:.4g} vs {se_glm:.4g}: {status}")
    return not errors


def main():
    parser = test_parser()
    a = parser.parse_args()
    ok = True
    with tempfile.TemporaryDirectory() as folder:
        for family in ("trait", "product", "random"):
            for seed in (1, 2, 3):
                gains, counts, allowed = make_case(family, 100 * seed + len(family))
                ok &= check(f"{family}-{seed}", gains, counts, allowed, a.allocsim, folder)
    # The shipped example (labelled CSVs).
    g_path = os.path.join(a.data, "temperature_gains_6x7.csv")
    p_path = os.path.join(a.data, "temperature_counts_6x7.csv")
    gains, counts = read_csv(g_path), read_csv(p_path)
    ok &= compare("shipped 6x7", gains, counts, np.ones_like(gains),
                  [a.allocsim, "analyze", "--allocation", p_path, "--gains", g_path, "--json"])
    print("all agree with statsmodels" if ok else "DISAGREEMENT with statsmodels")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
