"""End-to-end checks of `allocsim analyze` on CSV files: a good run (text and
JSON), and bad input that must give one clear line on stderr naming the
file and what is wrong, with a non-zero exit."""
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

GAINS = "0.9,0.1,0.3\n0.2,0.8,0.4\n0.5,0.3,0.7\n"
COUNTS = "50,10,12\n8,40,15\n11,9,45\n"

# name, files to write over the good ones, extra options, exit code, words of the message
CASES = [
    ("negative entry", {"P.csv": "50,10,12\n8,-4,15\n11,9,45\n"}, [], 2, ["P.csv", "row 2, column 2", "negative"]),
    ("non-finite entry", {"P.csv": "50,10,12\n8,nan,15\n11,9,45\n"}, [], 2, ["P.csv:2", "finite"]),
    ("shape mismatch", {"P.csv": "50,10\n8,40\n11,9\n"}, [], 2, ["P.csv", "3 x 2", "3 x 3"]),
    ("all zero", {"P.csv": "0,0,0\n0,0,0\n0,0,0\n"}, [], 2, ["P.csv", "no positive entry"]),
    ("weight on a forbidden pair", {"A.csv": "1,0,1\n1,1,1\n1,1,1\n"}, ["--access", "A.csv"], 2, ["P.csv", "row 1, column 2", "forbids"]),
    ("missing gains", {}, ["--gains", "nowhere.csv"], 2, ["nowhere.csv"]),
    ("bad confidence", {}, ["--confidence", "1.5"], 2, ["--confidence"]),
    ("unknown link rule", {}, ["--binarize", "loose"], 2, ["loose"]),
    ("run without results file", {}, ["--run", "run-000000"], 2, ["--run"]),
    ("results file missing", None, ["nowhere.h5"], 2, ["nowhere.h5"]),
]


def run(binary, folder, extra, csv=True):
    command = [binary, "analyze"]
    options = {"--allocation": "P.csv", "--gains": "G.csv"} if csv else {}
    flags = []
    k = 0
    while k < len(extra):
        if extra[k] in options and k + 1 < len(extra):
            options[extra[k]] = extra[k + 1]
            k += 2
        elif extra[k].startswith("--") and k + 1 < len(extra):
            flags += extra[k:k + 2]
            k += 2
        else:
            flags.append(extra[k])
            k += 1
    command += [x for kv in options.items() for x in kv] + flags
    return subprocess.run(command, cwd=folder, capture_output=True, text=True)


def write(folder, files):
    for name, text in files.items():
        with open(os.path.join(folder, name), "w") as f:
            f.write(text)


def main():
    parser = test_parser()
    a = parser.parse_args()
    failures = 0
    with tempfile.TemporaryDirectory() as folder:
        write(folder, {"G.csv": GAINS, "P.csv": COUNTS})
        good = run(a.allocsim, folder, [])
        text_ok = good.returncode == 0 and "epsilon" in good.stdout and "Caution:" in good.stdout \
            and "says nothing about cause" in good.stdout
        print(("ok" if text_ok else "FAIL") + ": text report with epsilon and the caution")
        failures += not text_ok
        js = run(a.allocsim, folder, ["--json"])
        try:
            report = json.loads(js.stdout)
            t = report["temperature"]
            json_ok = (t["status"] == "estimated" and t["ci_low"] < t["epsilon"] < t["ci_high"]
                       and report["units"] == 200 and "nodf" in report["structure"]
                       and "total_variation" in report["exact"] and len(js.stdout.splitlines()) == 1)
        except (ValueError, KeyError, TypeError):
            json_ok = False
        print(("ok" if json_ok else "FAIL") + ": one JSON object with temperature, exact, structure")
        failures += not json_ok
        write(folder, {"P.csv": "50,0,12\n0,0,0\n11,0,45\n"})
        dropped = run(a.allocsim, folder, ["--json"])
        drop_ok = dropped.returncode == 0 and "left out" in dropped.stderr \
            and "row" in json.loads(dropped.stdout)["note"]
        print(("ok" if drop_ok else "FAIL") + ": all-zero rows and columns dropped with a note")
        failures += not drop_ok
        for name, files, extra, code, words in CASES:
            write(folder, {"G.csv": GAINS, "P.csv": COUNTS})
            if files:
                write(folder, files)
            result = run(a.allocsim, folder, extra, csv=files is not None)
            lines = result.stderr.strip().splitlines()
            ok = (result.returncode == code and len(lines) == 1
                  and all(w in lines[0] for w in words) and result.stdout == "")
            print(f"{'ok' if ok else 'FAIL'}: {name}: exit {result.returncode}: {result.stderr.strip()}")
            failures += not ok
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
