#!/usr/bin/env bash
# ThreadSanitizer run of the daemon's threads, by hand (not in CI: ~15 min of build on 2 cores).
# Builds with clang -fsanitize=thread in build-tsan/: the threads tests (repairs, checks and
# captures on workers beside the loop, the journal thread, the snapshot writer) and yoked and
# yoke for the end-to-end tests that stop, restart and stream (the stop-signal thread among
# them). Every report is written to build-tsan/reports/. libzmq is not instrumented, so a
# message handed between its threads and ours looks like a race to TSan: a report with a libzmq
# frame in its stacks is listed apart and does not fail the run; any other report does.
#   tools/tsan.sh
set -euo pipefail
cd "$(dirname "$0")/.."
source tools/phase.sh

build_dir="${YOKE_TSAN_BUILD_DIR:-build-tsan}"  # or a tree of your own
reports="$(realpath -m "$build_dir")/reports"

build() {
  CC=clang CXX=clang++ cmake -S . -B "$build_dir" -G Ninja -DCMAKE_BUILD_TYPE=RelWithDebInfo \
    -DCMAKE_CXX_FLAGS_RELWITHDEBINFO="-O1 -g1" -DCMAKE_CXX_FLAGS=-fsanitize=thread \
    -DCMAKE_C_FLAGS=-fsanitize=thread -DCMAKE_EXE_LINKER_FLAGS=-fsanitize=thread \
    -DYOKE_BUILD_BENCH=OFF -DCMAKE_UNITY_BUILD=ON
  cmake --build "$build_dir" -j 2 --target daemon_threads_tests yoked yoke yoke_proto_python
}

run() {
  # The suites of daemon_threads_tests (other daemon.* tests are not built here).
  local threads_suites
  threads_suites="$("$build_dir/tests/daemon/daemon_threads_tests" --gtest_list_tests |
    sed -n 's/^\([A-Za-z]*\)\.$/\1/p' | paste -sd'|')"
  rm -rf "$reports"
  mkdir -p "$reports"
  # One file per process (log_path adds the pid); the tests' own exit codes still count.
  # The sanitizer slows the daemon ~5-15x: the end-to-end tests run their small streams.
  export YOKE_TEST_SCALE=small
  TSAN_OPTIONS="halt_on_error=0 exitcode=0 log_path=$reports/tsan" \
    ctest --test-dir "$build_dir" --output-on-failure -j 2 \
      -R "^(daemon\.(${threads_suites})\.|e2e\.(shutdown|stop_restart|stream|clients|retire)$)"
}

phase "setup" tools/setup.sh
phase "tsan build" build
phase "tsan tests" run

shopt -s nullglob
ours=0 through_libzmq=0
for file in "$reports"/tsan.*; do
  # A file holds the reports of one process, each from "WARNING:" to "SUMMARY:".
  while IFS= read -r -d $'\x1e' report; do
    [[ "$report" == *"WARNING: ThreadSanitizer"* ]] || continue
    if [[ "$report" == *libzmq* ]]; then
      through_libzmq=$((through_libzmq + 1))
    else
      ours=$((ours + 1))
      printf '%s\n' "$report"
    fi
  done < <(awk '/WARNING: ThreadSanitizer/ { printf "\x1e" } { print } END { printf "\x1e" }' "$file")
done
echo "ThreadSanitizer: ${ours} report(s) in yoke's own code, ${through_libzmq} through libzmq" \
     "(uninstrumented; listed in $reports)"
((ours == 0))
