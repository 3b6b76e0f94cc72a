#!/usr/bin/python3
"""A methods researcher's loop: estimate the temperature of every case of a
benchmark set with known truth, in-process, and score the answers.

Needs the allocsim program for `synth` and `score` (ALLOCSIM_CLI, or
`allocsim` on PATH, or build/allocsim).
Run: PYTHONPATH=build/python python3 examples/python/estimator_loop.py
"""
import json
import os
import shutil
import subprocess
import tempfile
import time

import numpy as np
import pandas as pd

import allocsim

here = os.path.dirname(os.path.abspath(__file__))
program = (os.environ.get("ALLOCSIM_CLI") or shutil.which("allocsim")
           or os.path.join(here, "..", "..", "build", "allocsim"))

with tempfile.TemporaryDirectory() as folder:
    bench = os.path.join(folder, "bench-set")
    subprocess.run([program, "synth", "--out-dir", bench, "--families", "trait-distance, random",
                    "--epsilon", "log(0.02, 0.5, 3)", "--replicates", "4", "--agents", "15",
                    "--partners", "12", "--units", "3000"], check=True, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL)
    truth = pd.read_csv(os.path.join(bench, "truth.csv"))

    def matrix(case, name):
        return pd.read_csv(os.path.join(bench, "inputs", case, name), header=None).to_numpy()

    start = time.perf_counter()
    answers = []
    for case in truth["case"]:
        t = allocsim.estimate_temperature(matrix(case, "allocation.csv"), matrix(case, "gains.csv"))
        answers.append({"case": case, "epsilon": t.epsilon, "ci_low": t.ci_low,
                        "ci_high": t.ci_high})
    seconds = time.perf_counter() - start
    answers = pd.DataFrame(answers)
    answers.to_csv(os.path.join(folder, "answers.csv"), index=False)
    print(f"{len(answers)} cases estimated in {seconds:.2f} s")

    score = subprocess.run([program, "score", "--truth", os.path.join(bench, "truth.csv"),
                            "--answers", os.path.join(folder, "answers.csv"), "--json"],
                           check=True, capture_output=True, text=True)
    scores = json.loads(score.stdout)
    table = pd.DataFrame({k: v for k, v in scores.items() if isinstance(v, dict)}).T
    print(table[["cases", "mean_relative_error", "rms_relative_error", "coverage"]])
    assert np.isfinite(answers["epsilon"]).all()
