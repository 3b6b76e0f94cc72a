#!/usr/bin/env python3
"""Results files of `allocsim simulate`, read with h5py (the outside reference).

Runs `allocsim simulate --config tests/data/sim_small.ini` (and variants) in
a temporary folder and checks:
  * every name of the layout (DESIGN.md section 7) is there, with the
    stated shapes and types: root attributes format, format_version,
    tool_version, created_utc, experiment; /runs/run-000000 with every
    parameter, seed and status as attributes (text as str, numbers as
    numbers); scenario/gains, budgets, capacities, access (uint8);
    allocation/snapshots (k x n x m, chunked, compressed, first axis
    unlimited), round_end (k), total (n x m); prices (k x m); analysis;
    summary with one row per run;
  * the datasets agree with each other: total = sum of the snapshots after
    burn-in, each window holds units x rounds-in-window, no flow where
    access is 0 (run timings are attributes, so datasets can be compared);
  * the same seed twice, and 1 versus 2 threads, give identical datasets;
  * a run killed with SIGKILL leaves no file under the final name;
  * bad input gives one line on stderr, a non-zero exit and no file;
  * `allocsim inspect` lists the run and `--json` prints one JSON object.

Prints one summary line; exits non-zero on any failure.
Usage: sim_results_file.py --allocsim PATH --data DIR
"""

import json
import os
import signal
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

FAILURES = []


def check(condition, what):
    if not condition:
        FAILURES.append(what)
        print("FAIL:", what, file=sys.stderr)


def simulate(allocsim, folder, out, *extra, config=None):
    command = [allocsim, "simulate", "--quiet", "--out", out]
    if config:
        command += ["--config", config]
    return subprocess.run(command + list(extra), capture_output=True, text=True, cwd=folder)


def check_layout(path, config_text_keys):
    with h5py.File(path, "r") as f:
        root = f.attrs
        check(root.get("format") == "allocsim-results", "root format attribute")
        for name in ("tool_version", "created_utc", "experiment"):
            check(isinstance(root.get(name), str), f"root attribute {name} is str")
        check(isinstance(root.get("format_version"), (int, np.integer)), "format_version is an integer")
        check("[dynamics]" in root["experiment"] and "temperature = 0.08" in root["experiment"],
              "experiment text holds the given keys")
        run = f["runs/run-000000"]
        attrs = run.attrs
        for key in config_text_keys:
            check(key in attrs, f"run attribute {key}")
        check(attrs.get("status") == "complete", "status is the str 'complete'")
        check(attrs.get("dynamics.rule") == "price", "rule attribute is str")
        check(isinstance(attrs.get("dynamics.temperature"), (float, np.floating))
              and attrs["dynamics.temperature"] == 0.08, "temperature attribute is a number")
        check(int(attrs.get("seed")) == 17, "seed attribute")
        n, m = 9, 12
        check(run["scenario/gains"].shape == (n, m), "scenario/gains shape")
        check(run["scenario/budgets"].shape == (n,), "scenario/budgets shape")
        check(run["scenario/capacities"].shape == (m,), "scenario/capacities shape")
        check(run["scenario/access"].dtype == np.uint8 and run["scenario/access"].shape == (n, m),
              "scenario/access is uint8 n x m")
        snapshots = run["allocation/snapshots"]
        k = 8  # 60 rounds in windows of 8: 7 full windows and one of 4
        check(snapshots.shape == (k, n, m), "allocation/snapshots shape")
        check(snapshots.maxshape[0] is None, "snapshots extendable along the first axis")
        check(snapshots.chunks is not None and snapshots.compression == "gzip",
              "snapshots chunked and compressed")
        round_end = run["allocation/round_end"][...]
        check(list(round_end) == [8, 16, 24, 32, 40, 48, 56, 60], "allocation/round_end")
        check(run["allocation/total"].shape == (n, m), "allocation/total shape")
        check(run["prices"].shape == (k, m), "prices shape")
        check(isinstance(run.get("analysis"), h5py.Group), "analysis group")
        summary = f["summary"]
        check(all(summary[c].shape == (1,) for c in summary), "summary columns have one row")
        check(summary["run"][0].decode() == "run-000000" if isinstance(summary["run"][0], bytes)
              else summary["run"][0] == "run-000000", "summary run column")

        snaps = snapshots[...]
        window_rounds = np.diff(np.concatenate([[0], round_end]))
        check(np.array_equal(snaps.sum(axis=(1, 2)), 3000 * window_rounds),
              "each window holds units x its rounds")
        # burn_in = 24 closes the third window.
        check(np.array_equal(run["allocation/total"][...], snaps[round_end > 24].sum(axis=0)),
              "total = sum of the snapshots after burn-in")
        check(np.all(snaps[:, run["scenario/access"][...] == 0] == 0), "no flow where access is 0")


def datasets_of(path):
    out = {}
    with h5py.File(path, "r") as f:
        def visit(name, obj):
            if isinstance(obj, h5py.Dataset):
                out[name] = obj[...]
        f.visititems(visit)
    return out


def same_datasets(a, b):
    da, db = datasets_of(a), datasets_of(b)
    return da.keys() == db.keys() and all(np.array_equal(da[k], db[k]) for k in da)


def check_kill(allocsim, folder, config):
    final = os.path.join(folder, "killed.h5")
    process = subprocess.Popen([allocsim, "simulate", "--quiet", "--config", config, "--out", final,
                                "--dynamics.rounds", "100000000", "--dynamics.window", "1"],
                               cwd=folder, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 20
    temporary = final + ".tmp-" + str(process.pid)
    while time.time() < deadline and not os.path.exists(temporary):
        time.sleep(0.05)
    time.sleep(0.5)
    check(os.path.exists(temporary), "a running simulation writes under a temporary name")
    process.send_signal(signal.SIGKILL)
    process.wait()
    check(not os.path.exists(final), "SIGKILL leaves no file under the final name")
    if os.path.exists(temporary):
        os.remove(temporary)


def check_bad_inputs(allocsim, folder, config):
    with open(os.path.join(folder, "g23.csv"), "w") as f:
        f.write("1,2,3\n4,5,6\n")
    with open(os.path.join(folder, "b0.csv"), "w") as f:
        f.write("1\n0\n")
    with open(os.path.join(folder, "a0.csv"), "w") as f:
        f.write("1,1,0\n0,0,0\n")
    with open(os.path.join(folder, "typo.ini"), "w") as f:
        f.write("[dynamics]\nrule = price\ntemprature = 0.1\n")
    cases = {
        "temperature 0": (["--dynamics.temperature", "0"], "dynamics.temperature"),
        "negative temperature": (["--dynamics.temperature", "-1"], "dynamics.temperature"),
        "unknown rule": (["--dynamics.rule", "auction"], "dynamics.rule"),
        "unknown gains": (["--scenario.gains", "magic"], "scenario.gains"),
        "unknown option": (["--dynamics.temprature", "1"], "dynamics.temperature"),
        "shape mismatch": (["--scenario.gains", "file", "--scenario.gains_file", "g23.csv",
                            "--scenario.agents", "3", "--scenario.partners", "3"], "g23.csv"),
        "zero budget": (["--scenario.gains", "file", "--scenario.gains_file", "g23.csv",
                         "--scenario.budgets", "file", "--scenario.budgets_file", "b0.csv"], "b0.csv"),
        "agent without partner": (["--scenario.gains", "file", "--scenario.gains_file", "g23.csv",
                                   "--scenario.access", "file", "--scenario.access_file", "a0.csv"],
                                  "no accessible partner"),
        "typo in file": (["--config", "typo.ini"], "typo.ini:3"),
    }
    for name, (arguments, expected) in cases.items():
        out = os.path.join(folder, "bad.h5")
        result = subprocess.run([allocsim, "simulate", "--quiet", "--out", out] + arguments,
                                capture_output=True, text=True, cwd=folder)
        lines = result.stderr.strip().splitlines()
        check(result.returncode != 0, f"bad input ({name}): non-zero exit")
        check(len(lines) == 1 and expected in lines[0],
              f"bad input ({name}): one line naming {expected!r}, got {result.stderr!r}")
        check(not os.path.exists(out), f"bad input ({name}): no output file")
        check(not any(".tmp-" in n for n in os.listdir(folder)), f"bad input ({name}): no temporary file")


def main():
    parser = test_parser()
    args = parser.parse_args()
    allocsim = os.path.abspath(args.allocsim)
    config = os.path.join(os.path.abspath(args.data), "sim_small.ini")

    with tempfile.TemporaryDirectory() as folder:
        first = simulate(allocsim, folder, "a.h5", config=config)
        check(first.returncode == 0, f"simulate exits 0 ({first.stderr.strip()})")
        keys = ["scenario.agents", "scenario.access", "dynamics.rule", "dynamics.temperature",
                "dynamics.units", "dynamics.mean_field", "output.file", "seed", "status"]
        check_layout(os.path.join(folder, "a.h5"), keys)

        # Same file name in separate folders, so that even output.file agrees.
        paths = {}
        for name, extra in (("a", []), ("b", []), ("c", ["--threads", "2"]),
                            ("d", ["--scenario.seed", "18"])):
            os.mkdir(os.path.join(folder, name))
            simulate(allocsim, os.path.join(folder, name), "run.h5", *extra, config=config)
            paths[name] = os.path.join(folder, name, "run.h5")
        check(same_datasets(paths["a"], paths["b"]), "same seed twice gives identical datasets")
        check(same_datasets(paths["a"], paths["c"]), "1 and 2 threads give identical datasets")
        check(not same_datasets(paths["a"], paths["d"]), "another seed gives other datasets")

        listing = subprocess.run([allocsim, "inspect", os.path.join(folder, "a.h5")],
                                 capture_output=True, text=True)
        check(listing.returncode == 0 and "run-000000" in listing.stdout
              and "allocation/snapshots" in listing.stdout and "8 x 9 x 12" in listing.stdout,
              "inspect lists the run and its datasets")
        as_json = subprocess.run([allocsim, "inspect", "--json", os.path.join(folder, "a.h5")],
                                 capture_output=True, text=True)
        try:
            parsed = json.loads(as_json.stdout)
            shape = parsed["runs"]["run-000000"]["datasets"]["allocation/snapshots"]["shape"]
            check(shape == [8, 9, 12], "inspect --json gives the snapshot shape")
            check(parsed["runs"]["run-000000"]["attributes"]["dynamics.rule"] == "price",
                  "inspect --json gives the parameters")
        except (ValueError, KeyError) as error:
            check(False, f"inspect --json prints one JSON object ({error})")
        not_results = subprocess.run([allocsim, "inspect", config], capture_output=True, text=True)
        check(not_results.returncode != 0 and len(not_results.stderr.strip().splitlines()) == 1,
              "inspect of a non-HDF5 file: one line, non-zero exit")

        check_kill(allocsim, folder, config)
        check_bad_inputs(allocsim, folder, config)

    if FAILURES:
        print(f"sim_results_file: {len(FAILURES)} failures")
        return 1
    print("sim_results_file: layout, determinism, kill safety and bad inputs all as specified")
    return 0


if __name__ == "__main__":
    sys.exit(main())
