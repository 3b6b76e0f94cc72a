#!/usr/bin/python3
"""Features fit of the gains reconstruction against a Poisson GLM.

Outside reference: statsmodels' GLM (Poisson family, log link) of the counts
on row and column fixed effects and the features (a Poisson regression with
two-way fixed effects; the log-linear model of a two-way table, Agresti,
Categorical Data Analysis ch. 9). Checks, on seeded generated tables and on a
real public table:
  * each weight equals the GLM coefficient to 1e-7 relative;
  * each standard error equals the GLM's (Fisher information) to 1e-6 relative;
  * deviance to 1e-7 relative and residual degrees of freedom exactly;
  * each likelihood-ratio interval end: refitting the GLM with that weight
    held at the end (an offset) raises the deviance by
    scipy.stats.chi2.ppf(0.95, 1), to 1e-4 relative;
  * product and distance forms of the same trait pair are refused as
    collinear, naming both.
Real table: self-placement on the liberal-conservative scale (selfLR, 1-7)
by party identification (PID, 0-6) of the 944 respondents of the American
National Election Studies 1996 subset shipped with statsmodels
(statsmodels.datasets.anes96; source http://www.electionstudies.org/,
public domain), with the trait "position" (the scale's level, PID + 1 for
the columns) as a distance feature and a random feature beside it.
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

BETA_TOLERANCE = 1e-7
SE_TOLERANCE = 1e-6
LR_TOLERANCE = 1e-4
WORST = {"weight": 0.0, "standard error": 0.0, "interval": 0.0}


def write_matrix(path, matrix, row_labels=None, column_labels=None, integer=False):
    with open(path, "w") as f:
        if column_labels is not None:
            f.write(",".join(([""] if row_labels is not None else []) + list(column_labels)) + "\n")
        for i, row in enumerate(matrix):
            cells = [str(int(v)) if integer else repr(float(v)) for v in row]
            if row_labels is not None:
                cells = [row_labels[i]] + cells
            f.write(",".join(cells) + "\n")


def design(counts, features):
    n, m = counts.shape
    keep_r, keep_c = counts.sum(axis=1) > 0, counts.sum(axis=0) > 0
    rows, cols = np.flatnonzero(keep_r), np.flatnonzero(keep_c)
    x, y, f = [], [], []
    for a, i in enumerate(rows):
        for b, j in enumerate(cols):
            e = np.zeros(len(rows) + len(cols) - 1)
            e[a] = 1
            if b > 0:
                e[len(rows) + b - 1] = 1
            x.append(e)
            y.append(counts[i, j])
            f.append([F[i, j] for F in features])
    return np.array(x), np.array(y), np.array(f)


def glm(x, y, offset=None):
    return sm.GLM(y, x, family=sm.families.Poisson(), offset=offset).fit(tol=1e-14, maxiter=500)


def run_probe(probe, args):
    out = subprocess.run([probe] + args, capture_output=True, text=True)
    return out


def check_case(name, counts, features, feature_args, probe, extra=()):
    out = run_probe(probe, [feature_args[0]] + list(extra) + list(feature_args[1:]))
    if out.returncode != 0:
        print(f"{name}: the fit failed: {out.stderr.strip()}")
        return False
    fit = json.loads(out.stdout)["features"]
    names = list(fit["weights"].keys())
    x, y, f = design(counts, features)
    full = glm(np.column_stack([x, f]), y)
    errors = []
    k_features = len(features)
    for k, key in enumerate(names):
        w = fit["weights"][key]
        beta, se = full.params[-k_features + k], full.bse[-k_features + k]
        rel = abs(w["weight"] - beta) / abs(beta)
        WORST["weight"] = max(WORST["weight"], rel)
        if not rel <= BETA_TOLERANCE:
            errors.append(f"{key}: weight {w['weight']} vs GLM {beta} (rel {rel:.1e})")
        rel_se = abs(w["standard_error"] - se) / se
        WORST["standard error"] = max(WORST["standard error"], rel_se)
        if not rel_se <= SE_TOLERANCE:
            errors.append(f"{key}: se {w['standard_error']} vs GLM {se} (rel {rel_se:.1e})")
        others = [l for l in range(k_features) if l != k]
        for end in ("interval_low", "interval_high"):
            fixed = glm(np.column_stack([x, f[:, others]]) if others else x, y, offset=w[end] * f[:, k])
            rise = fixed.deviance - full.deviance
            target = chi2.ppf(0.95, 1)
            WORST["interval"] = max(WORST["interval"], abs(rise - target) / target)
            if not abs(rise - target) / target <= LR_TOLERANCE:
                errors.append(f"{key}: {end} {w[end]} raises the deviance by {rise}, not {target}")
    if not abs(fit["deviance"] - full.deviance) <= BETA_TOLERANCE * max(full.deviance, 1):
        errors.append(f"deviance {fit['deviance']} vs GLM {full.deviance}")
    if fit["degrees_of_freedom"] != int(round(full.df_resid)):
        errors.append(f"df {fit['degrees_of_freedom']} vs GLM {full.df_resid}")
    for e in errors:
        print(f"{name}: {e}")
    if not errors:
        print(f"{name}: weights, standard errors, intervals, deviance and df agree with the GLM")
    return not errors


def generated(seed, folder, probe):
    rng = np.random.default_rng(seed)
    n, m = int(rng.integers(5, 9)), int(rng.integers(5, 10))
    x, y = rng.uniform(0, 3, n), rng.uniform(0, 3, m)
    distance = -(x[:, None] - y[None, :]) ** 2
    other = rng.normal(size=(n, m))
    eta = 0.8 * distance + 0.4 * other + rng.normal(0, 0.5, n)[:, None] + rng.normal(0, 0.5, m)[None, :]
    p = np.exp(eta) / np.exp(eta).sum()
    counts = rng.multinomial(int(rng.integers(1000, 20000)), p.ravel()).reshape(n, m).astype(float)
    paths = {k: os.path.join(folder, f"g{seed}_{k}.csv") for k in ("counts", "rows", "cols", "other")}
    labels_r = [f"r{i}" for i in range(n)]
    labels_c = [f"c{j}" for j in range(m)]
    write_matrix(paths["counts"], counts, labels_r, labels_c, integer=True)
    write_matrix(paths["rows"], x[:, None], labels_r, ["size"])
    write_matrix(paths["cols"], y[:, None], labels_c, ["size"])
    write_matrix(paths["other"], other, labels_r, labels_c)
    args = [paths["counts"], "--row-traits", paths["rows"], "--column-traits", paths["cols"],
            "--features", paths["other"]]
    # The probe lists trait features after the given ones.
    return check_case(f"generated {seed}", counts, [other, distance], args, probe)


def anes_table():
    import statsmodels.datasets.anes96 as anes
    data = anes.load_pandas().data
    self_lr = data["selfLR"].astype(int).to_numpy()
    pid = data["PID"].astype(int).to_numpy()
    table = np.zeros((7, 7))
    for a, b in zip(self_lr, pid):
        table[a - 1, b] += 1
    return table


def real(folder, probe):
    counts = anes_table()
    assert counts.sum() == 944, counts.sum()
    position = np.arange(1, 8, dtype=float)
    distance = -(position[:, None] - position[None, :]) ** 2
    other = np.random.default_rng(11).normal(size=(7, 7))
    labels_r = [f"selfLR {k}" for k in range(1, 8)]
    labels_c = [f"PID {k}" for k in range(7)]
    paths = {k: os.path.join(folder, f"anes_{k}.csv") for k in ("counts", "rows", "cols", "other")}
    write_matrix(paths["counts"], counts, labels_r, labels_c, integer=True)
    write_matrix(paths["rows"], position[:, None], labels_r, ["position"])
    write_matrix(paths["cols"], position[:, None], labels_c, ["position"])
    write_matrix(paths["other"], other, labels_r, labels_c)
    args = [paths["counts"], "--row-traits", paths["rows"], "--column-traits", paths["cols"],
            "--features", paths["other"]]
    return check_case("ANES 1996 selfLR x PID", counts, [other, distance], args, probe)


def collinear_refused(folder, probe):
    rng = np.random.default_rng(5)
    x, y = rng.uniform(size=6), rng.uniform(size=7)
    counts = rng.integers(1, 50, size=(6, 7))
    paths = [os.path.join(folder, f"col_{k}.csv") for k in ("counts", "product", "distance")]
    write_matrix(paths[0], counts, integer=True)
    write_matrix(paths[1], np.outer(x, y))
    write_matrix(paths[2], -(x[:, None] - y[None, :]) ** 2)
    out = run_probe(probe, [paths[0], "--features", paths[1], paths[2]])
    ok = out.returncode != 0 and "collinear" in out.stderr and paths[1] in out.stderr and paths[2] in out.stderr
    print(f"product and distance forms of one pair {'refused as collinear' if ok else 'NOT refused: ' + out.stderr}")
    return ok


def main():
    parser = test_parser()
    parser.add_argument("--probe", required=True)
    args = parser.parse_args()
    ok = True
    with tempfile.TemporaryDirectory() as folder:
        for seed in (1, 2, 3, 4):
            ok &= generated(seed, folder, args.probe)
        ok &= real(folder, args.probe)
        ok &= collinear_refused(folder, args.probe)
    print("largest relative differences from the GLM: " +
          ", ".join(f"{k} {v:.1e}" for k, v in WORST.items()))
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
