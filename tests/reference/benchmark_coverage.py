#!/usr/bin/python3
"""`allocsim score` on the tool's own answers: interval coverage on the model
source and the bias on the queue rule.

The estimator (`allocsim analyze inputs.h5 --json`, answers written by
tools/answer_with_allocsim.py) answers a blind set of 300 cases drawn from the
entropic model (three gains families, epsilon loguniform(0.01, 1), units
loguniform(500, 20000), 8..20 agents and partners). Its 95% likelihood-ratio
intervals must cover the truth in 92-98% of the cases (the nominal level; a
binomial sd of 1.3 points at n = 300), and the median relative error must be
within 2% of zero.

On 40 cases of the queue rule (hard capacities, misspecified), score must
report the upward bias that the rule comparison of temperature_test measured
(units turned away from full partners land on worse ones, so the allocation
looks hotter): a positive median relative error, with more positive than
negative errors by a sign test (scipy.stats.binomtest, p < 0.01).
"""
import csv
import io
import json
import os
import subprocess
import sys
import tempfile

from scipy import stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

COVERAGE_RANGE = (0.92, 0.98)
MEDIAN_LIMIT = 0.02
P_FLOOR = 0.01
TOOLS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "tools")

failures = []


def check(condition, message):
    print(("ok   " if condition else "FAIL ") + message)
    if not condition:
        failures.append(message)


def scored_set(binary, tmp, name, *options):
    folder = os.path.join(tmp, name)
    made = subprocess.run([binary, "synth", "--out-dir", folder, *options], capture_output=True, text=True)
    if made.returncode != 0:
        sys.exit(f"synth failed: {made.stderr}")
    analysis = subprocess.run([binary, "analyze", os.path.join(folder, "inputs.h5"), "--json"],
                              capture_output=True, text=True)
    if analysis.returncode != 0:
        sys.exit(f"analyze failed: {analysis.stderr}")
    answers = subprocess.run([sys.executable, os.path.join(TOOLS, "answer_with_allocsim.py")],
                             input=analysis.stdout, capture_output=True, text=True, check=True).stdout
    path = os.path.join(tmp, name + "-answers.csv")
    open(path, "w").write(answers)
    per_case = os.path.join(tmp, name + "-scores.csv")
    scored = subprocess.run([binary, "score", "--truth", os.path.join(folder, "truth.csv"), "--answers", path,
                             "--json", "--out", per_case], capture_output=True, text=True)
    if scored.returncode != 0:
        sys.exit(f"score failed: {scored.stderr}")
    return json.loads(scored.stdout), list(csv.DictReader(open(per_case)))


def main():
    parser = test_parser()
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    with tempfile.TemporaryDirectory() as tmp:
        scores, _ = scored_set(binary, tmp, "model", "--cases", "300", "--source", "model",
                               "--epsilon", "loguniform(0.01, 1)", "--units", "loguniform(500, 20000)",
                               "--shape", "agents=8..20, partners=8..20", "--seed", "3")
        model = scores["source"]["model"]
        check(COVERAGE_RANGE[0] <= model["coverage"] <= COVERAGE_RANGE[1],
              f"model source: coverage {model['coverage']:.3f} of {model['with_interval']} intervals "
              f"in {COVERAGE_RANGE}")
        check(abs(model["median_relative_error"]) < MEDIAN_LIMIT,
              f"model source: median relative error {model['median_relative_error']:+.4f}")
        check(scores["model"]["entropic model true"]["cases"] == 300, "every model case counts as well specified")

        scores, rows = scored_set(binary, tmp, "queue", "--cases", "40", "--source", "queue",
                                  "--epsilon", "loguniform(0.02, 0.5)", "--units", "loguniform(2000, 20000)",
                                  "--shape", "agents=8..20, partners=8..20", "--seed", "4")
        queue = scores["source"]["queue"]
        errors = [float(r["relative_error"]) for r in rows if r["answer"] == "answered"]
        above = sum(e > 0 for e in errors)
        p = stats.binomtest(above, len(errors), 0.5, alternative="greater").pvalue
        check(queue["median_relative_error"] > 0 and p < P_FLOOR,
              f"queue source: median relative error {queue['median_relative_error']:+.3f}, bias "
              f"{queue['mean_relative_error']:+.3f}, {above} of {len(errors)} above the truth (sign test p = {p:.2g})")
        check(scores["model"]["misspecified"]["cases"] == 40, "queue cases count as misspecified")
    print(f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
