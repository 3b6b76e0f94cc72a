"""End-to-end checks of `allocsim run`: the same results on 1 and 2 threads
and over MPI ranks, resume after SIGKILL at random moments and after Ctrl-C,
the summary table, and bad experiment files. The results are read with h5py
(the outside reference for the file format)."""
import os
import random
import shutil
import signal
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

EXPERIMENT = """# a small temperature sweep
[scenario]
agents = 12
partners = 9
gains = random
[dynamics]
rule = price
rounds = {rounds}
units = 5000
burn_in = 20
window = 20
[sweep]
dynamics.temperature = log(0.02, 0.5, 4)
replicates = 2
[output]
file = {output}
"""
RUNS = 8

failures = []


def check(condition, message):
    if not condition:
        failures.append(message)
        print("FAIL", message)


def write_experiment(folder, name, output, rounds=200, extra=""):
    path = os.path.join(folder, name)
    with open(path, "w") as handle:
        handle.write(EXPERIMENT.format(rounds=rounds, output=output) + extra)
    return path


def totals(path):
    with h5py.File(path, "r") as f:
        return {run: f["runs"][run]["allocation/total"][()] for run in f["runs"]}


def same_results(a, b):
    ta, tb = totals(a), totals(b)
    return sorted(ta) == sorted(tb) and all(np.array_equal(ta[r], tb[r]) for r in ta)


def run(binary, folder, *args, timeout=300):
    return subprocess.run([binary, "run", *args], cwd=folder, capture_output=True, text=True,
                          timeout=timeout)


def check_threads_and_summary(binary, folder):
    for threads, name in ((1, "one.h5"), (2, "two.h5")):
        exp = write_experiment(folder, name + ".ini", name)
        result = run(binary, folder, exp, "--threads", str(threads), "--csv", name + ".csv")
        check(result.returncode == 0, f"{threads} thread(s): exit {result.returncode}: {result.stderr}")
    one, two = os.path.join(folder, "one.h5"), os.path.join(folder, "two.h5")
    check(same_results(one, two), "1 and 2 threads give different allocations")
    with h5py.File(one, "r") as f:
        check(f.attrs["format"] == "allocsim-results", "root format attribute")
        check(isinstance(f.attrs["experiment"], str) and "[sweep]" in f.attrs["experiment"],
              "the experiment text is stored as str")
        check(len(f["runs"]) == RUNS, f"{len(f['runs'])} runs, expected {RUNS}")
        summary = f["summary"]
        check(len(summary["run"]) == RUNS, "summary has one row per run")
        temperatures = summary["dynamics.temperature"][()]
        # log(0.02, 0.5, 4) with 2 replicates, replicates innermost (closed form)
        expected = np.repeat(np.logspace(np.log10(0.02), np.log10(0.5), 4), 2)
        check(np.allclose(temperatures, expected, rtol=1e-11), f"swept temperatures {temperatures}")
        check(list(summary["replicate"][()]) == [0, 1] * 4, "replicate column")
    with open(os.path.join(folder, "one.h5.csv")) as handle:
        lines = handle.read().splitlines()
    check(len(lines) == RUNS + 1 and "dynamics.temperature" in lines[0], "summary CSV shape")


def check_resume_after_kill(binary, folder, rng):
    rounds = 4000
    reference_exp = write_experiment(folder, "kill_reference.ini", "kill_reference.h5", rounds=rounds)
    check(run(binary, folder, reference_exp, "--quiet").returncode == 0, "uninterrupted reference")
    reference = os.path.join(folder, "kill_reference.h5")
    exp = write_experiment(folder, "kill.ini", "kill.h5", rounds=rounds)
    kills = 0
    for _ in range(3):
        process = subprocess.Popen([binary, "run", exp, "--threads", "2", "--quiet"], cwd=folder,
                                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(rng.uniform(0.05, 0.4))
        if process.poll() is None:
            process.send_signal(signal.SIGKILL)
            kills += 1
        process.wait()
        parts = os.path.join(folder, "kill.h5.parts")
        if os.path.isdir(parts):
            for name in os.listdir(parts):
                if name.endswith(".h5"):
                    with h5py.File(os.path.join(parts, name), "r") as f:
                        run_group = name[:-3]
                        check(f["runs"][run_group].attrs["status"] == "complete",
                              f"kept part {name} is not complete")
                        check("total" in f["runs"][run_group]["allocation"], f"kept part {name} lacks total")
        if os.path.exists(os.path.join(folder, "kill.h5")):
            break
    result = run(binary, folder, exp, "--quiet")
    check(result.returncode == 0, f"resume after kill: {result.stderr}")
    check(same_results(reference, os.path.join(folder, "kill.h5")),
          "the resumed sweep differs from an uninterrupted one")
    check(not os.path.exists(os.path.join(folder, "kill.h5.parts")), "parts folder left behind")
    print(f"resume after {kills} SIGKILL(s): ok")


def check_interrupt(binary, folder):
    exp = write_experiment(folder, "stop.ini", "stop.h5", rounds=20000)
    process = subprocess.Popen([binary, "run", exp, "--threads", "1", "--quiet"], cwd=folder,
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(0.5)
    process.send_signal(signal.SIGINT)
    _, err = process.communicate(timeout=120)
    if process.returncode == 0:
        print("interrupt: the sweep finished before Ctrl-C arrived")
        return
    # Exit 130 = 128 + SIGINT (README, "Exit codes").
    check(process.returncode == 130, f"Ctrl-C: exit {process.returncode}")
    check("run the same command again" in err, f"Ctrl-C message: {err}")
    check(not os.path.exists(os.path.join(folder, "stop.h5")), "Ctrl-C left a results file")
    result = run(binary, folder, exp, "--quiet", "--json")
    check(result.returncode == 0 and '"already_done"' in result.stdout, f"resume after Ctrl-C: {result.stderr}")


def check_mpi(binary, folder):
    version = subprocess.run([binary, "--version"], capture_output=True, text=True).stdout
    mpirun = shutil.which("mpirun")
    if "MPI" not in version or not mpirun:
        print("MPI: not built with MPI or no mpirun; skipped")
        return
    env = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
               OMPI_MCA_rmaps_base_oversubscribe="1")
    exp = write_experiment(folder, "mpi.ini", "mpi.h5")
    result = subprocess.run([mpirun, "-np", "3", binary, "run", exp, "--quiet"], cwd=folder,
                            capture_output=True, text=True, env=env, timeout=300)
    check(result.returncode == 0, f"mpirun: exit {result.returncode}: {result.stderr[-2000:]}")
    check(same_results(os.path.join(folder, "one.h5"), os.path.join(folder, "mpi.h5")),
          "3 MPI ranks give different allocations than 1 thread")
    print("MPI (3 ranks) equals 1 thread: ok")


BAD = [
    ("unknown axis", "[sweep]\ndynamics.temprature = 0.1, 0.2\n", ["bad.ini:", "temperature"]),
    ("bad axis value", "[sweep]\ndynamics.temperature = 0.1, -1\n", ["bad.ini:", "dynamics.temperature"]),
    ("bad spacing", "[sweep]\ndynamics.temperature = log(0, 1, 3)\n", ["bad.ini:", "> 0"]),
    ("zip of unequal axes", "[sweep]\ndynamics.temperature = 0.1, 0.2\nscenario.agents = 5..7\ncombine = zip\n",
     ["bad.ini:", "equal length"]),
    ("unknown combine", "[sweep]\ncombine = cross\n", ["bad.ini:", "grid or zip"]),
    ("bad replicates", "[sweep]\nreplicates = 0\n", ["bad.ini:", "replicates"]),
    ("bad combination", "[dynamics]\nburn_in = 900\nrounds = 100\n", ["burn_in"]),
]


def check_bad_files(binary, folder):
    for name, text, words in BAD:
        path = os.path.join(folder, "bad.ini")
        with open(path, "w") as handle:
            handle.write("[output]\nfile = bad.h5\n" + text)
        result = run(binary, folder, path)
        lines = [l for l in result.stderr.splitlines() if l.strip()]
        missing = [w for w in words if w not in result.stderr]
        check(result.returncode == 2 and len(lines) == 1 and not missing,
              f"{name}: exit {result.returncode}, stderr {result.stderr.strip()!r}, missing {missing}")
        check(not os.path.exists(os.path.join(folder, "bad.h5")), f"{name}: left a results file")
    # A comment does not change the experiment (its identity is the effective
    # experiment); a different number of rounds does.
    changed = write_experiment(folder, "changed.ini", "one.h5", rounds=201)
    result = run(binary, folder, changed)
    check(result.returncode == 2 and "--restart" in result.stderr, "a changed experiment is refused")
    simulate = subprocess.run([binary, "simulate", "--config", os.path.join(folder, "one.h5.ini")],
                              cwd=folder, capture_output=True, text=True)
    check(simulate.returncode == 2 and "allocsim run" in simulate.stderr,
          f"simulate points a sweep to run: {simulate.stderr}")


def main():
    parser = test_parser()
    parser.add_argument("--seed", type=int, default=int(time.time()))
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    print(f"seed {args.seed}")
    rng = random.Random(args.seed)
    with tempfile.TemporaryDirectory() as folder:
        check_threads_and_summary(binary, folder)
        check_resume_after_kill(binary, folder, rng)
        check_interrupt(binary, folder)
        check_mpi(binary, folder)
        check_bad_files(binary, folder)
    print(f"{len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
