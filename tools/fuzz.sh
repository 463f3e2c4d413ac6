#!/usr/bin/env bash
# Builds the libFuzzer targets with clang (ASan + UBSan, in build-fuzz/) and fuzzes for SECONDS
# in all (default 60): two thirds on ingest_fuzz (the daemon's ingest and query path), one third
# on snapshot_fuzz (snapshot files and engine states). Exits non-zero on a crash, a sanitizer
# report or a broken invariant; the input that did it is kept in build-fuzz/artifacts/.
#   tools/fuzz.sh [SECONDS]
# Each target starts from a scratch copy of its seeds (tests/fuzz/corpus/TARGET), so what the
# fuzzer adds never lands in the repository. Inputs that once failed
# (tests/fuzz/regressions/TARGET/*.bin) are replayed first.
set -euo pipefail
cd "$(dirname "$0")/.."
source tools/phase.sh

seconds="${1:-60}"
build_dir=build-fuzz

build() {
  # -O2 for speed of the fuzzed code; line tables are enough for the sanitizers' stack traces.
  # snapshot_seeds is built only to keep it compiling (it is run by hand).
  CC=clang CXX=clang++ cmake -S . -B "$build_dir" -G Ninja \
    -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_FLAGS_RELWITHDEBINFO="-O2 -gline-tables-only" \
    -DYOKE_FUZZ=ON -DYOKE_BUILD_TESTS=OFF -DYOKE_BUILD_BENCH=OFF -DCMAKE_UNITY_BUILD=ON
  cmake --build "$build_dir" -j 2 --target ingest_fuzz snapshot_fuzz snapshot_seeds
}

phase "setup" tools/setup.sh
phase "fuzz build" build

artifacts="$build_dir/artifacts"
mkdir -p "$artifacts"
export ASAN_OPTIONS=abort_on_error=1:detect_leaks=1
export UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1
work="$(mktemp -d "${TMPDIR:-/tmp}/yoke-fuzz-corpus.XXXXXX")"
trap 'rm -rf "$work"' EXIT
shopt -s nullglob

fuzz() {
  local target="$1" time="$2"
  local fuzzer="$build_dir/tests/fuzz/${target}_fuzz"
  local regressions=(tests/fuzz/regressions/"$target"/*.bin)
  if ((${#regressions[@]})); then
    echo "fuzz: replaying ${#regressions[@]} ${target} regression input(s)"
    "$fuzzer" -artifact_prefix="$artifacts/$target-" "${regressions[@]}"
  fi
  ((time > 0)) || return 0  # libFuzzer reads -max_total_time=0 as "no limit"
  mkdir -p "$work/$target"
  cp tests/fuzz/corpus/"$target"/* "$work/$target/"
  echo "fuzz: ${target}_fuzz for ${time}s"
  # -timeout: one input takes milliseconds; one that takes 30 s is a hang worth reporting.
  # -entropic=0: with ~30k coverage features, clang 14's entropic schedule spent most of a short
  # run updating its feature counts (3.7x fewer inputs per CPU second, no more coverage).
  "$fuzzer" "$work/$target" -max_total_time="$time" -max_len=65536 -rss_limit_mb=2048 \
    -timeout=30 -entropic=0 -print_final_stats=1 -artifact_prefix="$artifacts/$target-"
}

snapshot_seconds=$((seconds / 3))
phase "fuzz run" fuzz ingest $((seconds - snapshot_seconds))
phase "fuzz run" fuzz snapshot "$snapshot_seconds"
