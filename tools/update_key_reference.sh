#!/usr/bin/env bash
# Regenerates docs/experiment-keys.md from the key table (run after changing a key).
set -euo pipefail
cd "$(dirname "$0")/.."
binary=${1:-build/allocsim}
{
  printf '# Experiment keys\n\nEvery key of an experiment file, as `allocsim run --list-keys` prints it\n'
  printf '(generated from the one key table in `experiments/keys.cpp` by\n'
  printf '`tools/update_key_reference.sh`; the test `keys_reference` fails when this\n'
  printf 'page falls behind it).\n\n```text\n'
  "$binary" run --list-keys
  printf '```\n'
} > docs/experiment-keys.md
