#!/usr/bin/env bash
# Builds the libFuzzer targets in build-fuzz with clang and runs each for a
# bounded time from its seed corpus (tests/fuzz/corpus/<target>/).
#
#   tests/fuzz/run_fuzzers.sh [SECONDS_PER_TARGET]   (default 60)
#
# New inputs found along the way go to build-fuzz/corpus/<target>/ (the kept
# seeds are never changed). A crash leaves its input in
# build-fuzz/findings/<target>/ and makes the script fail; copy it to
# tests/fuzz/regressions/<target>/ once fixed, where fuzz_replay_test
# replays it in every build. Prints the executions of each target.
set -euo pipefail
cd "$(dirname "$0")/../.."
seconds=${1:-60}
build=${ALLOCSIM_FUZZ_BUILD_DIR:-build-fuzz}
targets=(csv_reader experiment_file)

cxx=$(command -v clang++-14 || command -v clang++ || true)
cc=$(command -v clang-14 || command -v clang || true)
if [ -z "$cxx" ] || [ -z "$cc" ]; then
  echo "run_fuzzers: clang is not installed (apt-get install clang libclang-rt-dev libomp-dev)" >&2
  exit 2
fi

cmake -S . -B "$build" -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_COMPILER="$cxx" \
  -DCMAKE_C_COMPILER="$cc" -DALLOCSIM_FUZZ=ON -DBUILD_TESTING=OFF -DALLOCSIM_WITH_MPI=OFF \
  >/dev/null
cmake --build "$build" -j 2 --target "${targets[@]/%/_fuzz}" >/dev/null

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
status=0
for target in "${targets[@]}"; do
  corpus="$build/corpus/$target"
  findings="$build/findings/$target"
  mkdir -p "$corpus" "$findings"
  log="$work/$target.log"
  start=$(date +%s)
  if TMPDIR="$work" ASAN_OPTIONS=halt_on_error=1:detect_leaks=1 \
     UBSAN_OPTIONS=halt_on_error=1:print_stacktrace=1 \
     "$build/tests/fuzz/${target}_fuzz" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
       -print_final_stats=1 -dict="tests/fuzz/$target.dict" -artifact_prefix="$findings/" \
       "$corpus" "tests/fuzz/corpus/$target" >"$log" 2>&1; then
    result=clean
  else
    result="FAILED (input in $findings/)"
    status=1
    grep -E "ERROR|SUMMARY|_fuzz: |runtime error" "$log" | head -20 >&2 || true
  fi
  runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log")
  echo "run_fuzzers: $target: ${runs:-0} executions in $(($(date +%s) - start)) s, $result"
done
exit "$status"
