"""The command line every test script run by ctest takes (tests/tests.cmake):
--allocsim, the program (made absolute), and --data, the folder of test data."""
import argparse
import os


def test_parser(description=None):
    """An ArgumentParser with --allocsim and --data; add a script's own options to it."""
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--allocsim", required=True, type=os.path.abspath)
    parser.add_argument("--data", required=True)
    return parser
