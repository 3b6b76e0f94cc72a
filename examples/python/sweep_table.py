#!/usr/bin/python3
"""A sweep read into a DataFrame: run a small temperature sweep with the
allocsim program, then read its summary and one run's arrays in Python.

A made-up scenario: twenty bakeries spread their flour orders over fifteen
mills whose specialties lie near or far from their own (trait distance).
Needs the allocsim program (ALLOCSIM_CLI, or `allocsim` on PATH, or build/allocsim).
Run: PYTHONPATH=build/python python3 examples/python/sweep_table.py
"""
import os
import shutil
import subprocess
import tempfile

import numpy as np

import allocsim

here = os.path.dirname(os.path.abspath(__file__))
program = (os.environ.get("ALLOCSIM_CLI") or shutil.which("allocsim")
           or os.path.join(here, "..", "..", "build", "allocsim"))

EXPERIMENT = """
[scenario]
agents = 20
partners = 15
gains = trait-distance
seed = 3
[dynamics]
rule = price
rounds = 200
units = 4000
burn_in = 50
window = 25
[analysis]
enabled = true
[sweep]
dynamics.temperature = 0.02, 0.05, 0.1
replicates = 2
"""

with tempfile.TemporaryDirectory() as folder:
    experiment = os.path.join(folder, "bakeries.ini")
    results_file = os.path.join(folder, "bakeries.h5")
    with open(experiment, "w") as out:
        out.write(EXPERIMENT + f"[output]\nfile = {results_file}\n")
    subprocess.run([program, "run", experiment, "--threads", "2"], check=True,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)

    results = allocsim.read_results(results_file)
    table = results.summary
    print(f"{len(results.runs)} runs; summary columns: {', '.join(table.columns[:8])}, ...")
    print(table.groupby("dynamics.temperature")[["epsilon", "nodf", "connectance"]].mean())

    run = allocsim.read_run(results_file, results.runs[0])
    print(f"{run.run}: {run.snapshots.shape[0]} snapshots of {run.gains.shape}, "
          f"final prices {np.round(run.prices[-1][:4], 3)} ...")
    assert np.allclose(run.total.sum(), run.snapshots[run.round_end > 50].sum())
