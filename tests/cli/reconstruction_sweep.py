#!/usr/bin/python3
"""Gains reconstruction in sweeps, in `analyze --save` and in `plot`.

Checks, end to end:
  * a sweep of a rank-2 `features` gains family at modest temperatures
    (T = 0.5, 1; price rule, about 40,000 units per run) with
    [analysis] latent_rank = auto and trait_features = true: the /summary has
    the columns latent_rank, latent_converged, latent_gains_correlation,
    latent_gains_slope, feature_gains_correlation, feature_gains_slope; auto
    chooses rank 2, the latent correlation is above 0.98 and the feature
    correlation above 0.999, both slopes within 15% of 1 (epsilon = T);
  * latent_gains_correlation equals the correlation recomputed here with
    numpy from the stored scores, strengths and scenario gains (double
    centring: row and column means removed; numpy.corrcoef) to 1e-9;
  * the keys are refused up front (exit 2, one line naming the key) without
    analysis.enabled, and trait_features for random gains;
  * `analyze --latent-rank 2 --save obs.h5` stores the scores with their
    labels (h5py) equal to the --json report, and `plot obs.h5` draws
    run-000000-latent-scores.png; a latent rank of 1 draws it too;
  * reconstruction options with a results file are refused (exit 2).
"""
import json
import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

EXPERIMENT = """
[scenario]
agents = 12
partners = 15
gains = features
gains_rank = 2
budgets = lognormal
capacities = lognormal
seed = 3
[dynamics]
rule = price
rounds = 150
burn_in = 50
units = 400
[analysis]
enabled = true
latent_rank = auto
trait_features = true
[output]
file = sweep.h5
[sweep]
dynamics.temperature = 0.5, 1
"""
COLUMNS = ["latent_rank", "latent_converged", "latent_strength_1", "latent_gains_correlation",
           "latent_gains_slope", "feature_gains_correlation", "feature_gains_slope"]
AGREEMENT = 1e-9  # the stored correlation against numpy's, relative


def double_centred(x):
    return x - x.mean(axis=1, keepdims=True) - x.mean(axis=0, keepdims=True) + x.mean()


def check_sweep(allocsim, folder, failures):
    with open(os.path.join(folder, "exp.ini"), "w") as f:
        f.write(EXPERIMENT)
    r = subprocess.run([allocsim, "run", "exp.ini", "--quiet", "--threads", "1"], cwd=folder,
                       capture_output=True, text=True)
    if r.returncode != 0:
        failures.append("sweep failed: " + r.stderr)
        return
    with h5py.File(os.path.join(folder, "sweep.h5")) as f:
        s = f["summary"]
        missing = [c for c in COLUMNS if c not in s]
        if missing:
            failures.append(f"summary lacks {missing}")
            return
        print("T", s["dynamics.temperature"][()], "rank", s["latent_rank"][()],
              "latent r", s["latent_gains_correlation"][()], "slope", s["latent_gains_slope"][()],
              "features r", s["feature_gains_correlation"][()], "slope",
              s["feature_gains_slope"][()])
        if not (s["latent_rank"][()] == 2).all():
            failures.append(f"auto chose {s['latent_rank'][()]}, not 2")
        if not (s["latent_converged"][()] == 1).all():
            failures.append("a latent fit did not converge")
        if not (s["latent_gains_correlation"][()] > 0.98).all():
            failures.append(f"latent correlation {s['latent_gains_correlation'][()]} <= 0.98")
        if not (s["feature_gains_correlation"][()] > 0.999).all():
            failures.append(f"feature correlation {s['feature_gains_correlation'][()]} <= 0.999")
        for column in ["latent_gains_slope", "feature_gains_slope"]:
            if not (abs(s[column][()] - 1) < 0.15).all():
                failures.append(f"{column} {s[column][()]} not within 15% of 1")
        for k, run in enumerate(s["run"].asstr()[()]):
            g = f["runs"][run]
            latent = g["analysis/reconstruction/latent"]
            association = (latent["row_scores"][()] * latent["strengths"][()]) @ \
                latent["column_scores"][()].T
            truth = g["scenario/gains"][()]  # every row and column kept (all units placed)
            ours = np.corrcoef(double_centred(association).ravel(),
                               double_centred(truth).ravel())[0, 1]
            stored = s["latent_gains_correlation"][k]
            if abs(ours - stored) > AGREEMENT * abs(ours):
                failures.append(f"{run}: stored correlation {stored} but numpy gives {ours}")


def check_refusals(allocsim, folder, failures):
    for args, key in [(["--analysis.latent_rank", "2"], "analysis.latent_rank"),
                      (["--analysis.enabled", "true", "--analysis.trait_features", "true",
                        "--scenario.gains", "random"], "analysis.trait_features")]:
        r = subprocess.run([allocsim, "simulate", "--output.file", "x.h5"] + args, cwd=folder,
                           capture_output=True, text=True)
        lines = r.stderr.strip().splitlines()
        if r.returncode != 2 or len(lines) != 1 or key not in lines[0]:
            failures.append(f"{args}: exit {r.returncode}, stderr {r.stderr!r}")
        if os.path.exists(os.path.join(folder, "x.h5")):
            failures.append(f"{args}: left x.h5 behind")


def check_save_and_plot(allocsim, data, folder, failures):
    visits = os.path.join(data, "..", "..", "examples", "field", "meadow_visits.csv")
    for rank in ["2", "1"]:
        saved = os.path.join(folder, f"obs{rank}.h5")
        r = subprocess.run([allocsim, "analyze", "--allocation", visits, "--latent-rank", rank,
                            "--save", saved, "--json"], capture_output=True, text=True)
        if r.returncode != 0:
            failures.append(f"analyze --latent-rank {rank}: {r.stderr}")
            continue
        latent = json.loads(r.stdout)["gains_reconstruction"]["latent"]
        with h5py.File(saved) as f:
            g = f["runs/run-000000/analysis/reconstruction"]
            labels = list(g["row_labels"].asstr()[()])
            scores = g["latent/row_scores"][()]
            if labels != list(latent["row_scores"].keys()):
                failures.append("stored row labels differ from the JSON's")
            elif not np.allclose(scores, np.array(list(latent["row_scores"].values())),
                                 rtol=1e-12, atol=0):
                failures.append("stored row scores differ from the JSON's")
            if "harebell" in labels:
                failures.append("the all-zero row was stored with the scores")
        out = os.path.join(folder, f"figures{rank}")
        r = subprocess.run([allocsim, "plot", saved, "--out-dir", out], capture_output=True,
                           text=True)
        figure = os.path.join(out, "run-000000-latent-scores.png")
        if r.returncode != 0 or figure not in r.stdout.split() or os.path.getsize(figure) < 1000:
            failures.append(f"plot of rank {rank}: exit {r.returncode}, {r.stdout!r} {r.stderr!r}")
    r = subprocess.run([allocsim, "analyze", os.path.join(folder, "obs2.h5"), "--latent-rank",
                        "2"], capture_output=True, text=True)
    if r.returncode != 2 or "--latent-rank" not in r.stderr:
        failures.append(f"--latent-rank with a results file: exit {r.returncode}, {r.stderr!r}")


def main():
    parser = test_parser()
    a = parser.parse_args()
    failures = []
    with tempfile.TemporaryDirectory() as folder:
        check_sweep(a.allocsim, folder, failures)
        check_refusals(a.allocsim, folder, failures)
        check_save_and_plot(a.allocsim, a.data, folder, failures)
    for failure in failures:
        print("FAIL:", failure)
    print("reconstruction_sweep:", "failed" if failures else "passed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
