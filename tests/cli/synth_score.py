"""End-to-end checks of `allocsim synth` and `allocsim score`.

A small blind set is written (truth apart with --truth-dir), read back with
h5py and csv (the outside readers), answered by the tool's own estimator
through `allocsim analyze inputs.h5 --json` (tools/answer_with_allocsim.py),
and scored; the scores, per group and per quintile band, are recomputed here
with numpy (np.quantile, linear interpolation) and scipy.stats.spearmanr.
Declined and missing answers, the refusals of bad answers and of bad synth
options are checked by their messages."""
import csv
import io
import json
import os
import re
import subprocess
import sys
import tempfile

import h5py
import numpy as np
from scipy.stats import spearmanr

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

failures = []
TOOLS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "tools")


def check(condition, message):
    if not condition:
        failures.append(message)
        print("FAIL", message)


def run(binary, *args):
    return subprocess.run([binary, *args], capture_output=True, text=True)


def answer_with_allocsim(binary, folder, path):
    analysis = run(binary, "analyze", os.path.join(folder, "inputs.h5"), "--json")
    check(analysis.returncode == 0, f"analyze inputs.h5: {analysis.stderr}")
    answers = subprocess.run([sys.executable, os.path.join(TOOLS, "answer_with_allocsim.py")],
                             input=analysis.stdout, capture_output=True, text=True)
    check(answers.returncode == 0, f"answer_with_allocsim.py: {answers.stderr}")
    with open(path, "w") as out:
        out.write(answers.stdout)
    return list(csv.DictReader(io.StringIO(answers.stdout)))


def check_blind_layout(folder, truth_rows):
    names = [r["case"] for r in truth_rows]
    check(names == sorted(names) and names[0] == "case-0000", "truth rows are not in name order")
    readme = open(os.path.join(folder, "README.txt")).read()
    for item in sorted(os.listdir(folder)):
        check(item in readme, f"README.txt does not describe {item}")
    for item in sorted(os.listdir(os.path.join(folder, "inputs", names[0]))):
        check(item in readme, f"README.txt does not describe inputs/<case>/{item}")
    for column in truth_rows[0]:
        check(column in readme, f"README.txt does not describe the truth column {column}")
    for column in ["ci_low", "ci_high", "decline"]:
        check(column in readme, f"README.txt does not describe answers' {column}")
    check("truth.csv" not in os.listdir(folder), "the truth sits in the inputs folder despite --truth-dir")
    # h5py: one run group per case in the simulated-run layout, nothing of the truth.
    with h5py.File(os.path.join(folder, "inputs.h5"), "r") as h5:
        check(h5.attrs["format"] == "allocsim-results", "inputs.h5 is not an allocsim results file")
        check(sorted(h5["runs"]) == names, "inputs.h5 runs differ from the truth's cases")
        for name in names[:5]:
            run_group = h5["runs"][name]
            for attribute in run_group.attrs:
                check(attribute in ("status", "scenario.agents", "scenario.partners", "units_after_burn_in"),
                      f"{name}: inputs.h5 attribute {attribute} may reveal the design")
            total = run_group["allocation/total"][()]
            from_csv = np.loadtxt(os.path.join(folder, "inputs", name, "allocation.csv"), delimiter=",", ndmin=2)
            check(np.array_equal(total, from_csv), f"{name}: inputs.h5 and allocation.csv differ")
            check(np.allclose(run_group["scenario/gains"][()],
                              np.loadtxt(os.path.join(folder, "inputs", name, "gains.csv"), delimiter=",", ndmin=2)),
                  f"{name}: gains differ between inputs.h5 and gains.csv")
            truth = next(r for r in truth_rows if r["case"] == name)
            check(total.shape == (int(truth["agents"]), int(truth["partners"])), f"{name}: shape differs from truth")
            check(total.sum() == float(truth["units"]), f"{name}: units differ from truth")


def recompute(truth_rows, answers, scores):
    """numpy/scipy recomputation of the overall and per-band scores."""
    given = {a["case"]: a for a in answers}
    t_all = np.array([float(r["true_epsilon"]) for r in truth_rows])
    edges = np.quantile(t_all, [0.2, 0.4, 0.6, 0.8])
    bands = 1 + (t_all[:, None] > edges[None, :]).sum(axis=1)
    groups = {"all": np.ones(len(truth_rows), bool)}
    for band in range(1, 6):
        groups[f"q{band}"] = bands == band
    by_band = {k.split(":")[0]: v for k, v in scores["epsilon_band"].items()}
    for name, member in groups.items():
        rows = [r for r, m in zip(truth_rows, member) if m and given[r["case"]]["epsilon"] != ""]
        t = np.array([float(r["true_epsilon"]) for r in rows])
        e = np.array([float(given[r["case"]]["epsilon"]) for r in rows])
        low = np.array([float(given[r["case"]]["ci_low"] or "nan") for r in rows])
        high = np.array([float(given[r["case"]]["ci_high"] or "nan") for r in rows])
        rel = (e - t) / t
        finite = np.isfinite(rel)
        with_interval = np.isfinite(low)
        got = scores["all"] if name == "all" else by_band.get(name)
        if got is None:
            check(member.sum() == 0, f"band {name} holds cases but is not reported")
            continue
        check(got["cases"] == member.sum(), f"{name}: {got['cases']} cases, numpy {member.sum()}")
        check(abs(got["mean_relative_error"] - rel[finite].mean()) < 1e-12, f"{name}: bias differs from numpy")
        check(abs(got["rms_relative_error"] - np.sqrt((rel[finite] ** 2).mean())) < 1e-12, f"{name}: RMS differs")
        check(abs(got["median_abs_relative_error"] - np.median(np.abs(rel))) < 1e-12, f"{name}: median differs")
        covered = (low <= t) & (t <= high)
        check(abs(got["coverage"] - covered[with_interval].mean()) < 1e-12, f"{name}: coverage differs")
        check(abs(got["rank_correlation"] - spearmanr(t, e).correlation) < 1e-12,
              f"{name}: rank correlation differs from scipy.stats.spearmanr")


def check_declines(binary, truth_path, answers, tmp):
    """Declined, missing and interval-less answers; a group with no answers."""
    path = os.path.join(tmp, "partial.csv")
    rows = [dict(a) for a in answers]
    for k, a in enumerate(rows):
        if k % 5 == 0:
            a["epsilon"] = a["ci_low"] = a["ci_high"] = ""  # declined
        elif k % 5 == 1:
            a["ci_low"] = a["ci_high"] = ""  # a point estimate only
    kept = [a for k, a in enumerate(rows) if k % 5 != 2]  # every fifth case left out
    with open(path, "w") as out:
        out.write("case,epsilon,ci_low,ci_high\n")
        for a in kept:
            out.write(f"{a['case']},{a['epsilon']},{a['ci_low']},{a['ci_high']}\n")
    scored = run(binary, "score", "--truth", truth_path, "--answers", path, "--json")
    check(scored.returncode == 0, f"score of partial answers: {scored.stderr}")
    scores = json.loads(scored.stdout)
    n = len(rows)
    declined = len(range(0, n, 5))
    missing = len(range(2, n, 5))
    check(scores["declined"] == declined and scores["missing"] == missing,
          f"declined {scores['declined']} (expected {declined}), missing {scores['missing']} (expected {missing})")
    check(scores["all"]["answered"] == n - declined - missing, "answered count is off")
    check(scores["all"]["with_interval"] == n - declined - missing - len(range(1, n, 5)), "with_interval is off")
    # Declining every case of one family leaves a group without answers.
    truth_rows = list(csv.DictReader(open(truth_path)))
    family = truth_rows[0]["family"]
    with open(path, "w") as out:
        out.write("case,epsilon\n")
        for r, a in zip(truth_rows, answers):
            out.write(f"{a['case']},{'' if r['family'] == family else a['epsilon']}\n")
    text = run(binary, "score", "--truth", truth_path, "--answers", path)
    check(text.returncode == 0, f"score with a family declined: {text.stderr}")
    line = next((l for l in text.stdout.splitlines() if l.strip().startswith(family)), "")
    check("no answers" in line, f"the declined family's line says {line!r}, not 'no answers'")
    check(not re.search(r"\bnan\b", text.stdout, re.I), "the printed table holds nan")
    scored = json.loads(run(binary, "score", "--truth", truth_path, "--answers", path, "--json").stdout)
    check(scored["family"][family]["answered"] == 0 and scored["family"][family]["coverage"] is None,
          "a family without answers has a coverage in JSON")


def check_refusals(binary, truth_path, tmp, first, second):
    bad = os.path.join(tmp, "bad.csv")
    for name, text, words in [
        ("unknown case", "case,epsilon\ncase-99999,0.1\n", ["case-99999"]),
        ("no epsilon column", "case,estimate\ncase-0000,0.1\n", ["epsilon", "case, estimate"]),
        ("text estimate", f"case,epsilon\n{first},hot\n", ["bad.csv:2", first, "hot"]),
        ("case twice", f"case,epsilon\n{first},0.1\n{first},0.2\n", ["bad.csv:3", "twice"]),
        ("negative estimate", f"case,epsilon\n{second},0.1\n{first},-0.2\n", ["bad.csv:3", first, "negative"]),
        ("ci_low above ci_high", f"case,epsilon,ci_low,ci_high\n{first},0.1,0.3,0.2\n{second},0.1,0.05,0.2\n",
         ["bad.csv:2", first, "ci_low 0.3 is above ci_high 0.2"]),
        ("negative ci_low", f"case,epsilon,ci_low,ci_high\n{second},0.1,-0.05,0.2\n", ["bad.csv:2", second, "negative"]),
        ("half an interval", f"case,epsilon,ci_low,ci_high\n{second},0.1,0.05,\n", [second, "half an interval"]),
        ("declined with an interval", f"case,epsilon,ci_low,ci_high\n{second},,0.05,0.2\n", [second, "declines"]),
        ("ci_low column alone", f"case,epsilon,ci_low\n{second},0.1,0.05\n", ["ci_low", "ci_high"]),
        ("nan estimate", f"case,epsilon\n{first},nan\n", [first, "nan"]),
    ]:
        with open(bad, "w") as handle:
            handle.write(text)
        scored = run(binary, "score", "--truth", truth_path, "--answers", bad, "--out", os.path.join(tmp, "s.csv"))
        missing = [w for w in words if w not in scored.stderr]
        check(scored.returncode == 2 and not missing and len(scored.stderr.strip().splitlines()) == 1,
              f"score, {name}: exit {scored.returncode}, {scored.stderr.strip()!r} lacks {missing}")
        check(not os.path.exists(os.path.join(tmp, "s.csv")), f"score, {name}: left an output file")


def check_synth_refusals(binary, folder, tmp):
    for name, options, words in [
        ("non-empty folder", ["--out-dir", folder], ["not an empty folder"]),
        ("unknown family", ["--out-dir", os.path.join(tmp, "b"), "--families", "gravity"], ["gravity"]),
        ("unknown source", ["--out-dir", os.path.join(tmp, "c"), "--source", "model, oracle"], ["oracle"]),
        ("bad epsilon", ["--out-dir", os.path.join(tmp, "d"), "--epsilon", "0.1, -2"], ["-2"]),
        ("law upside down", ["--out-dir", os.path.join(tmp, "e"), "--epsilon", "loguniform(1, 0.1)"],
         ["--epsilon", "lower end"]),
        ("misspelt law", ["--out-dir", os.path.join(tmp, "f"), "--units", "logunifrom(1, 5)"], ["--units"]),
        ("bad shape", ["--out-dir", os.path.join(tmp, "g"), "--shape", "agents=10..60, rows=3"], ["rows=3"]),
        ("shape and agents", ["--out-dir", os.path.join(tmp, "h"), "--shape", "agents=5", "--agents", "8"],
         ["--shape"]),
        ("bad marginal law", ["--out-dir", os.path.join(tmp, "i"), "--budgets", "zipf(1), pareto"], ["pareto"]),
        ("truth inside the inputs", ["--out-dir", os.path.join(tmp, "j"), "--truth-dir",
                                     os.path.join(tmp, "j", "key")], ["--truth-dir", "apart"]),
    ]:
        made = run(binary, "synth", "--cases", "3", *options)
        check(made.returncode == 2 and all(w in made.stderr for w in words),
              f"synth, {name}: exit {made.returncode}, {made.stderr.strip()!r}")
        out_dir = options[1]
        check(out_dir == folder or not os.path.exists(out_dir), f"synth, {name}: left {out_dir} behind")


def main():
    parser = test_parser()
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    with tempfile.TemporaryDirectory() as tmp:
        folder, key = os.path.join(tmp, "set"), os.path.join(tmp, "key")
        made = run(binary, "synth", "--out-dir", folder, "--truth-dir", key, "--cases", "40",
                   "--source", "model, price, queue, mixed-noise", "--shape", "agents=6..14, partners=5..12",
                   "--units", "loguniform(500, 8000)", "--budgets", "uniform, zipf(1)", "--seed", "5")
        check(made.returncode == 0, f"synth: {made.stderr}")
        truth_path = os.path.join(key, "truth.csv")
        truth_rows = list(csv.DictReader(open(truth_path)))
        check(len(truth_rows) == 40, f"{len(truth_rows)} cases, expected 40")
        check({r["source"] for r in truth_rows} == {"model", "price", "queue", "mixed-noise"}, "sources missing")
        check(all((r["misspecified"] == "true") == (r["source"] in ("queue", "mixed-noise")) for r in truth_rows),
              "the misspecified column does not follow the source")
        check_blind_layout(folder, truth_rows)
        again = os.path.join(tmp, "again")
        run(binary, "synth", "--out-dir", again, "--cases", "40", "--source", "model, price, queue, mixed-noise",
            "--shape", "agents=6..14, partners=5..12", "--units", "loguniform(500, 8000)",
            "--budgets", "uniform, zipf(1)", "--seed", "5")
        check(open(os.path.join(again, "truth.csv")).read() == open(truth_path).read(),
              "the same options and seed gave another truth")

        answers_path = os.path.join(tmp, "answers.csv")
        answers = answer_with_allocsim(binary, folder, answers_path)
        check([a["case"] for a in answers] == [r["case"] for r in truth_rows], "answers do not cover every case")
        per_case = os.path.join(tmp, "scores.csv")
        groups_csv = os.path.join(tmp, "groups.csv")
        scored = run(binary, "score", "--truth", truth_path, "--answers", answers_path, "--json",
                     "--out", per_case, "--groups-csv", groups_csv)
        check(scored.returncode == 0, f"score: {scored.stderr}")
        scores = json.loads(scored.stdout)
        recompute(truth_rows, answers, scores)
        rows = list(csv.DictReader(open(per_case)))
        check(len(rows) == 40 and all(r["answer"] == "answered" for r in rows), "per-case CSV is off")
        scores_h5 = os.path.join(tmp, "scores.h5")
        scored = run(binary, "score", "--truth", truth_path, "--answers", answers_path, "--out", scores_h5)
        check(scored.returncode == 0, f"score --out scores.h5: {scored.stderr}")
        with h5py.File(scores_h5, "r") as h5:  # h5py reads what the per-case CSV holds
            check(h5.attrs["format"] == "allocsim-results", "scores.h5 is not an allocsim results file")
            summary = h5["summary"]
            check([c.decode() for c in summary["case"][()]] == [r["case"] for r in rows], "scores.h5 cases differ")
            for column, name in [("true_epsilon", "true_epsilon"), ("epsilon", "epsilon"), ("ci_low", "epsilon_ci_low"),
                                 ("ci_high", "epsilon_ci_high"), ("relative_error", "relative_error"),
                                 ("units", "units")]:
                from_csv = np.array([float(r[column]) if r[column] else np.nan for r in rows])
                check(np.allclose(summary[name][()], from_csv, equal_nan=True, rtol=0, atol=0),
                      f"scores.h5 column {column} differs from the CSV")
            covered = np.array([{"true": 1.0, "false": 0.0}.get(r["covered"], np.nan) for r in rows])
            check(np.array_equal(summary["covered"][()], covered, equal_nan=True), "scores.h5 covered differs")
        figures = os.path.join(tmp, "figures")
        drawn = run(binary, "plot", scores_h5, "--out-dir", figures, "--script-only")
        script = os.path.join(figures, "estimator-scores.gp")
        check(drawn.returncode == 0 and drawn.stdout.split() == [script], f"plot scores.h5: {drawn.stdout!r} {drawn.stderr}")
        if os.path.exists(script):
            text = open(script).read()
            for words in ["estimate against truth", "error against units", "coverage of the intervals",
                          "by true epsilon", "by units", "queue", "mixed-noise"]:
                check(words in text, f"the estimator-scores figure lacks {words!r}")
        groups = list(csv.DictReader(open(groups_csv)))
        check({g["grouping"] for g in groups} == {"all", "family", "source", "model", "epsilon band", "units band"},
              f"groupings {sorted({g['grouping'] for g in groups})}")
        print(f"40 cases: bias {scores['all']['mean_relative_error']:+.4f}, "
              f"coverage {scores['all']['coverage']:.3f}, queue median "
              f"{scores['source']['queue']['median_relative_error']:+.3f}")
        text = run(binary, "score", "--truth", truth_path, "--answers", answers_path).stdout
        check(not re.search(r"\bnan\b", text, re.I) and "by true epsilon (quintiles)" in text and "by units" in text,
              "printed tables lack a grouping or hold nan")

        check_declines(binary, truth_path, answers, tmp)
        check_refusals(binary, truth_path, tmp, truth_rows[0]["case"], truth_rows[1]["case"])
        check_synth_refusals(binary, folder, tmp)
    print(f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
