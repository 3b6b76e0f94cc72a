"""The key reference in docs/experiment-keys.md is the program's own
`allocsim run --list-keys`, so the documentation cannot fall behind the key
table."""
import os
import subprocess
import sys

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "support"))
from test_cli import test_parser  # noqa: E402


def main():
    parser = test_parser()
    args = parser.parse_args()
    page = os.path.join(os.path.dirname(os.path.abspath(args.data)), "..", "docs", "experiment-keys.md")
    text = open(page).read()
    block = text.split("```text\n", 1)[1].rsplit("```", 1)[0]
    listed = subprocess.run([args.allocsim, "run", "--list-keys"], capture_output=True, text=True,
                            check=True).stdout
    if block != listed:
        print("docs/experiment-keys.md differs from `allocsim run --list-keys`; regenerate it "
              "with tools/update_key_reference.sh")
        return 1
    print(f"docs/experiment-keys.md matches --list-keys ({listed.count('--')} keys)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
