#!/usr/bin/env python3
"""An outside integrator's probe of yoked, written from the spec alone (docs/protocol.md,
docs/contracts.md, docs/formats.md, README.md, proto/yoke/v1/, daemon/yoked.example.toml and the
commands' --help): each case prints what the spec says (with the
line), what the daemon did, and agree / DISAGREE / GAP (the spec is silent or ambiguous).

    PYTHONPATH=build/proto/python:tools/python/probe /usr/bin/python3 \
        tools/python/probe/yoke_probe.py --yoked build/daemon/server/yoked \
        [--yoke build/tools/cli/yoke]   # also replays the main daemon's journal and compares,
                                        # runs the client commands and the text formats
        [--slow]                        # also the slow cases (not in CTest)

Starts its own daemons on free loopback ports and temporary data directories, and stops them
by their PIDs on every way out. Exit status 0 when no case disagrees, 1 otherwise."""

import argparse
import sys
import time

import cases_cli
import cases_config
import cases_formats
import cases_input
import cases_keys
import cases_lifecycle
import cases_many
import cases_metrics
import cases_more
import cases_recovery
import cases_state
from harness import Client, Daemon, Record

MAIN_CONFIG = """
[pools.card]
mode = "max-cardinality"
[pools.tiny]
max_vertices = 4
max_edges = 2
[pools.perf]
mode = "perfect"
[pools.cardtiny]
mode = "max-cardinality"
max_vertices = 4
[pools.churn]
churn_bonus = 1000
[pools.lim]
max_vertices = 3
max_edges = 1
[pools.exact3]
max_vertices = 6
"""

SMALL_CONFIG = """
[limits]
max_pools = 4
[pools.d1]
mode = "max-weight"
[pools.d2]
mode = "max-weight"
"""

LEDGER_CONFIG = """
[ledger]
batches_per_client = 4
idle_seconds = 1
max_clients_per_pool = 2
"""


# Pools of the main daemon whose journal `--yoke` replays: many small commits, a retired and
# recreated pool, held pairs, a churn bonus, perfect and max-cardinality modes.
REPLAYED_POOLS = ["live", "events", "ret", "churn", "perf", "card", "default"]


def started(daemons, yoked, config, tag):
    """A daemon started and listed for the cleanup."""
    d = Daemon(yoked, config, tag=tag)
    daemons.append(d)
    d.start()
    return d


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--yoked", required=True)
    parser.add_argument("--yoke", help="the yoke command line: also replay the main daemon's "
                        "journal and compare")
    parser.add_argument("--keep", action="store_true", help="keep the data directories")
    parser.add_argument("--skip-lifecycle", action="store_true")
    parser.add_argument("--slow", action="store_true", help="also the slow cases (not in CTest):"
                        " a 10^5-vertex pool's long repairs beside another pool")
    args = parser.parse_args()
    rec = Record()
    daemons = []
    t0 = time.time()
    try:
        main_daemon = started(daemons, args.yoked, MAIN_CONFIG, "main")
        with Client(main_daemon) as c:
            for group in (cases_input.envelopes, cases_input.sizes, cases_input.pool_names,
                          cases_input.client_ids, cases_input.events, cases_input.weights,
                          cases_input.limits, cases_state.ledger, cases_state.queries,
                          cases_more.bounds, cases_more.declared, cases_more.counters,
                          cases_more.limit_points, cases_more.pipelined,
                          cases_more.odd_envelopes, cases_more.retire_long_id,
                          cases_recovery.big_first_batch, cases_more.explanations,
                          cases_more.whole_batch_errors, cases_more.client_id_bytes):
                print(f"== {group.__name__}", flush=True)
                group(rec, c)
            print("== retire", flush=True)
            cases_state.retire(rec, c, main_daemon)
            print("== catch_up", flush=True)
            cases_state.catch_up(rec, c, main_daemon)
            print("== diffs", flush=True)
            cases_more.diffs(rec, c, main_daemon)
            cases_more.removed_weights(rec, c, main_daemon)
            cases_more.missed_retirement(rec, c, main_daemon)
            cases_more.retire_held(rec, c, main_daemon)
            cases_more.live_catch_up(rec, c, main_daemon)
        cases_more.req_ingest(rec, main_daemon)
        cases_more.metrics(rec, main_daemon)
        print("== metrics (third pass)", flush=True)
        cases_metrics.all_cases(rec, args.yoke, main_daemon)
        if args.yoke:
            cases_cli.all_cases(rec, args.yoke, main_daemon)
        cases_many.interleaving(rec, args.yoke, main_daemon)
        with Client(main_daemon) as c:
            cases_keys.health_and_exact(rec, c)
        if args.yoke:
            cases_many.retire_during_catch_up(rec, args.yoke, main_daemon)
            cases_keys.exact_in_json(rec, args.yoke, main_daemon)
        print("== far_oversized", flush=True)
        cases_lifecycle.far_oversized(rec, main_daemon)
        cases_lifecycle.unread_replies(rec, main_daemon)
        if args.yoke:
            with Client(main_daemon) as c:
                summaries = {p: c.summary(p) for p in REPLAYED_POOLS}
            main_daemon.stop()
            cases_lifecycle.replay_equals_daemon(rec, args.yoke, main_daemon, summaries)
        with Client(started(daemons, args.yoked, SMALL_CONFIG, "small")) as c:
            print("== max_pools", flush=True)
            cases_state.max_pools(rec, c)
        with Client(started(daemons, args.yoked, LEDGER_CONFIG, "ledger")) as c:
            print("== horizon", flush=True)
            cases_state.horizon(rec, c)
            cases_more.idle_twice(rec, c)
        if not args.skip_lifecycle:
            print("== sigterm_in_flight", flush=True)
            daemons.append(cases_lifecycle.sigterm_in_flight(rec, args.yoked))
            print("== sigkill_restart", flush=True)
            daemons.append(cases_lifecycle.sigkill_restart(rec, args.yoked))
            print("== recovery", flush=True)
            daemons.append(cases_recovery.recovery(rec, args.yoked))
            print("== sigterm_many", flush=True)
            cases_many.sigterm_many(rec, args.yoked)
            print("== lock_wait", flush=True)
            cases_many.lock_wait(rec, args.yoked)
        cases_config.all_cases(rec, args.yoked)
        cases_keys.all_cases(rec, args.yoked, args.yoke)
        if args.yoke:
            cases_cli.send_oversized(rec, args.yoke, args.yoked)
        if args.yoke:
            cases_formats.all_cases(rec, args.yoke)
        if args.slow:  # kept out of CTest's run for its time
            print("== long_repair (slow)", flush=True)
            cases_many.long_repair(rec, args.yoked)
            if args.yoke:
                print("== send_across_a_restart (slow)", flush=True)
                cases_cli.send_across_a_restart(rec, args.yoke, args.yoked)
                print("== keys.segments (slow)", flush=True)
                cases_keys.segments(rec, args.yoked, args.yoke)
            print("== timers (slow)", flush=True)
            cases_config.slow_window(rec, args.yoked)
            cases_keys.snapshot_timer(rec, args.yoked)
    finally:
        for d in daemons:
            if d is not None:
                d.stop()
                if not args.keep:
                    d.remove_files()
    counts = rec.summary()
    print(f"\n{len(rec.cases)} cases in {time.time() - t0:.1f} s: {counts}")
    for verdict, name, spec, expected, observed in rec.cases:
        if verdict != "agree":
            print(f"  {verdict}: {name} [{spec}]\n      expected {expected}\n      observed "
                  f"{observed}")
    return 1 if counts.get("DISAGREE") else 0


if __name__ == "__main__":
    sys.exit(main())
