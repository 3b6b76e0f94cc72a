"""End-to-end checks of `allocsim synth` and `allocsim score`: a benchmark
set, answered blind by the tool's own estimator (`allocsim analyze`), scored;
the scores are recomputed here with numpy and scipy.stats.spearmanr (the
outside reference), and bad answers and options are refused."""
import argparse
import csv
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.stats import spearmanr

failures = []


def check(condition, message):
    if not condition:
        failures.append(message)
        print("FAIL", message)


def answer_blind(binary, folder):
    """Answers every case from what an estimator may see (inputs/ only)."""
    cases = sorted(os.listdir(os.path.join(folder, "inputs")))
    path = os.path.join(folder, "answers.csv")
    with open(path, "w") as out:
        out.write("case,epsilon,ci_low,ci_high\n")
        for case in cases:
            inputs = os.path.join(folder, "inputs", case)
            run = subprocess.run([binary, "analyze", "--allocation", os.path.join(inputs, "allocation.csv"),
                                  "--gains", os.path.join(inputs, "gains.csv"), "--json"],
                                 capture_output=True, text=True)
            t = json.loads(run.stdout)["temperature"]
            high = "inf" if t["ci_high"] is None else t["ci_high"]
            out.write(f"{case},{t['epsilon']},{t['ci_low']},{high}\n")
    return path


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--allocsim", required=True)
    parser.add_argument("--data", required=True)
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    with tempfile.TemporaryDirectory() as tmp:
        folder = os.path.join(tmp, "set")
        run = subprocess.run([binary, "synth", "--out-dir", folder, "--epsilon", "0.05, 0.2, 0.6",
                              "--replicates", "4", "--units", "4000", "--seed", "5"],
                             capture_output=True, text=True)
        check(run.returncode == 0, f"synth: {run.stderr}")
        truth_rows = list(csv.DictReader(open(os.path.join(folder, "truth.csv"))))
        check(len(truth_rows) == 36, f"{len(truth_rows)} cases, expected 3 families x 3 x 4")
        for case in os.listdir(os.path.join(folder, "inputs")):
            check(sorted(os.listdir(os.path.join(folder, "inputs", case))) == ["allocation.csv", "gains.csv"],
                  f"{case}: the inputs hold more than the allocation and the gains")
        answers = answer_blind(binary, folder)
        scores_csv = os.path.join(tmp, "scores.csv")
        run = subprocess.run([binary, "score", "--truth", os.path.join(folder, "truth.csv"),
                              "--answers", answers, "--json", "--out", scores_csv],
                             capture_output=True, text=True)
        check(run.returncode == 0, f"score: {run.stderr}")
        scores = json.loads(run.stdout)["all"]
        # Outside recomputation of the overall scores.
        truth = {r["case"]: float(r["true_epsilon"]) for r in truth_rows}
        given = list(csv.DictReader(open(answers)))
        t = np.array([truth[a["case"]] for a in given])
        e = np.array([float(a["epsilon"]) for a in given])
        low = np.array([float(a["ci_low"]) for a in given])
        high = np.array([float(a["ci_high"]) for a in given])
        rel = (e - t) / t
        check(abs(scores["mean_relative_error"] - rel.mean()) < 1e-12, "bias differs from numpy")
        check(abs(scores["rms_relative_error"] - np.sqrt((rel ** 2).mean())) < 1e-12, "RMS differs from numpy")
        check(abs(scores["median_abs_relative_error"] - np.median(np.abs(rel))) < 1e-12, "median differs")
        check(abs(scores["coverage"] - ((low <= t) & (t <= high)).mean()) < 1e-12, "coverage differs")
        check(abs(scores["rank_correlation"] - spearmanr(t, e).correlation) < 1e-12,
              "rank correlation differs from scipy.stats.spearmanr")
        # The estimator itself: unbiased to a few percent, intervals near their level
        # (the tight 92-98% check over 240 cases is temperature_test's [slow] case).
        check(abs(scores["mean_relative_error"]) < 0.05, f"bias {scores['mean_relative_error']}")
        check(scores["coverage"] >= 0.75, f"coverage {scores['coverage']}")
        print(f"36 cases: bias {scores['mean_relative_error']:+.4f}, coverage {scores['coverage']:.3f}, "
              f"Spearman {scores['rank_correlation']:.3f}")

        bad_answers = os.path.join(tmp, "bad.csv")
        for name, text, code, words in [
            ("unknown case", "case,epsilon\ncase-99999,0.1\n", 2, ["case-99999"]),
            ("no epsilon column", "case,estimate\ncase-00000,0.1\n", 2, ["epsilon", "case, estimate"]),
            ("text estimate", "case,epsilon\ncase-00000,hot\n", 2, ["bad.csv:2", "hot"]),
            ("case twice", "case,epsilon\ncase-00000,0.1\ncase-00000,0.2\n", 2, ["twice"]),
        ]:
            with open(bad_answers, "w") as handle:
                handle.write(text)
            run = subprocess.run([binary, "score", "--truth", os.path.join(folder, "truth.csv"),
                                  "--answers", bad_answers], capture_output=True, text=True)
            missing = [w for w in words if w not in run.stderr]
            check(run.returncode == code and not missing and len(run.stderr.strip().splitlines()) == 1,
                  f"score, {name}: exit {run.returncode}, {run.stderr.strip()!r}")
        for name, options, words in [
            ("non-empty folder", ["--out-dir", folder], ["not empty"]),
            ("unknown family", ["--out-dir", os.path.join(tmp, "b"), "--families", "gravity"], ["gravity"]),
            ("unknown source", ["--out-dir", os.path.join(tmp, "c"), "--source", "oracle"], ["oracle"]),
            ("bad epsilon", ["--out-dir", os.path.join(tmp, "d"), "--epsilon", "0.1, -2"], ["-2"]),
        ]:
            run = subprocess.run([binary, "synth"] + options, capture_output=True, text=True)
            check(run.returncode == 2 and all(w in run.stderr for w in words),
                  f"synth, {name}: exit {run.returncode}, {run.stderr.strip()!r}")
        price = subprocess.run([binary, "synth", "--out-dir", os.path.join(tmp, "p"), "--source", "price",
                                "--epsilon", "0.1", "--replicates", "1", "--families", "random"],
                               capture_output=True, text=True)
        check(price.returncode == 0 and "price" in open(os.path.join(tmp, "p", "truth.csv")).read(),
              f"synth from the price rule: {price.stderr}")
    print(f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
