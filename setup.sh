#!/usr/bin/env bash
# Installs the Debian packages allocsim needs (when missing), then configures
# and builds it in Release under build/. Safe to run again: it only does
# what is left to do.
set -euo pipefail
cd "$(dirname "$0")"

packages=(
  g++ make cmake
  libeigen3-dev libboost-program-options-dev libboost-iostreams-dev libboost-filesystem-dev
  libhdf5-dev catch2 libgnuplot-iostream-dev gnuplot-nox liblemon-dev
  libopenmpi-dev openmpi-bin
  python3 python3-numpy python3-scipy python3-h5py python3-statsmodels
  python3-dev pybind11-dev python3-pytest python3-pandas  # the Python module and its tests
  clang libclang-rt-dev libomp-dev  # libFuzzer targets (tests/fuzz/run_fuzzers.sh)
  clang-format  # the formatting check of .ci/run (tools/check_format.sh)
)

missing=()
for package in "${packages[@]}"; do
  if ! dpkg-query -W -f='${Status}' "$package" 2>/dev/null | grep -q "install ok installed"; then
    missing+=("$package")
  fi
done

if ((${#missing[@]})); then
  echo "setup: installing ${missing[*]}" >&2
  sudo_cmd=()
  [ "$(id -u)" -eq 0 ] || sudo_cmd=(sudo)
  "${sudo_cmd[@]}" apt-get update -qq
  DEBIAN_FRONTEND=noninteractive "${sudo_cmd[@]}" apt-get install -y -qq --no-install-recommends \
    "${missing[@]}" >/dev/null
fi

build_dir=${ALLOCSIM_BUILD_DIR:-build}
cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release ${ALLOCSIM_CMAKE_ARGS:-} >/dev/null
cmake --build "$build_dir" -j "$(nproc)"
echo "setup: allocsim is built in $build_dir/" >&2
