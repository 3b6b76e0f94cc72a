"""End-to-end checks of bad input to `allocsim simulate` and `allocsim inspect`,
and of the memory limit of `allocsim solve` (tests/cli/solve_errors.py holds
its other bad inputs):
each case must end with exit code 1 or 2 (never a signal), exactly one line on
stderr that names the file (and line) or the key and contains the expected
words, and no results file (nor a temporary one) left behind. A good run of
each command shows that the harness can tell success from failure."""
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

GOOD_INI = """[scenario]
agents = 4
partners = 5
seed = 3
[dynamics]
rule = price
temperature = 0.1
rounds = 6
units = 200
burn_in = 2
window = 2
"""

GOOD_GAINS = "1,2,3,4,5\n2,3,4,5,6\n3,4,5,6,7\n4,5,6,7,8\n"

# name, files to write, simulate arguments (out.h5 is added), expected exit
# code, words the one-line message must contain, extra environment
SIMULATE_CASES = [
    ("missing config file", {}, ["--config", "nowhere.ini"], 2, ["nowhere.ini", "cannot be read"], {}),
    ("unknown key in file", {"e.ini": "[scenario]\nagentz = 4\n"}, ["--config", "e.ini"], 2,
     ["e.ini:2", "agentz", "scenario.agents"], {}),
    ("key given twice", {"e.ini": "[scenario]\nagents = 4\nagents = 5\n"}, ["--config", "e.ini"], 2,
     ["e.ini:3", "scenario.agents", "twice"], {}),
    ("not an INI line", {"e.ini": "[scenario]\nagents 4\n"}, ["--config", "e.ini"], 2, ["e.ini:2", "INI"], {}),
    ("unknown rule word", {"e.ini": "[dynamics]\nrule = auction\n"}, ["--config", "e.ini"], 2,
     ["e.ini:2", "dynamics.rule", "auction"], {}),
    ("negative temperature", {"e.ini": "[dynamics]\ntemperature = -1\n"}, ["--config", "e.ini"], 2,
     ["e.ini:2", "dynamics.temperature"], {}),
    ("NaN temperature", {}, ["--dynamics.temperature", "nan"], 2, ["--dynamics.temperature"], {}),
    ("text in a whole-number key", {}, ["--dynamics.rounds", "many"], 2, ["--dynamics.rounds", "many"], {}),
    ("zero agents", {}, ["--scenario.agents", "0"], 2, ["--scenario.agents"], {}),
    ("burn-in not below rounds", {}, ["--dynamics.rounds", "5", "--dynamics.burn_in", "5"], 2,
     ["dynamics.burn_in"], {}),
    ("unknown command-line key", {}, ["--scenario.agentz", "3"], 2, ["agentz", "scenario.agents"], {}),
    ("zero threads", {}, ["--threads", "0"], 2, ["--threads"], {}),
    ("gains file missing", {}, ["--scenario.gains", "file", "--scenario.gains_file", "nowhere.csv"], 2,
     ["nowhere.csv"], {}),
    ("NaN in a gains file", {"G.csv": "1,2\nnan,4\n"},
     ["--scenario.gains", "file", "--scenario.gains_file", "G.csv"], 2, ["G.csv:2", "finite"], {}),
    ("ragged gains file", {"G.csv": "1,2,3\n4,5\n"},
     ["--scenario.gains", "file", "--scenario.gains_file", "G.csv"], 2, ["G.csv:2", "ragged"], {}),
    ("empty gains file", {"G.csv": ""},
     ["--scenario.gains", "file", "--scenario.gains_file", "G.csv"], 2, ["G.csv", "no data"], {}),
    ("negative budget in a file", {"G.csv": GOOD_GAINS, "r.csv": "1\n-1\n1\n1\n"},
     ["--scenario.gains", "file", "--scenario.gains_file", "G.csv", "--scenario.budgets", "file",
      "--scenario.budgets_file", "r.csv"], 2, ["r.csv", "positive"], {}),
    ("access file not 0/1", {"G.csv": GOOD_GAINS, "A.csv": "1,1,1,1,1\n1,2,1,1,1\n1,1,1,1,1\n1,1,1,1,1\n"},
     ["--scenario.gains", "file", "--scenario.gains_file", "G.csv", "--scenario.access", "file",
      "--scenario.access_file", "A.csv"], 2, ["A.csv", "holds 2"], {}),
    ("huge declared size", {}, ["--scenario.agents", "1000000", "--scenario.partners", "1000000"], 2,
     ["scenario.agents", "1000000 x 1000000", "TB", "memory"], {}),
    ("size beyond a memory limit", {}, ["--scenario.agents", "300", "--scenario.partners", "300"], 2,
     ["scenario.agents", "300 x 300", "memory", "ALLOCSIM_MEMORY_LIMIT_BYTES"],
     {"ALLOCSIM_MEMORY_LIMIT_BYTES": "1e5"}),
    ("malformed memory limit", {}, [], 2, ["ALLOCSIM_MEMORY_LIMIT_BYTES", "positive number"],
     {"ALLOCSIM_MEMORY_LIMIT_BYTES": "lots"}),
    ("output folder missing", {}, ["--out", "no/such/folder/out.h5"], 2, ["no/such/folder/out.h5"], {}),
]

# name, files to write, inspect arguments, expected exit code, words
INSPECT_CASES = [
    ("missing results file", {}, ["nowhere.h5"], 2, ["nowhere.h5"]),
    ("empty results file", {"empty.h5": ""}, ["empty.h5"], 2, ["empty.h5", "HDF5"]),
    ("text file given as results", {"text.h5": "run,value\n1,2\n"}, ["text.h5"], 2, ["text.h5", "HDF5"]),
    ("no file named", {}, [], 2, ["file"]),
]


def write_files(folder, files):
    for name, text in files.items():
        with open(os.path.join(folder, name), "w") as handle:
            handle.write(text)


def check_failure(name, run, code, words, folder, before, failures):
    lines = [line for line in run.stderr.splitlines() if line.strip()]
    if run.returncode < 0:
        failures.append(f"{name}: killed by signal {-run.returncode}")
    elif run.returncode != code:
        failures.append(f"{name}: exit {run.returncode}, expected {code}; stderr: {run.stderr.strip()}")
    if len(lines) != 1:
        failures.append(f"{name}: expected one line on stderr, got {len(lines)}: {run.stderr.strip()}")
    missing = [w for w in words if w not in run.stderr]
    if missing:
        failures.append(f"{name}: message lacks {missing}: {run.stderr.strip()}")
    left = sorted(set(os.listdir(folder)) - before)
    if left:
        failures.append(f"{name}: left files behind: {left}")


def environment(extra):
    env = dict(os.environ)
    env.pop("ALLOCSIM_MEMORY_LIMIT_BYTES", None)
    env.update(extra)
    return env


def check_simulate(binary, failures):
    for name, files, arguments, code, words, extra in SIMULATE_CASES:
        with tempfile.TemporaryDirectory() as folder:
            write_files(folder, files)
            before = set(os.listdir(folder))
            if "--out" not in arguments:
                arguments = arguments + ["--out", "out.h5"]
            run = subprocess.run([binary, "simulate", "--quiet"] + arguments, cwd=folder,
                                 capture_output=True, text=True, env=environment(extra), timeout=120)
            check_failure("simulate: " + name, run, code, words, folder, before, failures)


def good_results_file(binary, folder, failures):
    write_files(folder, {"good.ini": GOOD_INI})
    run = subprocess.run([binary, "simulate", "--quiet", "--config", "good.ini", "--out", "good.h5",
                          "--json"], cwd=folder, capture_output=True, text=True, env=environment({}),
                         timeout=120)
    if run.returncode != 0:
        failures.append(f"good simulate failed: {run.stderr.strip()}")
        return None
    if json.loads(run.stdout).get("status") != "complete":
        failures.append(f"good simulate: status is not complete: {run.stdout}")
    return os.path.join(folder, "good.h5")


def check_inspect(binary, failures):
    with tempfile.TemporaryDirectory() as folder:
        good = good_results_file(binary, folder, failures)
        if good is None:
            return
        run = subprocess.run([binary, "inspect", good, "--json"], capture_output=True, text=True)
        if run.returncode != 0 or "run-000000" not in run.stdout:
            failures.append(f"inspect of a good file failed: {run.returncode} {run.stderr.strip()}")
        with open(good, "rb") as handle:
            data = handle.read()
        cases = list(INSPECT_CASES)
        # Truncated HDF5: the first half of a good file.
        cases.append(("truncated results file", {}, ["truncated.h5"], 2, ["truncated.h5"]))
        # Foreign HDF5: a valid HDF5 file that is not an allocsim results file.
        foreign_bytes = None
        try:
            import h5py  # outside reference for the file format
            with tempfile.TemporaryDirectory() as scratch:
                path = os.path.join(scratch, "foreign.h5")
                with h5py.File(path, "w") as foreign:
                    foreign["data"] = [1.0, 2.0]
                with open(path, "rb") as handle:
                    foreign_bytes = handle.read()
            cases.append(("foreign HDF5 file", {}, ["foreign.h5"], 2, ["foreign.h5", "not an allocsim"]))
        except ImportError:
            failures.append("h5py is missing (python3-h5py)")
        for name, files, arguments, code, words in cases:
            with tempfile.TemporaryDirectory() as case_folder:
                write_files(case_folder, files)
                if name == "truncated results file":
                    with open(os.path.join(case_folder, "truncated.h5"), "wb") as handle:
                        handle.write(data[: len(data) // 2])
                if name == "foreign HDF5 file":
                    with open(os.path.join(case_folder, "foreign.h5"), "wb") as handle:
                        handle.write(foreign_bytes)
                before = set(os.listdir(case_folder))
                run = subprocess.run([binary, "inspect"] + arguments, cwd=case_folder,
                                     capture_output=True, text=True, timeout=60)
                check_failure("inspect: " + name, run, code, words, case_folder, before, failures)
        return len(cases)


def check_solve_limit(binary, failures):
    """A solve whose working memory exceeds the limit is refused before it runs."""
    with tempfile.TemporaryDirectory() as folder:
        n = 60
        write_files(folder, {"G.csv": "\n".join(",".join(str((i * j) % 7) for j in range(n))
                                                 for i in range(n)) + "\n",
                             "r.csv": "\n".join(["1"] * n) + "\n",
                             "c.csv": "\n".join(["1"] * n) + "\n"})
        before = set(os.listdir(folder))
        command = [binary, "solve", "--gains", "G.csv", "--budgets", "r.csv", "--capacities", "c.csv",
                   "--out", "P.csv"]
        run = subprocess.run(command, cwd=folder, capture_output=True, text=True, timeout=60,
                             env=environment({"ALLOCSIM_MEMORY_LIMIT_BYTES": "2e5"}))
        check_failure("solve: beyond a memory limit", run, 2,
                      ["G.csv", "exact solve of 60 x 60 cells", "memory", "ALLOCSIM_MEMORY_LIMIT_BYTES"],
                      folder, before, failures)
        run = subprocess.run(command, cwd=folder, capture_output=True, text=True, timeout=60,
                             env=environment({}))
        if run.returncode != 0 or not os.path.exists(os.path.join(folder, "P.csv")):
            failures.append(f"solve without a limit failed: {run.stderr.strip()}")


def main():
    parser = test_parser(__doc__)
    args = parser.parse_args()
    args.allocsim = os.path.abspath(args.allocsim)
    failures = []
    check_simulate(args.allocsim, failures)
    inspected = check_inspect(args.allocsim, failures) or 0
    check_solve_limit(args.allocsim, failures)
    for failure in failures:
        print("FAIL", failure)
    print(f"command_errors: {len(SIMULATE_CASES)} simulate, {inspected} inspect and 1 solve cases, "
          f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
