"""Kill-and-resume: a tiny sweep is killed (SIGKILL) at random moments across
its whole life, the merge included, and finished by rerunning the same
command (killed again at random while it resumes). Every trial's results
file must equal an uninterrupted run's in every dataset and every attribute
(read with h5py, the outside reference), apart from the creation time and
the measured seconds.

usage: kill_resume.py --allocsim BIN --data DIR [--trials N] [--seed S]
"""
import argparse
import os
import random
import shutil
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np

EXPERIMENT = """[scenario]
agents = 12
partners = 9
gains = random
[dynamics]
rule = price
rounds = 150
units = 4000
burn_in = 20
window = 10
[analysis]
enabled = true
[sweep]
dynamics.temperature = 0.05, 0.2, 0.8
replicates = 2
[output]
file = out.h5
"""
# Attributes that differ between two correct runs: wall-clock times.
VARYING = {"created_utc", "seconds"}


def flatten(path):
    """Every dataset and attribute of a results file, by path."""
    items = {}
    with h5py.File(path, "r") as f:
        def visit(name, obj):
            for key, value in obj.attrs.items():
                if key not in VARYING:
                    items[f"{name}@{key}"] = value
            if isinstance(obj, h5py.Dataset):
                items[name] = obj[()]
        visit("/", f)
        f.visititems(visit)
    return items


def same(a, b):
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        a, b = np.asarray(a), np.asarray(b)
        if a.shape != b.shape or a.dtype.kind != b.dtype.kind:
            return False
        if a.dtype.kind == "f":
            return np.array_equal(a, b, equal_nan=True)
        return np.array_equal(a, b)
    if isinstance(a, float) and isinstance(b, float) and np.isnan(a) and np.isnan(b):
        return True
    return a == b


def differences(reference, other):
    found = []
    for key in sorted(set(reference) | set(other)):
        if key not in other:
            found.append(f"missing {key}")
        elif key not in reference:
            found.append(f"extra {key}")
        elif not same(reference[key], other[key]):
            found.append(f"differs {key}")
    return found


def run(binary, folder, timeout=300):
    return subprocess.run([binary, "run", "e.ini", "--quiet"], cwd=folder, capture_output=True,
                          text=True, timeout=timeout)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--allocsim", required=True)
    parser.add_argument("--data", required=True)
    parser.add_argument("--trials", type=int, default=32)
    parser.add_argument("--seed", type=int, default=int(time.time()) % 100000)
    args = parser.parse_args()
    rng = random.Random(args.seed)
    print(f"seed {args.seed} (pass --seed {args.seed} to repeat)")
    root = tempfile.mkdtemp(prefix="allocsim-kill-")
    failures = []
    try:
        reference_dir = os.path.join(root, "reference")
        os.makedirs(reference_dir)
        with open(os.path.join(reference_dir, "e.ini"), "w") as f:
            f.write(EXPERIMENT)
        started = time.time()
        r = run(args.allocsim, reference_dir)
        duration = time.time() - started
        if r.returncode != 0:
            print("FAIL the uninterrupted run:", r.stderr)
            return 1
        reference = flatten(os.path.join(reference_dir, "out.h5"))
        print(f"uninterrupted sweep: {duration:.2f} s, {len(reference)} datasets and attributes")
        kills_in_merge = 0
        for trial in range(args.trials):
            folder = os.path.join(root, f"trial-{trial}")
            os.makedirs(folder)
            shutil.copy(os.path.join(reference_dir, "e.ini"), folder)
            kills = []
            for attempt in range(rng.randint(1, 3)):
                if os.path.exists(os.path.join(folder, "out.h5")):
                    break
                p = subprocess.Popen([args.allocsim, "run", "e.ini", "--quiet",
                                      "--threads", str(rng.choice([1, 2]))], cwd=folder,
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
                if trial % 4 == 3:
                    # Every fourth trial aims at the merge: kill once its temporary file appears.
                    end = time.time() + 60
                    while time.time() < end and p.poll() is None:
                        if any(n.startswith("out.h5.tmp-") for n in os.listdir(folder)):
                            time.sleep(rng.uniform(0, 0.01))
                            break
                        time.sleep(0.0005)
                    moment = "merge"
                else:
                    delay = rng.uniform(0, duration * 1.1)
                    time.sleep(delay)
                    moment = f"{delay:.3f} s"
                merging = any(n.startswith("out.h5.tmp-") for n in os.listdir(folder))
                p.kill()
                p.wait()
                kills_in_merge += merging
                kills.append(moment + (" (in the merge)" if merging else ""))
            r = run(args.allocsim, folder)
            path = os.path.join(folder, "out.h5")
            problems = []
            if r.returncode != 0:
                problems.append(f"resume exit {r.returncode}: {r.stderr.strip()[-300:]}")
            elif not os.path.exists(path):
                problems.append("no results file after the resume")
            else:
                problems = differences(reference, flatten(path))
                leftovers = sorted(n for n in os.listdir(folder) if n not in ("e.ini", "out.h5"))
                if leftovers:
                    problems.append(f"left behind: {leftovers}")
            status = "ok  " if not problems else "FAIL"
            print(f"{status} trial {trial}: killed at {', '.join(kills) or 'never'}")
            for problem in problems[:8]:
                print(f"     {problem}")
            if problems:
                failures.append(trial)
            shutil.rmtree(folder, ignore_errors=True)
        print(f"\n{args.trials} trials, {len(failures)} failed, {kills_in_merge} kills during the merge")
        if kills_in_merge == 0:
            print("FAIL no kill landed in the merge")
            return 1
    finally:
        shutil.rmtree(root, ignore_errors=True)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
