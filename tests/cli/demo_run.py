"""End-to-end check of `allocsim demo`: in an empty folder it succeeds, every
file it announces exists (figures are valid PNGs, the results file opens
with h5py), and a second demo into the same folder is refused."""
import os
import subprocess
import sys
import tempfile

import h5py

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def main():
    parser = test_parser()
    args = parser.parse_args()
    binary = os.path.abspath(args.allocsim)
    failures = []
    with tempfile.TemporaryDirectory() as folder:
        run = subprocess.run([binary, "demo", "--out-dir", "out"], cwd=folder, capture_output=True,
                             text=True, timeout=600)
        if run.returncode != 0:
            print("FAIL demo exit", run.returncode, run.stderr)
            return 1
        announced = [line.split()[0] for line in run.stdout.split("Files:")[1].splitlines()
                     if line.startswith("  ")]
        for name in announced:
            path = os.path.join(folder, name)
            if not os.path.isfile(path) or os.path.getsize(path) == 0:
                failures.append(f"announced {name} is missing or empty")
            elif name.endswith(".png"):
                with open(path, "rb") as handle:
                    if handle.read(8) != PNG_SIGNATURE:
                        failures.append(f"{name} is not a PNG")
        figures = [n for n in announced if n.endswith(".png")]
        if len(figures) < 5:
            failures.append(f"only {len(figures)} figures announced")
        with h5py.File(os.path.join(folder, "out", "demo.h5"), "r") as f:
            if len(f["runs"]) != len(f["summary"]["run"]):
                failures.append("summary rows differ from runs")
            if "epsilon" not in f["summary"]:
                failures.append("the summary has no temperature estimates")
        for words in ("Temperature:", "Nestedness", "curveball", "model-based summary"):
            if words not in run.stdout:
                failures.append(f"the report does not say '{words}'")
        again = subprocess.run([binary, "demo", "--out-dir", "out"], cwd=folder,
                               capture_output=True, text=True)
        if again.returncode != 2 or "not empty" not in again.stderr:
            failures.append(f"a second demo into the same folder: exit {again.returncode}")
    for failure in failures:
        print("FAIL", failure)
    print(f"demo: {len(announced)} files announced, {len(failures)} failures")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
