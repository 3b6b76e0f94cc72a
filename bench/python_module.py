#!/usr/bin/python3
"""The Python module's rows of allocsim_bench (run with PYTHONPATH holding
the built module). Prints one JSON object.

  python_module.py overhead DIR N M EPSILON CALLS
      mean seconds per allocsim.solve_entropic call on the instance of DIR
      (gains.bin, budgets.bin, capacities.bin: raw doubles), best of 3 runs
      of CALLS calls.
  python_module.py temperature CASES SIZE BUDGET
      allocsim.estimate_temperature on CASES generated SIZE x SIZE count
      matrices against a numpy log-domain implementation of the same
      estimator (the root in log epsilon of <gains, pi_eps> = <gains, P>,
      log-domain Sinkhorn at each step), which gives up after BUDGET seconds.
"""
import json
import sys
import time

import numpy as np
from scipy.optimize import brentq
from scipy.special import logsumexp

import allocsim

SINKHORN_TOLERANCE = 1e-9  # relative L1 marginal violation of each numpy solve
ROOT_TOLERANCE = 1e-10     # of log(epsilon)


def overhead(folder, n, m, epsilon, calls):
    gains = np.fromfile(f"{folder}/gains.bin").reshape(n, m)
    budgets = np.fromfile(f"{folder}/budgets.bin")
    capacities = np.fromfile(f"{folder}/capacities.bin")
    best = np.inf
    for _ in range(3):
        start = time.perf_counter()
        for _ in range(calls):
            allocsim.solve_entropic(gains, budgets, capacities, epsilon=epsilon)
        best = min(best, (time.perf_counter() - start) / calls)
    return {"seconds_per_call": best}


def make_cases(count, size):
    rng = np.random.default_rng(2024)
    cases = []
    for _ in range(count):
        gains = -np.abs(rng.uniform(size=size)[:, None] - rng.uniform(size=size)[None, :]) ** 2
        r, c = rng.lognormal(0, 0.5, size), rng.lognormal(0, 0.5, size)
        eps = rng.uniform(0.05, 0.3) * (gains.max() - gains.min())
        log_plan = gains / eps
        f, g = np.zeros(size), np.zeros(size)
        for _ in range(2000):
            f = np.log(r / r.sum()) - logsumexp(log_plan + g[None, :], axis=1)
            g = np.log(c / c.sum()) - logsumexp(log_plan + f[:, None], axis=0)
        plan = np.exp(log_plan + f[:, None] + g[None, :])
        counts = rng.multinomial(5000, plan.ravel() / plan.sum()).reshape(size, size)
        cases.append((counts.astype(float), gains))
    return cases


def numpy_temperature(counts, gains, deadline):
    p = counts / counts.sum()
    keep_rows, keep_cols = p.sum(axis=1) > 0, p.sum(axis=0) > 0
    p, gains = p[keep_rows][:, keep_cols], gains[keep_rows][:, keep_cols]
    log_r, log_c = np.log(p.sum(axis=1)), np.log(p.sum(axis=0))
    target = (gains * p).sum()
    f, g = np.zeros(len(log_r)), np.zeros(len(log_c))

    def gain_at(log_eps):
        nonlocal f, g
        eps = np.exp(log_eps)
        for _ in range(100000):
            f = eps * (log_r - logsumexp((gains + g[None, :]) / eps, axis=1))
            g = eps * (log_c - logsumexp((gains + f[:, None]) / eps, axis=0))
            plan = np.exp((gains + f[:, None] + g[None, :]) / eps)
            if np.abs(plan.sum(axis=1) - np.exp(log_r)).sum() <= SINKHORN_TOLERANCE:
                break
            if time.perf_counter() > deadline:
                raise TimeoutError
        return (gains * plan).sum() - target

    spread = np.log(gains.max() - gains.min())
    return np.exp(brentq(gain_at, spread - 7, spread + 3, xtol=ROOT_TOLERANCE))


def temperature(count, size, budget):
    cases = make_cases(count, size)
    start = time.perf_counter()
    ours = [allocsim.estimate_temperature(counts, gains).epsilon for counts, gains in cases]
    ours_seconds = time.perf_counter() - start
    start = time.perf_counter()
    deadline = start + budget
    theirs = []
    try:
        for counts, gains in cases:
            theirs.append(numpy_temperature(counts, gains, deadline))
    except TimeoutError:
        pass
    numpy_seconds = time.perf_counter() - start
    done = len(theirs)
    agreement = max(abs(a / b - 1) for a, b in zip(ours, theirs)) if done else None
    return {"ours_seconds": ours_seconds, "numpy_seconds": numpy_seconds, "numpy_cases": done,
            "cases": count, "max_relative_difference": agreement}


def main(argv):
    if argv[1] == "overhead":
        answer = overhead(argv[2], int(argv[3]), int(argv[4]), float(argv[5]), int(argv[6]))
    else:
        answer = temperature(int(argv[2]), int(argv[3]), float(argv[4]))
    print(json.dumps(answer))


if __name__ == "__main__":
    main(sys.argv)
