"""End-to-end checks of `allocsim analyze` on field matrices: labels matched
across files (shuffled files give bit-identical results, differing label
sets are refused naming them), counts and shares told apart (the same
matrix read as shares on N units gives the counts' epsilon and interval),
gains optional or uninformative (exit 0, status said), labelled exports,
and bad input refused with one line naming the file."""
import csv
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402

RELATIVE = 1e-8  # counts vs shares: the shares file holds c/N rounded to doubles

failures = 0


def check(ok, what):
    global failures
    print(("ok" if ok else "FAIL") + ": " + what)
    failures += not ok


def write(path, values, rows=None, cols=None, fmt=repr):
    with open(path, "w") as f:
        if cols is not None:
            f.write(("," if rows is not None else "") + ",".join(cols) + "\n")
        for i, row in enumerate(values):
            cells = [fmt(float(v)) if fmt is repr else fmt(v) for v in row]
            f.write((rows[i] + "," if rows is not None else "") + ",".join(cells) + "\n")


def analyze(binary, *args):
    return subprocess.run([binary, "analyze", *args], capture_output=True, text=True)


def report(binary, *args):
    out = analyze(binary, *args, "--json")
    if out.returncode != 0:
        print(out.stderr)
        return None
    return json.loads(out.stdout)


def one_line_error(result, code, words):
    lines = result.stderr.strip().splitlines()
    return (result.returncode == code and len(lines) == 1 and all(w in lines[0] for w in words)
            and result.stdout == "")


def main():
    parser = test_parser()
    parser.add_argument("--seed", type=int, default=7)
    a = parser.parse_args()
    binary = a.allocsim
    rng = np.random.default_rng(a.seed)
    print(f"seed {a.seed}")
    n, m = 7, 9
    rows = [f"plant {i}" for i in range(n)]
    cols = [f"bee {j}" for j in range(m)]
    gains = rng.normal(size=(n, m))
    plan = np.exp(gains / 0.6)
    counts = rng.multinomial(3000, (plan / plan.sum()).ravel()).reshape(n, m)
    counts[2, :] = 0  # an all-zero row, left out
    with tempfile.TemporaryDirectory() as d:
        P, G, S = (os.path.join(d, x) for x in ("P.csv", "G.csv", "S.csv"))
        write(P, counts, rows, cols, fmt=lambda v: str(int(v)))
        write(G, gains, rows, cols)
        aligned = report(binary, "--allocation", P, "--gains", G)

        # Labels are data: shuffled rows and columns (labels kept) give bit-identical results.
        r, c = rng.permutation(n), rng.permutation(m)
        write(S, gains[r][:, c], [rows[k] for k in r], [cols[k] for k in c])
        shuffled = report(binary, "--allocation", P, "--gains", S)
        same = aligned is not None and shuffled is not None
        if same:
            matching = shuffled.pop("matching"), aligned.pop("matching")
            same = json.dumps(aligned) == json.dumps(shuffled) and "reordered" in matching[0][0]
        check(same, "gains with shuffled labelled rows and columns give bit-identical results")

        # Label sets that differ are refused, naming the labels.
        write(S, gains, rows[:-1] + ["plant X"], cols)
        check(one_line_error(analyze(binary, "--allocation", P, "--gains", S), 2,
                             ["S.csv", "'plant X'", "'plant 6'"]),
              "differing row labels exit 2 naming both labels")
        write(S, np.vstack([gains, gains[:1]]), rows + ["plant 7"], cols)
        check(one_line_error(analyze(binary, "--allocation", P, "--gains", S), 2,
                             ["S.csv", "'plant 7'"]), "a gains file with an extra labelled row exits 2")
        write(S, np.vstack([gains, gains[:1]]))
        check(one_line_error(analyze(binary, "--allocation", P, "--gains", S), 2,
                             ["S.csv", "8 x 9", "7 x 9"]), "a gains file with an extra row exits 2")
        write(S, counts, rows[:-1] + ["plant 0"], cols, fmt=lambda v: str(int(v)))
        check(one_line_error(analyze(binary, "--allocation", S), 2, ["S.csv", "'plant 0'"]),
              "a label duplicated within a file exits 2")

        # Only one file labelled: matched by position, and said.
        write(S, gains)
        text = analyze(binary, "--allocation", P, "--gains", S)
        check(text.returncode == 0 and "matched by position (only" in text.stdout,
              "a gains file without labels is matched by position, and the report says so")

        # Counts versus shares on N units.
        N = int(counts.sum())
        write(S, counts / N, rows, cols)
        as_counts = aligned["temperature"]
        shares = report(binary, "--allocation", S, "--gains", G, "--values", "shares", "--units", str(N))
        t = shares["temperature"] if shares else {}
        close = lambda x, y: abs(x - y) <= RELATIVE * abs(y)
        check(shares is not None and all(close(t[k], as_counts[k]) for k in ("epsilon", "ci_low", "ci_high", "stderr"))
              and shares["values"]["reading"] == "shares" and shares["units"] == N,
              f"shares on N = {N} units give the counts' epsilon and interval "
              f"({t.get('epsilon')} vs {as_counts['epsilon']})")
        bare = report(binary, "--allocation", S, "--gains", G)
        check(bare is not None and bare["units"] is None and bare["temperature"]["ci_low"] is None
              and bare["temperature"]["status"] == "estimated", "shares without --units: no interval")
        check(one_line_error(analyze(binary, "--allocation", S, "--values", "counts"), 2,
                             ["S.csv", "whole"]), "--values counts on fractions exits 2")
        money = counts * 1234567
        write(S, money, rows, cols, fmt=lambda v: str(int(v)))
        text = analyze(binary, "--allocation", S, "--gains", G)
        check(text.returncode == 0 and "warning:" in text.stdout and "--values shares" in text.stdout,
              "money-like whole numbers are read as counts with a warning naming --values shares")
        as_shares = report(binary, "--allocation", S, "--gains", G, "--values", "shares")
        check(as_shares is not None and "warning" not in as_shares["values"]
              and as_shares["temperature"]["ci_low"] is None
              and close(as_shares["temperature"]["epsilon"], as_counts["epsilon"]),
              "--values shares reads them as shares: same epsilon, no interval, no warning")

        # Missing cells: an error naming the cell, or zero with --missing zero.
        with open(S, "w") as f:
            f.write(",a,b,c\nx,5,NA,1\ny,4,2,\nz,1,1,1\n")
        check(one_line_error(analyze(binary, "--allocation", S), 2, ["S.csv"]),
              "NA and empty cells exit 2 by default")
        zero = report(binary, "--allocation", S, "--missing", "zero")
        check(zero is not None and zero["structure"]["connectance"] == 7 / 9,
              "--missing zero reads NA and empty cells as 0")
        with open(S, "w") as f:
            f.write("a;b\n1;2\n")
        check(one_line_error(analyze(binary, "--allocation", S), 2, ["S.csv", "semicolon"]),
              "a semicolon-separated file exits 2 naming the separator")

        # Gains optional, or uninformative: exit 0, everything else reported.
        none = report(binary, "--allocation", P)
        check(none is not None and none["temperature"]["status"] == "no_gains"
              and none["exact"] is None and none["structure"]["nodf"] == aligned["structure"]["nodf"]
              and none["left_out"]["agents"] == ["plant 2"] and none["agents"] == n - 1,
              "without gains: status no_gains, structure as with gains, the empty row left out by label")
        for name, g in (("additive", np.add.outer(np.arange(n), np.arange(m) * 0.5)),
                        ("constant", np.full((n, m), 2.0))):
            write(S, g, rows, cols)
            out = report(binary, "--allocation", P, "--gains", S)
            check(out is not None and out["temperature"]["status"] == "not_identified"
                  and name.replace("constant", "same") in out["temperature"]["message"]
                  and out["structure"]["nodf"] == aligned["structure"]["nodf"],
                  f"{name} gains: exit 0, temperature not identified with the reason")

        # Labelled exports.
        D = os.path.join(d, "exports")
        out = analyze(binary, "--allocation", P, "--gains", G, "--nulls", "curveball",
                      "--null-samples", "30", "--export-dir", D)
        names = sorted(os.listdir(D)) if os.path.isdir(D) else []
        check(out.returncode == 0 and names == sorted(
            ["matrix_nested.csv", "links_nested.csv", "agents.csv", "partners.csv", "left_out.csv",
             "coupling_exact.csv", "coupling_entropic.csv", "null_comparison.csv"]),
              f"exports written: {names}")
        with open(os.path.join(D, "matrix_nested.csv")) as f:
            table = list(csv.reader(f))
        exported = {(row[0], col): float(v) for row in table[1:] for col, v in zip(table[0][1:], row[1:])}
        degrees = [sum(float(v) > 0 for v in row[1:]) for row in table[1:]]
        check(all(exported[(rows[i], cols[j])] == counts[i, j] for i in range(n) if i != 2 for j in range(m))
              and degrees == sorted(degrees, reverse=True) and len(table) == n,
              "matrix_nested.csv holds the analysed cells under their labels, rows by decreasing degree")
        with open(os.path.join(D, "agents.csv")) as f:
            agents = list(csv.DictReader(f))
        check([x["label"] for x in agents] == [e["label"] for e in aligned["orderings"]["agents"]]
              and list(agents[0]) == ["label", "rank", "degree", "fitness", "eci", "eci_rank", "total"],
              "agents.csv lists the Fitness-Complexity ordering by label")
        with open(os.path.join(D, "coupling_exact.csv")) as f:
            exact = np.array([[float(v) for v in row[1:]] for row in list(csv.reader(f))[1:]])
        check(abs(exact.sum() - N) < 1e-6 * N and (exact > 1e-9).sum() <= (n - 1) + m - 1,
              "coupling_exact.csv is a forest-sized plan in the allocation's units")

        # --save: a results file that analyze, inspect and plot read like a simulated run.
        H = os.path.join(d, "obs.h5")
        saved = report(binary, "--allocation", P, "--gains", G, "--nulls", "curveball",
                       "--null-samples", "30", "--save", H)
        again = report(binary, H, "--nulls", "curveball", "--null-samples", "30")
        differing = [k for k in (saved or {}) if k not in ("allocation", "matching", "note", "run")
                     and saved[k] != (again or {}).get(k)]
        check(saved is not None and again is not None and not differing,
              f"analyze obs.h5 reproduces the CSV analysis (differing: {differing})")
        inspect = subprocess.run([binary, "inspect", H], capture_output=True, text=True)
        check(inspect.returncode == 0 and "labels/agents" in inspect.stdout
              and "scenario/gains" in inspect.stdout, "inspect lists the labels and gains of obs.h5")
        F = os.path.join(d, "figures")
        plot = subprocess.run([binary, "plot", H, "--out-dir", F], capture_output=True, text=True)
        expected = ["run-000000-allocations.png", "run-000000-links.png", "run-000000-nulls.png"]
        sizes = [os.path.getsize(os.path.join(F, x)) if os.path.exists(os.path.join(F, x)) else 0
                 for x in expected]
        check(plot.returncode == 0 and all(size > 10000 for size in sizes),
              f"plot obs.h5 draws the observed matrix, its links and its null distribution {sizes}")
        bad = subprocess.run([binary, "analyze", "--allocation", S, "--values", "sharez", "--save",
                              os.path.join(d, "never.h5")], capture_output=True, text=True)
        check(bad.returncode == 2 and not os.path.exists(os.path.join(d, "never.h5")),
              "bad input leaves no results file behind")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
