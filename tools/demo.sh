#!/usr/bin/env bash
# The README's first command: sets up the machine, builds yoke (Release), then generates a
# dispatch pool of Larkspur Bay couriers and orders, solves it with a certificate, checks the
# certificate independently, streams a few thousand changes through one warm pool (every commit
# certified), and prints a short summary. Exits non-zero if any step fails.
#   tools/demo.sh                         # build in build/, demo files in build/demo/
#   YOKE_BUILD_DIR=build-x tools/demo.sh  # another build directory
set -euo pipefail
cd "$(dirname "$0")/.."

build_dir="${YOKE_BUILD_DIR:-build}"
couriers=2000
orders=2500
seed=20240611

tools/setup.sh
cmake -S . -B "$build_dir" -G Ninja -DCMAKE_BUILD_TYPE=Release
cmake --build "$build_dir" -j 2

yoke="$build_dir/tools/cli/yoke"
demo="$build_dir/demo"
mkdir -p "$demo"

echo
echo "demo: generating the Larkspur Bay evening shift: $couriers couriers, $orders orders"
"$yoke" gen dispatch --couriers "$couriers" --orders "$orders" --per-order 8 --seed "$seed" \
  -o "$demo/larkspur-bay-dispatch.txt"

echo "demo: solving for the most valuable pairing, with a certificate"
"$yoke" solve "$demo/larkspur-bay-dispatch.txt" --certificate "$demo/certificate.json" \
  > "$demo/solution.json"

echo "demo: checking the certificate with the independent checker"
"$yoke" verify "$demo/larkspur-bay-dispatch.txt" "$demo/certificate.json" > "$demo/verify.json"

python3 - "$demo" "$couriers" "$orders" <<'PY'
import json, sys
demo, couriers, orders = sys.argv[1], sys.argv[2], sys.argv[3]
solution = json.load(open(f"{demo}/solution.json"))
verdict = json.load(open(f"{demo}/verify.json"))
confirmed = verdict.get("valid") and (verdict["weight"], verdict["pairs"]) == (
    solution["weight"], solution["pairs"])
if not confirmed:
    sys.exit(f"demo: the certificate does not confirm the solution: {verdict}")
print()
print(f"Larkspur Bay dispatch: {couriers} couriers, {orders} orders, "
      f"{solution['edges']} candidate pairings")
print(f"  pairs        {solution['pairs']} orders assigned to a courier")
print(f"  total value  {solution['weight']}")
print(f"  solve time   {solution['solve_ms']:.1f} ms")
print(f"  certificate  valid: no other assignment is worth more")
print(f"  files        {demo}/ (graph, solution.json, certificate.json, verify.json)")
PY

echo
echo "demo: a live pool: a dispatch pool of 4500 couriers and orders, then 3000 changes (prices"
echo "      drift, orders arrive, couriers sign off) in batches of 1..50, repaired warm, each"
echo "      commit certified (yoke replay --verify; the first commit loads the pool)"
"$yoke" gen stream dispatch --vertices 4500 --events 3000 --batch 1 --batch-max 50 \
  --seed "$seed" -o "$demo/evening-stream.txt"
"$yoke" replay "$demo/evening-stream.txt" --verify --stats > "$demo/replay.txt"
grep -E '^stats (commits|repair_us|events_per_second)' "$demo/replay.txt" | sed 's/^/  /'
grep -E '^commit ' "$demo/replay.txt" | tail -n 1 | sed 's/^/  last /'
echo "  every commit's certificate held; replay output in $demo/replay.txt"
echo "  (the pairs are advisory: local working-time, safety and labour rules decide)"
