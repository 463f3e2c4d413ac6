#!/usr/bin/env bash
# The README's first command: sets up the machine, builds yoke (Release), starts the yoked
# daemon on a fresh data directory and runs the live demo (tools/demo/city_sim.py): an evening
# of courier dispatch in the invented harbour city of Quillory, one batch of events per tick,
# fed to two pools, `quillory` (with a churn bonus) and `quillory-plain` (without), with a live
# summary.
# Then it stops the daemon with SIGTERM, replays the journal of `quillory` with every commit's
# certificate checked, and prints the commands to look further. Exits non-zero if a step fails,
# and stops the daemon in every case. Ctrl-C during the run ends the simulation early; the
# rest still runs.
#   tools/demo.sh                    # build in build/, demo files in build/demo/ (the previous
#                                    # run's are moved to build/demo.previous/)
#   tools/demo.sh --seconds 20       # a shorter run (default 45 s)
#   tools/demo.sh --churn-bonus 0    # no bonus on `quillory` (default 60)
#   tools/demo.sh --crash            # also SIGKILL the daemon halfway and restart it
#   YOKE_BUILD_DIR=build-x tools/demo.sh  # another build directory
#   tools/demo.sh --cluster          # the cluster demo instead (tools/demo/cluster_demo.py): three
#                                    # nats-server nodes and two yoked on loopback ports picked
#                                    # free, the pools split between the daemons; one yoked
#                                    # SIGKILLed halfway, the stream's leader node at 3/4; the
#                                    # takeover live; each pool replayed from the cluster,
#                                    # certified. Files in build/demo-cluster/.
# The daemon listens on the default loopback endpoints (tcp://127.0.0.1:7410-7412, metrics on
# 127.0.0.1:7413); they must be free (not so with --cluster).
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${YOKE_BUILD_DIR:-build}"
seconds=45
churn_bonus=60
crash=0
cluster=0
seed=20261203
while (($#)); do
  case "$1" in
    --seconds) seconds="$2"; shift 2 ;;
    --churn-bonus) churn_bonus="$2"; shift 2 ;;
    --seed) seed="$2"; shift 2 ;;
    --crash) crash=1; shift ;;
    --cluster) cluster=1; shift ;;
    *) echo "usage: tools/demo.sh [--seconds N] [--churn-bonus N] [--seed S] [--crash | --cluster]" >&2
       exit 2 ;;
  esac
done
if ((crash && cluster)); then
  echo "demo: --crash and --cluster do not go together (the cluster demo kills a daemon itself)" >&2
  exit 2
fi

tools/setup.sh
cmake -S . -B "$build_dir" -G Ninja -DCMAKE_BUILD_TYPE=Release -DCMAKE_UNITY_BUILD=ON  # as tools/test.sh
cmake --build "$build_dir" -j 2 --target yoke yoked yoke_proto_python

python=/usr/bin/python3  # Debian's, with python3-zmq and python3-protobuf
yoke="$build_dir/tools/cli/yoke"
yoked="$build_dir/daemon/server/yoked"
demo="$build_dir/demo"
data="$demo/data"
export PYTHONPATH="$build_dir/proto/python:tools/python${PYTHONPATH:+:$PYTHONPATH}"

if ((cluster)); then
  # The driver starts, kills and stops every process itself (by PID, on every way out).
  command -v nats-server >/dev/null || { echo "demo: nats-server is missing (tools/setup.sh)" >&2; exit 1; }
  if [[ -d "$build_dir/demo-cluster" ]]; then
    rm -rf "$build_dir/demo-cluster.previous"
    mv "$build_dir/demo-cluster" "$build_dir/demo-cluster.previous"
  fi
  PYTHONPATH="$PYTHONPATH:tools/nats_cluster" exec "$python" tools/demo/cluster_demo.py \
    --yoke "$yoke" --yoked "$yoked" --dir "$build_dir/demo-cluster" --seconds "$seconds" \
    --seed "$seed" --churn-bonus "$churn_bonus"
fi
if [[ -d "$demo" ]]; then
  rm -rf "$demo.previous"
  mv "$demo" "$demo.previous"
fi
mkdir -p "$demo"

crash_pid=""
stop_all() {
  [[ -n "$crash_pid" ]] && kill "$crash_pid" 2>/dev/null || true
  [[ -f "$demo/yoked.pid" ]] && kill "$(cat "$demo/yoked.pid")" 2>/dev/null || true
  wait 2>/dev/null || true
}
trap stop_all EXIT

write_config() {  # $1: the churn bonus of `quillory`, or "" for none
  {
    echo '[logging]'
    echo "file = \"$demo/yoked.log\""
    echo
    "$python" tools/demo/city_sim.py --write-config - ${1:+--churn-bonus "$1"}
  } > "$demo/yoked.toml"
}

# Starts yoked in a session of its own (a Ctrl-C meant for the simulation does not reach it)
# and waits until it answers; its pid goes to $demo/yoked.pid.
start_daemon() {
  setsid "$yoked" --data-dir "$data" --config "$demo/yoked.toml" 2>>"$demo/yoked.stderr" &
  echo $! > "$demo/yoked.pid"
  for _ in $(seq 100); do
    "$yoke" query health --timeout-ms 100 >/dev/null 2>&1 && return 0
    kill -0 "$(cat "$demo/yoked.pid")" 2>/dev/null || return 1
    sleep 0.05
  done
  return 1
}

not_started() {
  echo "demo: yoked did not start; its log:" >&2
  cat "$demo/yoked.stderr" "$demo/yoked.log" >&2 2>/dev/null || true
  exit 1
}

bonus_args=()
if ((churn_bonus > 0)); then
  write_config "$churn_bonus"
  if start_daemon; then
    bonus_args=(--churn-bonus "$churn_bonus")
  elif grep -q churn_bonus "$demo/yoked.stderr" "$demo/yoked.log" 2>/dev/null; then
    echo "demo: this yoked does not know churn_bonus yet; both pools run without a bonus"
    write_config ""
    start_daemon || not_started
  else
    not_started
  fi
else
  write_config ""
  start_daemon || not_started
fi
echo "demo: yoked is running (data in $data, log in $demo/yoked.log, config $demo/yoked.toml)"

if ((crash)); then
  # Halfway through, SIGKILL the daemon and start it again on the same data: the simulator's
  # senders resend what was not acknowledged, and each batch is applied once.
  (
    sleep "$(awk -v s="$seconds" 'BEGIN { print s / 2 }')"
    kill -KILL "$(cat "$demo/yoked.pid")"
    sleep 0.2
    start_daemon
  ) > "$demo/crash.log" 2>&1 &
  crash_pid=$!
fi

echo "demo: streaming the Quillory evening for $seconds s (Ctrl-C ends it early)"
"$python" tools/demo/city_sim.py --seconds "$seconds" --seed "$seed" "${bonus_args[@]}" \
  --result "$demo/result.json"
if [[ -n "$crash_pid" ]]; then
  wait "$crash_pid" || { echo "demo: the restart after SIGKILL failed" >&2; exit 1; }
  crash_pid=""
  grep -E 'recovered' "$demo/yoked.log" | tail -n 1 | sed 's/^/  after SIGKILL: /' || true
fi

summary=$("$yoke" query summary --pool quillory)
echo "demo: the daemon's summary of quillory: $summary"
echo "demo: SIGTERM: the daemon finishes its window, writes a snapshot and exits 0"
daemon_pid=$(cat "$demo/yoked.pid")
kill -TERM "$daemon_pid"
if ((crash)); then  # the restarted daemon is not this shell's child: watch it go
  while kill -0 "$daemon_pid" 2>/dev/null; do sleep 0.05; done
else
  wait "$daemon_pid"  # its exit status: 0 after a clean stop
fi
rm -f "$demo/yoked.pid"

echo "demo: replaying the journal of quillory, every commit's certificate checked:"
echo "      $yoke replay $data --pool quillory --verify --stats"
"$yoke" replay "$data" --pool quillory --verify --stats > "$demo/replay-quillory.txt"
"$python" - "$demo" "$summary" "$yoke" "$data" <<'PY'
import json, sys
demo, summary, yoke, data = sys.argv[1], json.loads(sys.argv[2]), sys.argv[3], sys.argv[4]
lines = open(f"{demo}/replay-quillory.txt").read().splitlines()
commits = [line.split() for line in lines if line.startswith("commit ")]
last = commits[-1]
weight, pairs, seq = int(last[3]), int(last[5]), int(last[last.index("seq") + 1])
result = json.load(open(f"{demo}/result.json"))
lead = result["pools"][0]
if (weight, pairs, seq) != (summary["weight"], summary["pairs"], summary["seq"]) or \
        (weight, pairs, seq) != (lead["weight"], lead["pairs"], lead["seq"]):
    sys.exit(f"demo: the replay ends at {last}; the daemon said {summary}, the simulator {lead}")
violations = {p["name"]: p["hold_violations"] for p in result["pools"] if p.get("hold_violations")}
if violations:
    sys.exit(f"demo: held pairs were broken while held: {violations}")
for line in lines:
    if not line.startswith("commit "):
        print("  " + line)
print(f"  {len(commits)} commits replayed, each certificate held; the last one is the daemon's"
      f" and the simulator's: seq {seq}, weight {weight}, pairs {pairs}")
if "held_total" in result:
    print(f"  {result['held_total']} dispatched pairs held while their couriers travelled"
          f" ({result['held_now']} still held), none broken in either pool")
print()
print("Look further (the pairs are advisory: local working-time, safety and labour rules decide):")
print(f"  {yoke} replay {data} --pool quillory --report quillory-report.html"
      "      # the evening as a report")
courier = result.get("busy_courier")
if courier is not None:
    print(f"  {yoke} replay {data} --pool quillory --history {courier}"
          f"      # courier {courier}: paired {result['busy_courier_pairings']} times")
    print(f"  {yoke} replay {data} --pool quillory --explain {courier} --until {seq // 2}"
          f"      # why it was paired so at seq {seq // 2}")
print(f"  {yoke} replay {data} --pool quillory-plain --stats"
      "      # the pool without the churn bonus")
print(f"  files: {demo}/ (yoked.toml, yoked.log, result.json, replay-quillory.txt, data/)")
PY
