#!/usr/bin/env bash
# The README's first command: sets up the machine, builds yoke (Release), starts the yoked
# daemon on a fresh data directory, and streams an evening of Larkspur Bay courier dispatch
# through it: a subscriber watches the published diffs, `yoke send` delivers the batches (each
# acknowledged once durable), the daemon is killed with SIGKILL halfway and restarted, and at the
# end the journal is replayed with every commit's certificate checked. Exits non-zero if any
# step fails, and stops the daemon in every case.
#   tools/demo.sh                         # build in build/, demo files in build/demo/
#   YOKE_BUILD_DIR=build-x tools/demo.sh  # another build directory
# The daemon listens on the default loopback endpoints (tcp://127.0.0.1:7410-7412, metrics on
# 127.0.0.1:7413); they must be free.
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${YOKE_BUILD_DIR:-build}"
seed=20240611

tools/setup.sh
cmake -S . -B "$build_dir" -G Ninja -DCMAKE_BUILD_TYPE=Release
cmake --build "$build_dir" -j 2 --target yoke yoked

yoke="$build_dir/tools/cli/yoke"
yoked="$build_dir/daemon/server/yoked"
demo="$build_dir/demo"
data="$demo/data"
rm -rf "$demo"
mkdir -p "$demo"

daemon_pid=""
watch_pid=""
stop_all() {
  [[ -n "$watch_pid" ]] && kill "$watch_pid" 2>/dev/null || true
  [[ -n "$daemon_pid" ]] && kill "$daemon_pid" 2>/dev/null || true
  wait 2>/dev/null || true
}
trap stop_all EXIT

start_daemon() {
  "$yoked" --data-dir "$data" 2>>"$demo/yoked.log" &
  daemon_pid=$!
  for _ in $(seq 100); do
    "$yoke" query health --timeout-ms 100 >/dev/null 2>&1 && return 0
    sleep 0.05
  done
  echo "demo: yoked did not start; its log:" >&2
  cat "$demo/yoked.log" >&2
  return 1
}

echo
echo "demo: the Larkspur Bay evening shift: 3000 couriers and orders, then 20000 changes"
echo "      (prices drift, orders arrive, couriers sign off) in batches of 1..50"
"$yoke" gen stream dispatch --vertices 3000 --events 20000 --batch 1 --batch-max 50 \
  --seed "$seed" -o "$demo/evening.txt"
# Two halves, so that the daemon can be killed between them.
python3 - "$demo/evening.txt" <<'PY'
import sys
lines = open(sys.argv[1]).read().splitlines(keepends=True)
commits = [i for i, line in enumerate(lines) if line.strip() == "commit"]
cut = commits[len(commits) // 2] + 1
open(sys.argv[1] + ".first", "w").writelines(lines[:cut])
open(sys.argv[1] + ".second", "w").writelines(lines[cut:])
PY

echo "demo: starting yoked (data in $data, log in $demo/yoked.log)"
start_daemon
"$yoke" watch > "$demo/diffs.jsonl" &
watch_pid=$!
sleep 0.3  # the subscription reaches the daemon before the first diff

echo "demo: sending the first half of the evening with yoke send"
"$yoke" send "$demo/evening.txt.first" --client-id larkspur-dispatch | sed 's/^/  acknowledged /'
"$yoke" query summary | sed 's/^/  summary /'

echo "demo: SIGKILL: the daemon dies without warning; restarting it on the same data"
kill -KILL "$daemon_pid"
wait "$daemon_pid" 2>/dev/null || true
start_daemon
grep -E 'recovered' "$demo/yoked.log" | tail -n 1 | sed 's/^/  /'
"$yoke" query summary | sed 's/^/  summary /'

echo "demo: sending the second half"
"$yoke" send "$demo/evening.txt.second" --client-id larkspur-dispatch | sed 's/^/  acknowledged /'
summary=$("$yoke" query summary)
echo "  summary $summary"
courier=$(python3 -c 'import json,sys; print(json.load(sys.stdin)["pairs"][0][0])' \
  <<<"$("$yoke" query matching)")
echo "demo: why is courier $courier paired as it is? (doubled prices and slacks)"
"$yoke" query explain --vertex "$courier" --limit 3 | sed 's/^/  /'

echo "demo: SIGTERM: the daemon finishes its window, writes a snapshot and exits 0"
kill -TERM "$daemon_pid"
wait "$daemon_pid"
daemon_pid=""
kill "$watch_pid" 2>/dev/null || true
wait "$watch_pid" 2>/dev/null || true
watch_pid=""

echo "demo: replaying the journal, every commit's certificate checked (yoke replay --verify)"
"$yoke" replay "$data" --verify --stats > "$demo/replay.txt"
python3 - "$demo" "$summary" <<'PY'
import json, sys
demo, summary = sys.argv[1], json.loads(sys.argv[2])
commits = [line.split() for line in open(f"{demo}/replay.txt") if line.startswith("commit ")]
last = commits[-1]
weight, pairs, seq = int(last[3]), int(last[5]), int(last[9])
if (weight, pairs, seq) != (summary["weight"], summary["pairs"], summary["seq"]):
    sys.exit(f"demo: the journal replay ends at {last}, the daemon said {summary}")
diffs = [json.loads(line) for line in open(f"{demo}/diffs.jsonl")]
print()
print(f"Larkspur Bay evening: {summary['seq']} batches applied once each, "
      f"{len(commits)} repairs")
print(f"  pairs        {summary['pairs']} orders assigned to a courier")
print(f"  total value  {summary['weight']}")
print(f"  diffs seen   {len(diffs)} published while the watcher listened")
print(f"  journal      replayed: the same weight, pairs and seq, every certificate held")
print(f"  files        {demo}/ (script, diffs.jsonl, yoked.log, replay.txt, data/)")
print("  (the pairs are advisory: local working-time, safety and labour rules decide)")
PY
