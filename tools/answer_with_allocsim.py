#!/usr/bin/python3
"""Answers a benchmark set with allocsim's own estimator.

Reads the JSON lines of `allocsim analyze SET/inputs.h5 --json` on stdin and
writes answers.csv (case, epsilon, ci_low, ci_high) on stdout: an estimate at
the upper boundary (not explained by noise) is inf, one at the exact optimum
is 0, and a case whose estimate did not converge is declined (empty epsilon).
"""
import json
import sys


def interval(t):
    """ci_low, ci_high as written in answers: both empty when there is none."""
    if t.get("ci_low") is None:
        return "", ""
    high = "inf" if t.get("ci_high_infinite") or t.get("ci_high") is None else repr(float(t["ci_high"]))
    return repr(float(t["ci_low"])), high


def answer(report):
    t = report["temperature"]
    low, high = interval(t)
    if t["status"] == "estimated":
        return f"{report['run']},{float(t['epsilon'])!r},{low},{high}"
    if t["status"] == "not_explained_by_noise":
        return f"{report['run']},inf,{low},{high}"
    if t["status"] == "at_optimum":
        return f"{report['run']},0,{low},{high}"
    return f"{report['run']},,,"


def main():
    print("case,epsilon,ci_low,ci_high")
    for line in sys.stdin:
        if line.strip():
            print(answer(json.loads(line)))


if __name__ == "__main__":
    main()
