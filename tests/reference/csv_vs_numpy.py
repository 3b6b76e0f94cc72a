#!/usr/bin/python3
"""The CSV reader and writer (core/csv*) against numpy and Python's csv module.

Through tests/reference/csv_echo.cpp (read with read_matrix_csv, write with
write_matrix_csv):
1. Random doubles of every magnitude (random bit patterns: subnormals,
   signed zeros and the extremes included) written by numpy.savetxt
   ('%.17g') and by Python's repr read back bit for bit: numpy.loadtxt reads
   allocsim's output to the same 64-bit patterns.
2. allocsim writes the shortest text that reads back: no number is longer
   than the more compact of fixed and scientific notation of the digits of
   Python's repr, which are the fewest that round-trip (Python
   documentation, "Floating Point Arithmetic: Issues and Limitations"; repr
   of float since 3.1).
3. Tables as R's write.csv writes them (quoted empty corner, quoted row and
   column names, bare numbers, NA; R documentation of write.table) and as
   pandas' DataFrame.to_csv writes them (empty unquoted corner, index and
   column names bare; pandas documentation of to_csv) keep their labels;
   Python's csv module reads allocsim's output back. With pandas installed,
   pandas writes and reads the files itself (skipped, with a note, when not).
4. Missing cells: refused naming file, line and column by default; read as 0
   with the option, checked with numpy.loadtxt.
"""
import argparse
import csv
import os
from decimal import Decimal
import subprocess
import sys
import tempfile

import numpy as np

SEED = 20261202


def echo(tool, source, target, *flags):
    return subprocess.run([tool, source, target, *flags], capture_output=True, text=True)


def random_doubles(rng, rows, cols):
    bits = rng.integers(0, 2**64, size=rows * cols, dtype=np.uint64, endpoint=False)
    values = bits.view(np.float64)
    finite = values[np.isfinite(values)]
    specials = np.array([0.0, -0.0, 5e-324, -5e-324, 2.2250738585072014e-308,
                         1.7976931348623157e308, -1.7976931348623157e308, 0.1, 1 / 3, 1e22,
                         1e23, 123456789012345680.0, 9007199254740993.0, 0.5, 100.0])
    values = np.concatenate([specials, finite, rng.uniform(-2, 0, size=rows * cols)])
    return values[: rows * cols].reshape(rows, cols)


def same_bits(a, b):
    return a.shape == b.shape and np.array_equal(a.view(np.uint64), b.view(np.uint64))


def shortest_length(value):
    """Characters of the shortest text that reads back to `value`, in the
    more compact of fixed and scientific notation (the definition of
    std::to_chars without a format), from the digits of Python's repr."""
    if value == 0:
        return 2 if repr(value).startswith("-") else 1
    sign, digits, exponent = Decimal(repr(value)).normalize().as_tuple()
    k = len(digits)
    point = k + exponent  # digits before the decimal point
    if exponent >= 0:
        fixed = k + exponent  # trailing zeros, no point
    elif point > 0:
        fixed = k + 1
    else:
        fixed = 2 + (-point) + k  # 0.000ddd
    scientific = k + (1 if k > 1 else 0) + 2 + max(2, len(str(abs(point - 1))))
    return sign + min(fixed, scientific)


def check_numbers(tool, folder, failures):
    rng = np.random.default_rng(SEED)
    values = random_doubles(rng, 120, 90)
    for name, writer in [
        ("savetxt %.17g", lambda p: np.savetxt(p, values, fmt="%.17g", delimiter=",")),
        ("python repr", lambda p: open(p, "w").write(
            "".join(",".join(repr(float(x)) for x in row) + "\n" for row in values))),
    ]:
        source, target = os.path.join(folder, "in.csv"), os.path.join(folder, "out.csv")
        writer(source)
        result = echo(tool, source, target)
        if result.returncode != 0:
            failures.append(f"{name}: csv_echo failed: {result.stderr.strip()}")
            continue
        back = np.loadtxt(target, delimiter=",", dtype=np.float64, ndmin=2)
        if not same_bits(back, values):
            wrong = int(np.sum(back.view(np.uint64) != values.view(np.uint64))) if back.shape == values.shape else -1
            failures.append(f"{name}: numpy.loadtxt reads allocsim's file to other bits ({wrong} cells)")
        with open(target) as f:
            cells = [cell for line in f for cell in line.rstrip("\n").split(",")]
        longer = [(c, repr(float(v))) for c, v in zip(cells, values.ravel())
                  if len(c) > shortest_length(float(v))]
        if longer:
            failures.append(f"{name}: {len(longer)} numbers are not the shortest text, e.g. {longer[:3]}")
        print(f"{name}: {values.size} doubles, seed {SEED}: read and written back bit for bit, "
              f"{len(cells) - len(longer)} of {len(cells)} shortest")


def read_with_csv_module(path):
    with open(path, newline="") as f:
        rows = [row for row in csv.reader(f)]
    return rows


def check_table(tool, folder, name, text, rows, columns, values, failures):
    source, target = os.path.join(folder, "table.csv"), os.path.join(folder, "table_out.csv")
    with open(source, "w", newline="") as f:
        f.write(text)
    result = echo(tool, source, target)
    if result.returncode != 0:
        failures.append(f"{name}: refused: {result.stderr.strip()}")
        return
    table = read_with_csv_module(target)
    got_columns, got_rows = table[0][1:], [row[0] for row in table[1:]]
    got_values = np.array([[float(x) for x in row[1:]] for row in table[1:]])
    if got_columns != columns or got_rows != rows:
        failures.append(f"{name}: labels {got_rows} x {got_columns}, expected {rows} x {columns}")
    elif not same_bits(got_values, np.asarray(values, dtype=np.float64)):
        failures.append(f"{name}: values differ:\n{got_values}")
    else:
        print(f"{name}: read as {len(rows)} x {len(columns)} with its labels")


def check_tables(tool, folder, failures):
    # R: write.csv(m) with rownames "1", "2", "NA" (Namibia) and colnames a, "b c", 1990.
    r_text = '"","a","b c","1990"\n"1",0.5,1e-300,3\n"2",4,-0,7\n"NA",1,2,3\n'
    check_table(tool, folder, "R write.csv", r_text, ["1", "2", "NA"], ["a", "b c", "1990"],
                [[0.5, 1e-300, 3], [4, -0.0, 7], [1, 2, 3]], failures)
    # pandas: DataFrame(P).to_csv() (unnamed index, numbered columns), and named ones.
    check_table(tool, folder, "pandas to_csv, numbered", ",0,1,2\n0,0.25,1.0,2.5\n1,3.0,4.0,5.0\n",
                ["0", "1"], ["0", "1", "2"], [[0.25, 1, 2.5], [3, 4, 5]], failures)
    check_table(tool, folder, "pandas to_csv, named", ",bee,fly\nclover,3,0\nthyme,1,2\n",
                ["clover", "thyme"], ["bee", "fly"], [[3, 0], [1, 2]], failures)
    try:
        import pandas as pd
    except ImportError:
        print("pandas not installed: the tables above were written by hand after pandas' documented format")
        return
    rng = np.random.default_rng(SEED + 1)
    frames = {
        "pandas itself, numbered": pd.DataFrame(rng.uniform(0, 1, size=(4, 3))),
        "pandas itself, named": pd.DataFrame(rng.uniform(0, 1e6, size=(3, 2)), index=["x", "y", "z"],
                                             columns=["2019", "2020"]),
    }
    for name, frame in frames.items():
        source, target = os.path.join(folder, "frame.csv"), os.path.join(folder, "frame_out.csv")
        frame.to_csv(source)
        result = echo(tool, source, target)
        if result.returncode != 0:
            failures.append(f"{name}: refused: {result.stderr.strip()}")
            continue
        back = pd.read_csv(target, index_col=0, float_precision="round_trip")
        if not same_bits(back.to_numpy(dtype=np.float64), frame.to_numpy(dtype=np.float64)):
            failures.append(f"{name}: values differ after allocsim and pandas.read_csv")
        elif [str(x) for x in back.columns] != [str(x) for x in frame.columns] or \
                [str(x) for x in back.index] != [str(x) for x in frame.index]:
            failures.append(f"{name}: labels differ: {list(back.index)} x {list(back.columns)}")
        else:
            print(f"{name}: to_csv, allocsim, read_csv: same labels and bits")


def check_missing(tool, folder, failures):
    source, target = os.path.join(folder, "missing.csv"), os.path.join(folder, "missing_out.csv")
    with open(source, "w") as f:
        f.write("1,2,3\n4,NA,6\n,8,9\n")
    refused = echo(tool, source, target)
    if refused.returncode != 2 or f"{source}:2: column 2 holds NA" not in refused.stderr:
        failures.append(f"NA not refused as expected: exit {refused.returncode}, {refused.stderr.strip()}")
    if os.path.exists(target):
        failures.append("an output was written for a refused input")
    zero = echo(tool, source, target, "--missing-zero")
    if zero.returncode != 0:
        failures.append(f"--missing-zero refused: {zero.stderr.strip()}")
        return
    expected = np.loadtxt(source, delimiter=",", converters={k: lambda s: float(s) if s.strip() not in
                                                             (b"", b"NA", "", "NA") else 0.0
                                                             for k in range(3)})
    if not same_bits(np.loadtxt(target, delimiter=","), expected):
        failures.append("missing cells did not read as 0")
    else:
        print("missing cells: refused naming the cell, read as 0 when asked (numpy.loadtxt agrees)")


def main():
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--allocsim")
    parser.add_argument("--data")
    parser.add_argument("--echo", required=True, help="the csv_echo program")
    args = parser.parse_args()
    failures = []
    with tempfile.TemporaryDirectory() as folder:
        check_numbers(args.echo, folder, failures)
        check_tables(args.echo, folder, failures)
        check_missing(args.echo, folder, failures)
    for failure in failures:
        print("FAILED:", failure)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
