"""The robustness suite of allocsim: every command tried with outputs that
must not be clobbered, sweeps that must not be mixed, inputs that must be
refused up front, a full disk, signals and edge numbers. See harness.py.

usage: robustness.py --allocsim BIN --data tests/data [--group G ...] [--match TEXT] [--list]
"""
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import cases_inputs  # noqa: E402,F401  (registers its cases)
import cases_outputs  # noqa: E402,F401
import cases_sweeps  # noqa: E402,F401
from harness import main  # noqa: E402

if __name__ == "__main__":
    sys.exit(main(None))
