#!/usr/bin/env bash
# Fails (exit 1, naming the files) when a C++ source of the project differs
# from what clang-format makes of it with the committed .clang-format.
# Usage: tools/check_format.sh        (fix with: tools/check_format.sh --fix)
set -euo pipefail
cd "$(dirname "$0")/.."
mapfile -t sources < <(find analysis bench cli core experiments include plots python results sim tests \
  -type f \( -name '*.cpp' -o -name '*.hpp' -o -name '*.h' \) | sort)
if [ "${1:-}" = "--fix" ]; then
  clang-format -i "${sources[@]}"
  exit 0
fi
if ! clang-format --dry-run -Werror "${sources[@]}" 2> build-format.log; then
  echo "not clang-formatted (run tools/check_format.sh --fix):" >&2
  grep -o '^[^:]*:[0-9]*:[0-9]*: error' build-format.log | cut -d: -f1 | sort -u >&2
  rm -f build-format.log
  exit 1
fi
rm -f build-format.log
echo "${#sources[@]} sources clang-formatted"
