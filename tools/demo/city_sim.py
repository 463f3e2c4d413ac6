"""The live demo: an evening of courier dispatch in the invented city of Quillory, streamed
through a running yoked, one batch per tick.

    PYTHONPATH=build/proto/python:tools/python /usr/bin/python3 tools/demo/city_sim.py \
        [--seconds 45] [--seed S] [--ingest EP --publish EP --query EP] [--result FILE]

Couriers and orders appear in the city's districts; couriers walk the streets, so the scores
of their pairs change every tick; a pair that stands long enough in the lead pool (`quillory`) is
dispatched: the pair is held (a `hold` event: it stays matched whatever the scores do) while
the courier travels to the order, a few ticks drawn per pair (--travel-ticks), then courier and
order leave the pool (delivered), and the courier comes back when the delivery is done.
Orders nobody takes expire, couriers end their shifts. Every tick's events go, unchanged, to two
pools: the lead pool `quillory` (declared in the daemon's config, with a churn bonus when the
daemon supports one) and the shadow pool `quillory-plain` (plain maximum weight), so the summary
shows the churn of both side by side. Every diff is checked against the holds: a held pair
that a diff removes, or that is not matched after a batch, counts as a hold violation (none are
expected).

The summary is redrawn every second on a terminal, or printed as one line a second otherwise;
the run ends after --seconds of wall time, after --ticks ticks, or at Ctrl-C (SIGINT or
SIGTERM: the batch in flight is finished, the final summary printed, exit 0). The last line
starts with `demo: final`. Exit 1 when the daemon refuses a batch or stops answering.

`--write-config FILE` writes a yoked config declaring the two pools and exits.
A seed fixes the whole evening: the same seed and --ticks give the same batches.
"""

import argparse
import json
import os
import signal
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import random  # noqa: E402

import dispatch_model  # noqa: E402
from live_view import LiveView, percentile  # noqa: E402

DEFAULT_INGEST = "tcp://127.0.0.1:7410"
DEFAULT_PUBLISH = "tcp://127.0.0.1:7411"
DEFAULT_QUERY = "tcp://127.0.0.1:7412"


def pools_toml(lead, shadow, churn_bonus):
    """The [pools] tables of a yoked config: the lead pool with the churn bonus (when not
    None), the shadow pool without. Both plain maximum weight."""
    text = f'[pools.{lead}]\nmode = "max-weight"\n'
    if churn_bonus is not None:
        text += f"churn_bonus = {churn_bonus}\n"
    text += f'\n[pools.{shadow}]\nmode = "max-weight"\n'
    return text


def add_evening_options(p):
    """The options of the evening itself (shared with the cluster demo, cluster_demo.py)."""
    p.add_argument("--seconds", type=float, default=45.0,
                   help="wall-clock length of the run (default 45)")
    p.add_argument("--ticks", type=int, default=0, help="stop after this many ticks (0: no limit)")
    p.add_argument("--tick-ms", type=float, default=100.0,
                   help="wall time between ticks (default 100; a tick is 10 simulated seconds)")
    p.add_argument("--seed", type=int, default=20261203)
    p.add_argument("--couriers", type=int, default=480, help="couriers on shift at the start")
    p.add_argument("--orders", type=int, default=150, help="orders waiting at the start")
    p.add_argument("--order-rate", type=float, default=7.0,
                   help="new orders per tick before the evening peak (default 7)")
    p.add_argument("--standing-ticks", type=int, default=6,
                   help="a pair standing this many ticks in the lead pool is dispatched")
    p.add_argument("--travel-ticks", type=int, default=4,
                   help="a dispatched pair stays held about this many ticks (drawn per pair "
                        "between half and one and a half times it) before its delivery "
                        "removes it; 0: removed at once (default 4)")
    p.add_argument("--pool", default="quillory", help="the lead pool (default quillory)")
    p.add_argument("--shadow-pool", default="quillory-plain",
                   help="the shadow pool (default quillory-plain)")
    p.add_argument("--churn-bonus", type=int, default=None,
                   help="the lead pool's churn bonus, for the labels and --write-config")
    p.add_argument("--client-id", default="quillory-sim")
    p.add_argument("--result", help="write the final numbers here as JSON")
    view = p.add_mutually_exclusive_group()
    view.add_argument("--plain", action="store_true", help="one line per update, even on a tty")
    view.add_argument("--ansi", action="store_true", help="redraw in place, even when piped")


def parse_args(argv):
    p = argparse.ArgumentParser(
        prog="city_sim.py", description="Stream a Quillory courier evening through yoked.")
    add_evening_options(p)
    p.add_argument("--ingest", default=DEFAULT_INGEST)
    p.add_argument("--publish", default=DEFAULT_PUBLISH)
    p.add_argument("--query", default=DEFAULT_QUERY)
    p.add_argument("--write-config", metavar="FILE",
                   help="write the yoked [pools] tables of the two pools to FILE ('-': stdout) and exit")
    return p.parse_args(argv)


class Run:
    """One demo run: the evening, the two pools, the numbers for the summary."""

    def __init__(self, args, pools):
        self.args = args
        self.pools = pools
        self.evening = dispatch_model.Evening(random.Random(args.seed), couriers=args.couriers,
                                              orders=args.orders, order_rate=args.order_rate)
        self.started = time.monotonic()
        self.events_total = 0
        self.history = []  # (wall time, events sent, events acknowledged) per tick
        self.stop_reason = None

    def tick(self):
        ev = self.evening
        events = ev.step()
        sent_at = time.monotonic()
        self.pools.send(events, ev.tick, ev.alive, ev.held)
        # Both pools acknowledged: each saw len(events) events.
        self.events_total += 2 * len(events)
        self.history.append((sent_at, 2 * len(events), time.monotonic()))
        # Dispatch what stood long enough in the lead pool (and is not on its way already): each
        # pair is held for its travel time, then delivered.
        standing = self.args.standing_ticks
        due = [(a, b) if dispatch_model.is_courier(a) else (b, a)
               for (a, b), since in sorted(self.pools.lead.since.items())
               if ev.tick - since >= standing and (a, b) not in ev.held]
        ev.dispatch([(c, o, self.travel_ticks(c, o)) for c, o in due])

    def travel_ticks(self, courier, order):
        """The pair's travel time in ticks, from the seed and the pair alone (the evening's
        own random stream is not touched)."""
        n = self.args.travel_ticks
        if n <= 0:
            return 0
        rng = random.Random(f"{self.args.seed}/{courier}/{order}")
        return rng.randint(max(1, (n + 1) // 2), n + n // 2)

    def frame(self):
        ev, lead, shadow = self.evening, self.pools.lead, self.pools.shadow
        now = time.monotonic()
        recent = [h for h in self.history if h[0] >= now - 1.0]
        sent_rate = sum(h[1] for h in recent)
        acked_rate = sum(h[1] for h in recent if h[2] <= now)
        window_ticks = max(1, len(recent))

        def recent_values(track_deque):
            return [v for t, v in track_deque if t >= now - 1.0] or \
                [v for _, v in list(track_deque)[-50:]]

        repair = recent_values(lead.repair_us) + recent_values(shadow.repair_us)
        publish = recent_values(lead.publish_us) + recent_values(shadow.publish_us)
        acks = list(lead.ack_ms)[-window_ticks:]
        diffs = list(lead.diff_ms)[-window_ticks:] + list(shadow.diff_ms)[-window_ticks:]
        pools = []
        bonus = self.args.churn_bonus
        for track, label in ((lead, f"{lead.name} (churn bonus {bonus})" if bonus else
                              f"{lead.name} (no bonus set)"),
                             (shadow, f"{shadow.name} (no bonus)")):
            changed = track.changed_recent
            pools.append({"name": track.name, "label": label, "seq": track.seq,
                          "pairs": track.pairs, "weight": track.weight,
                          "changed_rate": sum(changed) / len(changed) if changed else 0.0,
                          "changed_total": track.changed_total,
                          "broken_total": track.broken_total,
                          "hold_violations": track.hold_violations, "resyncs": track.resyncs})
        city = ev.city
        per = [[d.name, 0, 0, 0] for d in city.districts]
        for c in ev.couriers.values():
            per[city.district_of(c.pos)][1] += 1
        for o in ev.orders.values():
            per[o.district][2] += 1
        for a, b in lead.since:
            order = b if dispatch_model.is_courier(a) else a
            if order in ev.orders:
                per[ev.orders[order].district][3] += 1
        return {
            "clock": ev.clock, "tick": ev.tick, "wall": now - self.started,
            "seconds": self.args.seconds, "couriers": len(ev.couriers), "away": len(ev.away),
            "orders": len(ev.orders), "edges": ev.edge_count, "pools": pools,
            "sent_rate": sent_rate, "acked_rate": acked_rate, "events_total": self.events_total,
            "repair_p50_us": percentile(repair, 0.5), "repair_p99_us": percentile(repair, 0.99),
            "publish_p50_us": percentile(publish, 0.5),
            "ack_p50_ms": percentile(acks, 0.5) or 0.0,
            "diff_p99_ms": percentile(diffs, 0.99) or 0.0,
            "dispatched": ev.counts["dispatched"], "expired": ev.counts["expired"],
            "shifts_ended": ev.counts["shifts_ended"], "standing_ticks": self.args.standing_ticks,
            "delivered": ev.counts["delivered"], "held_now": len(ev.held),
            "held_total": ev.counts["held_total"], "travel_ticks": self.args.travel_ticks,
            "districts": per,
        }


def stream(run, view, stop, before_tick=None, frame=None):
    """Runs the evening's ticks, one every --tick-ms, until --seconds of wall time, --ticks
    ticks, or stop["signal"] is set; the view is updated every second with frame(run) (default
    run.frame()). before_tick(run), when given, runs before each tick (the cluster demo's
    disruptions). Exceptions of the sends propagate."""
    args = run.args
    frame = frame or Run.frame
    tick_s = args.tick_ms / 1000.0
    next_tick = time.monotonic()
    next_frame = next_tick + 1.0
    while stop["signal"] is None:
        now = time.monotonic()
        if now - run.started >= args.seconds or (args.ticks and run.evening.tick >= args.ticks):
            break
        if before_tick is not None:
            before_tick(run)
        run.tick()
        now = time.monotonic()
        if now >= next_frame:
            view.update(frame(run))
            next_frame += 1.0
            if next_frame < now:
                next_frame = now + 1.0
        next_tick += tick_s
        if next_tick > now:
            time.sleep(next_tick - now)
        else:
            next_tick = now


def main(argv=None):
    args = parse_args(sys.argv[1:] if argv is None else argv)
    if args.write_config:
        text = pools_toml(args.pool, args.shadow_pool, args.churn_bonus)
        if args.write_config == "-":
            sys.stdout.write(text)
        else:
            with open(args.write_config, "w") as out:
                out.write(text)
        return 0

    from pool_pair import PoolPair  # needs the generated modules and pyzmq
    from yoke_client import Rejected, YokeError

    stop = {"signal": None}

    def on_signal(signum, _frame):
        stop["signal"] = signal.Signals(signum).name
        signal.signal(signum, signal.SIG_DFL)  # a second one ends the process at once

    signal.signal(signal.SIGINT, on_signal)
    signal.signal(signal.SIGTERM, on_signal)

    view = LiveView(ansi=True if args.ansi else False if args.plain else None)
    pools = PoolPair(args.ingest, args.publish, args.query, args.pool, args.shadow_pool,
                     args.client_id)
    status = 0
    run = None
    try:
        pools.start()
        run = Run(args, pools)
        stream(run, view, stop)
    except Rejected as error:
        print(f"demo: the daemon refused a batch (a bug in the simulation): {error}",
              file=sys.stderr)
        status = 1
    except (YokeError, TimeoutError) as error:
        print(f"demo: the daemon did not answer: {error}", file=sys.stderr)
        status = 1
    finally:
        pools.close()
    if run is None:
        return status or 1
    final = run.frame()
    final["stopped_by"] = stop["signal"] or "end of run"
    view.finish(final)
    lead = pools.lead
    busiest = sorted(((-n, v) for v, n in lead.pairings.items()
                      if dispatch_model.is_courier(v)))[:1]
    if busiest:
        final["busy_courier"] = busiest[0][1]
        final["busy_courier_pairings"] = -busiest[0][0]
        courier = run.evening.couriers.get(busiest[0][1]) or run.evening.away.get(busiest[0][1])
        final["busy_courier_deliveries"] = courier.deliveries if courier else None
    final["seed"] = args.seed
    if args.result:
        with open(args.result, "w") as out:
            json.dump(final, out, indent=1, sort_keys=True)
            out.write("\n")
    return status


if __name__ == "__main__":
    sys.exit(main())
