"""End-to-end checks of `allocsim solve`: good runs, and bad input that must
give one clear line on stderr naming the file (and line), a non-zero exit,
and no output file."""
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

GOOD_GAINS = "1,2,3\n4,5,6\n"
GOOD_BUDGETS = "0.5\n0.5\n"
GOOD_CAPACITIES = "0.2,0.3,0.5\n"

# name, files to write over the good ones, extra options, expected exit code,
# words the one-line message must contain
CASES = [
    ("nan gain", {"G.csv": "1,2,3\n4,nan,6\n"}, [], 2, ["G.csv:2", "finite"]),
    ("infinite gain", {"G.csv": "1,inf,3\n4,5,6\n"}, [], 2, ["G.csv:1", "finite"]),
    ("text in a gain", {"G.csv": "1,2,3\n4,five,6\n"}, [], 2, ["G.csv:2", "five"]),
    ("ragged row", {"G.csv": "1,2,3\n4,5\n"}, [], 2, ["G.csv:2", "ragged"]),
    ("empty gains file", {"G.csv": ""}, [], 2, ["G.csv", "no data"]),
    ("negative budget", {"r.csv": "1.5\n-0.5\n"}, [], 2, ["r.csv", "budget entry 2", "positive"]),
    ("zero capacity", {"c.csv": "0.5,0,0.5\n"}, [], 2, ["c.csv", "capacity entry 2"]),
    ("too few budgets", {"r.csv": "1\n"}, [], 2, ["r.csv", "1 budgets", "2 rows"]),
    ("too many capacities", {"c.csv": "0.25,0.25,0.25,0.25\n"}, [], 2, ["c.csv", "4 capacities"]),
    ("unbalanced totals", {"c.csv": "0.2,0.3,0.6\n"}, [], 2, ["--rescale", "total"]),
    ("access of the wrong shape", {"A.csv": "1,1\n1,1\n"}, ["--access", "A.csv"], 2, ["A.csv", "2 x 2", "2 x 3"]),
    ("access not 0/1", {"A.csv": "1,1,2\n1,1,1\n"}, ["--access", "A.csv"], 2, ["A.csv", "holds 2"]),
    ("agent without partner", {"A.csv": "0,0,0\n1,1,1\n"}, ["--access", "A.csv"], 1, ["A.csv", "infeasible", "agent 1"]),
    ("budgets beyond reachable capacity", {"A.csv": "1,0,0\n1,1,1\n"}, ["--access", "A.csv"], 1, ["A.csv", "infeasible"]),
    ("entropic, infeasible", {"A.csv": "0,0,0\n1,1,1\n"}, ["--access", "A.csv", "--method", "entropic", "--epsilon", "1"], 1, ["A.csv", "infeasible"]),
    ("missing file", {}, ["--gains", "nowhere.csv"], 2, ["nowhere.csv", "cannot be opened"]),
    ("unknown method", {}, ["--method", "fastest"], 2, ["fastest", "exact, entropic"]),
    ("entropic without epsilon", {}, ["--method", "entropic"], 2, ["--epsilon"]),
    ("negative epsilon", {}, ["--method", "entropic", "--epsilon", "-1"], 2, ["--epsilon", "positive"]),
    ("unknown option", {}, ["--speed", "3"], 2, ["speed"]),
    ("output folder missing", {}, ["--out", "no/such/folder/P.csv"], 2, ["no/such/folder/P.csv"]),
]


def run_solve(binary, folder, extra):
    base = ["solve", "--gains", "G.csv", "--budgets", "r.csv", "--capacities", "c.csv"]
    # later options win: Boost rejects repeated single options, so replace instead
    options = dict(zip(base[1::2], base[2::2]))
    flags = []
    k = 0
    while k < len(extra):
        if extra[k] in options and k + 1 < len(extra):
            options[extra[k]] = extra[k + 1]
            k += 2
        else:
            flags.append(extra[k])
            k += 1
    command = [binary, "solve"] + [x for kv in options.items() for x in kv] + flags
    if "--out" not in flags:
        command += ["--out", "P.csv"]
    return subprocess.run(command, cwd=folder, capture_output=True, text=True)


def write_inputs(folder, overrides):
    files = {"G.csv": GOOD_GAINS, "r.csv": GOOD_BUDGETS, "c.csv": GOOD_CAPACITIES}
    files.update(overrides)
    for name, text in files.items():
        with open(os.path.join(folder, name), "w") as handle:
            handle.write(text)


def check_good_runs(binary, failures):
    with tempfile.TemporaryDirectory() as folder:
        write_inputs(folder, {})
        for method in (["--method", "exact"], ["--method", "entropic", "--epsilon", "0.5"]):
            run = run_solve(binary, folder, method + ["--json"])
            if run.returncode != 0:
                failures.append(f"good run {method} failed: {run.stderr}")
                continue
            summary = json.loads(run.stdout)
            for key in ("status", "method", "total_gain", "iterations", "marginal_error",
                        "support_size", "is_forest", "epsilon"):
                if key not in summary:
                    failures.append(f"good run {method}: JSON lacks '{key}'")
            if not os.path.exists(os.path.join(folder, "P.csv")):
                failures.append(f"good run {method}: no P.csv written")
            os.remove(os.path.join(folder, "P.csv"))


def main():
    parser = test_parser()
    args = parser.parse_args()
    args.allocsim = os.path.abspath(args.allocsim)
    failures = []
    check_good_runs(args.allocsim, failures)
    for name, overrides, extra, code, words in CASES:
        with tempfile.TemporaryDirectory() as folder:
            write_inputs(folder, overrides)
            run = run_solve(args.allocsim, folder, extra)
            lines = [line for line in run.stderr.splitlines() if line.strip()]
            problems = []
            if run.returncode != code:
                problems.append(f"exit {run.returncode}, expected {code}")
            if len(lines) != 1:
                problems.append(f"{len(lines)} lines on stderr")
            missing = [w for w in words if w not in run.stderr]
            if missing:
                problems.append(f"message lacks {missing}")
            leftovers = [f for f in os.listdir(folder) if f.startswith("P.csv")]
            if leftovers:
                problems.append(f"left {leftovers}")
            if problems:
                failures.append(f"{name}: {'; '.join(problems)}; stderr: {run.stderr.strip()}")
    for failure in failures:
        print("FAIL", failure)
    print(f"{len(CASES)} bad inputs and 2 good runs checked: {len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
