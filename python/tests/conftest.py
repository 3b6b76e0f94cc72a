"""Shared helpers of the Python module's tests: the command line to compare
with (ALLOCSIM_CLI, set by ctest), CSV files written so that the command
line reads exactly the same doubles, and seeded test problems."""
import json
import os
import subprocess

import numpy as np
import pytest

import allocsim


@pytest.fixture(scope="session")
def cli():
    path = os.environ.get("ALLOCSIM_CLI")
    if not path or not os.path.exists(path):
        pytest.skip("ALLOCSIM_CLI (the allocsim program) is not set; ctest sets it")

    def run(*args, expect_ok=True):
        done = subprocess.run([path, *map(str, args)], capture_output=True, text=True, timeout=300)
        if expect_ok and done.returncode != 0:
            raise AssertionError(f"allocsim {' '.join(map(str, args))} failed: {done.stderr}")
        return done

    def run_json(*args):
        return json.loads(run(*args, "--json").stdout)

    run.json = run_json
    return run


def write_csv(path, values):
    """repr() of a float is the shortest text that reads back exactly, so
    the command line sees the same doubles as the module."""
    values = np.atleast_1d(np.asarray(values, dtype=float))
    with open(path, "w") as out:
        if values.ndim == 1:
            out.write("\n".join(repr(float(v)) for v in values) + "\n")
        else:
            for row in values:
                out.write(",".join(repr(float(v)) for v in row) + "\n")
    return str(path)


def transport_problem(seed, n=7, m=9):
    rng = np.random.default_rng(seed)
    gains = rng.uniform(0, 1, (n, m))
    budgets = rng.uniform(0.5, 2, n)
    capacities = rng.uniform(0.5, 2, m)
    capacities *= budgets.sum() / capacities.sum()
    return gains, budgets, capacities


def sinkhorn(gains, r, c, eps, allowed=None, sweeps=3000):
    kernel = np.exp((gains - gains.max()) / eps)
    if allowed is not None:
        kernel = kernel * allowed
    u, v = np.ones(len(r)), np.ones(len(c))
    for _ in range(sweeps):
        u = r / (kernel @ v)
        v = c / (kernel.T @ u)
    return u[:, None] * kernel * v[None, :]


def counts_case(seed, n=8, m=10, units=5000, eps_share=0.15):
    """Counts drawn from an entropic coupling: an allocation with a known temperature."""
    rng = np.random.default_rng(seed)
    gains = -np.abs(rng.uniform(size=n)[:, None] - rng.uniform(size=m)[None, :]) ** 2
    r = rng.lognormal(0, 0.5, n)
    c = rng.lognormal(0, 0.5, m)
    r, c = r / r.sum(), c / c.sum()
    plan = sinkhorn(gains, r, c, eps_share * (gains.max() - gains.min()))
    counts = rng.multinomial(units, plan.ravel() / plan.sum()).reshape(n, m).astype(float)
    return counts, gains


def same_number(ours, theirs):
    """JSON writes non-finite numbers as null; otherwise the numbers are equal bit for bit."""
    if theirs is None:
        return ours is None or not np.isfinite(ours)
    return ours == theirs
