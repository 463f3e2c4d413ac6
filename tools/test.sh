#!/usr/bin/env bash
# Sets up the machine, builds yoke (Release) and runs every test suite under CTest.
#   tools/test.sh            # build in build/ and test
#   tools/test.sh --sanitize # the same with AddressSanitizer + UBSan, in build-sanitize/
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir=build
cmake_args=(-G Ninja -DCMAKE_BUILD_TYPE=Release)
if [[ "${1:-}" == "--sanitize" ]]; then
  build_dir=build-sanitize
  cmake_args=(-G Ninja -DCMAKE_BUILD_TYPE=RelWithDebInfo -DYOKE_SANITIZE=ON -DYOKE_BUILD_BENCH=OFF)
  export ASAN_OPTIONS=detect_leaks=1:abort_on_error=1
  export UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1
  export YOKE_TEST_SCALE=small   # sanitizers are ~5x slower: oracle sweeps run fewer seeds
fi

tools/setup.sh
cmake -S . -B "$build_dir" "${cmake_args[@]}"
cmake --build "$build_dir" -j 2
ctest --test-dir "$build_dir" --output-on-failure -j 2
