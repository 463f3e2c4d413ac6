"""End to end: the Python client library (tools/python/yoke_client) against a real yoked.

Sender.send_all must end where `yoke send` ends, apply each batch exactly once across a SIGKILL,
and report refusals precisely; Query must return what `yoke query` prints; Watcher.catch_up must
end at the daemon's matching. The oracles: `yoke replay SCRIPT` and NetworkX
max_weight_matching (networkx_weight in the harness) on the final graph."""

import os
import threading
import time
import unittest

from e2e_harness import (SLOWDOWN, Daemon, check_binaries, gen_stream, networkx_weight,
                         replay_commits, scaled)
from yoke.v1 import events_pb2
from yoke_client import (Query, QueryError, Rejected, Sender, Unavailable, Watcher, add_vertex,
                         hold_pair, release_pair, remove_vertex, set_edge, unset_edge)
from yoke_client.events import to_proto


def tuples(script):
    """The script's batches as event tuples: (kind, u, v, w)."""
    return [[(kind, u, v, w) for _, kind, u, v, w in batch] for batch in script.batches]


class PythonClientTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_send_all_ends_where_yoke_send_ends(self):
        daemon = Daemon(self).start()
        script = gen_stream(os.path.join(daemon.dir, "harbour.txt"), "city", scaled(200, 60),
                            scaled(2000, 400), 20, seed=41, extra=("--mix", "test"))
        seqs = Sender(daemon.ingest, pool="harbour", in_flight=16).send_all(tuples(script))
        self.assertEqual(seqs, list(range(1, len(script.batches) + 1)))
        daemon.yoke("send", script.path, "--pool", "cli")

        query = Query(daemon.query)
        mine, theirs = query.summary("harbour"), query.summary("cli")
        self.assertEqual({**mine, "pool": "cli"}, theirs)
        self.assertEqual(mine["weight"], replay_commits(script.path)[-1]["weight"])
        self.assertEqual(mine["weight"], networkx_weight(script.graph()))

    def test_query_dicts_are_what_yoke_query_prints(self):
        daemon = Daemon(self).start()
        sender = Sender(daemon.ingest, pool="quay")
        sender.send([set_edge(1, 2, 5), set_edge(2, 3, 7), set_edge(3, 4, 6), add_vertex(9)])
        query = Query(daemon.query)
        for kind, mine, extra in (
                ("summary", query.summary("quay"), ()),
                ("matching", query.matching("quay"), ()),
                ("stats", query.stats("quay"), ()),
                ("mate", query.mate("quay", 2), ("--vertex", "2")),
                ("mate", query.mate("quay", 9), ("--vertex", "9")),
                ("explain", query.explain("quay", 1, 2), ("--vertex", "1", "--alternatives", "2"))):
            self.assertEqual(mine, daemon.yoke_json("query", kind, "--pool", "quay", *extra),
                             kind)
        self.assertIsNone(query.mate("quay", 9)["mate"])
        health = query.health()
        self.assertTrue(health["ok"])
        self.assertEqual(set(health), {"ok", "status", "uptime_s", "pools", "daemon_version"})
        taken = query.snapshot("quay")
        self.assertEqual(taken["pools"], [{"pool": "quay", "seq": 1}])

    def test_rejected_batch_names_code_and_indices(self):
        daemon = Daemon(self).start()
        sender = Sender(daemon.ingest, pool="mill")
        self.assertEqual(sender.send([set_edge(1, 2, 4)]).seq, 1)
        good, later = [set_edge(3, 4, 2)], [set_edge(5, 6, 1)]
        bad = [set_edge(7, 8, 3), add_vertex(9), unset_edge(1, 3)]  # no edge {1, 3}
        with self.assertRaises(Rejected) as caught:
            sender.send_all([good, bad, later])
        self.assertEqual((caught.exception.code_name, caught.exception.event_index,
                          caught.exception.batch_index), ("UNKNOWN_EDGE", 2, 1))
        # The batch before it is applied, none after it; the sender goes on from there.
        self.assertEqual(Query(daemon.query).summary("mill")["seq"], 2)
        with self.assertRaises(Rejected) as caught:
            sender.send([add_vertex(1)])
        self.assertEqual((caught.exception.code_name, caught.exception.event_index),
                         ("VERTEX_EXISTS", 0))
        self.assertEqual(sender.send_all([later, [add_vertex(20)]]), [3, 4])

    def test_watcher_catch_up_ends_at_the_daemon_matching(self):
        daemon = Daemon(self).start()
        script = gen_stream(os.path.join(daemon.dir, "brissa.txt"), "dispatch", scaled(150, 50),
                            scaled(1500, 300), 15, seed=42)
        batches = tuples(script)
        half = len(batches) // 2
        sender = Sender(daemon.ingest, pool="brissa")
        sender.send_all(batches[:half])
        # A pool whose name extends "brissa": its diffs reach the subscription and are dropped.
        Sender(daemon.ingest, pool="brissamar").send_all(batches[:3])

        watcher = Watcher(daemon.publish, "brissa", query_endpoint=daemon.query).catch_up()
        self.addCleanup(watcher.close)
        self.assertEqual(watcher.seq, half)
        last = sender.send_all(batches[half:])[-1]
        Sender(daemon.ingest, pool="brissamar").send_all(batches[3:6])
        seen = []
        deadline = time.monotonic() + 20 * SLOWDOWN
        while watcher.seq < last and time.monotonic() < deadline:
            diff = watcher.next(1.0)
            if diff is not None:
                seen.append(diff)
        self.assertEqual(watcher.seq, last)
        self.assertTrue(seen)
        self.assertTrue(all(diff["pool"] == "brissa" for diff in seen))
        self.assertEqual(seen[-1]["seq"], last)

        whole = Query(daemon.query).matching("brissa")
        self.assertEqual(whole["seq"], watcher.seq)
        mates = {}
        for a, b, _ in whole["matching"]:
            mates[a], mates[b] = b, a
        self.assertEqual(watcher.matching, mates)
        self.assertEqual(watcher.weight, whole["weight"])
        self.assertEqual(watcher.weight, networkx_weight(script.graph()))

    def test_sigkill_during_send_all_applies_each_batch_once(self):
        daemon = Daemon(self).start()
        script = gen_stream(os.path.join(daemon.dir, "yard.txt"), "city", scaled(300, 80),
                            scaled(4000, 800), 10, seed=43)
        batches = tuples(script)
        sender = Sender(daemon.ingest, pool="yard", in_flight=8, timeout_s=1.0 * SLOWDOWN,
                        retries=30)
        outcome = {}

        def run():
            try:
                outcome["seqs"] = sender.send_all(batches)
            except Exception as error:  # reported below
                outcome["error"] = error

        thread = threading.Thread(target=run)
        thread.start()
        deadline = time.monotonic() + 60 * SLOWDOWN
        while time.monotonic() < deadline and (daemon.summary("yard") or {"seq": 0})["seq"] < 30:
            time.sleep(0.005)
        killed_at = daemon.summary("yard")["seq"]
        self.assertGreaterEqual(killed_at, 30, "the stream did not start")
        daemon.restart()
        thread.join(120 * SLOWDOWN)
        self.assertNotIn("error", outcome, outcome.get("error"))
        self.assertLess(killed_at, len(batches), "the stream ended before the kill")
        summary = Query(daemon.query).summary("yard")
        self.assertEqual(summary["seq"], len(batches))
        self.assertEqual(outcome["seqs"][-1], len(batches))
        self.assertEqual(summary["weight"], networkx_weight(script.graph()))
        self.assertEqual(summary["weight"], replay_commits(script.path)[-1]["weight"])

    def test_a_sender_idle_past_the_horizon_goes_on(self):
        # events.proto, the exactly-once horizon, against a real yoked: a client silent for
        # idle_seconds is forgotten at the pool's next window; its next batch names an
        # after_batch the daemon no longer holds (OUT_OF_ORDER without last_batch), and the
        # Sender sends it again without the condition: applied once.
        daemon = Daemon(self, config="[ledger]\nidle_seconds = 1\n").start()
        idle = Sender(daemon.ingest, pool="quay", client_id="idle-tug", timeout_s=2 * SLOWDOWN)
        self.assertEqual(idle.send([set_edge(1, 2, 5)]).seq, 1)
        time.sleep(1.2)
        other = Sender(daemon.ingest, pool="quay", client_id="busy-tug")
        self.assertEqual(other.send([set_edge(3, 4, 5)]).seq, 2)  # this window forgets idle-tug
        ack = idle.send([set_edge(5, 6, 5)])
        self.assertEqual((ack.seq, ack.duplicate), (3, False))
        self.assertEqual(Query(daemon.query).summary("quay")["seq"], 3)
        stats = Query(daemon.query).stats("quay")
        self.assertEqual(stats["batches_accepted"], 3)

    def test_query_errors(self):
        daemon = Daemon(self).start()
        query = Query(daemon.query)
        with self.assertRaises(QueryError) as caught:
            query.summary("nowhere")
        self.assertEqual(caught.exception.code_name, "UNKNOWN_POOL")
        Sender(daemon.ingest, pool="dock").send([set_edge(1, 2, 3)])
        with self.assertRaises(QueryError) as caught:
            query.mate("dock", 77)
        self.assertEqual(caught.exception.code_name, "UNKNOWN_VERTEX")
        self.assertEqual(query.mate("dock", 1)["mate"], 2)  # the socket still serves
        silent = Query("ipc://" + os.path.join(daemon.dir, "nobody.sock"), timeout_s=0.2)
        with self.assertRaises(Unavailable):
            silent.health()


class EventTuplesTest(unittest.TestCase):
    """The tuples and their messages, without a daemon: proto/yoke/v1/events.proto is the spec
    (pairs carry v, only SET_EDGE carries w)."""

    def test_hold_and_release_tuples_encode_as_pair_events(self):
        self.assertEqual(hold_pair(4, 9), ("hold", 4, 9))
        self.assertEqual(release_pair(9, 4), ("release", 9, 4))
        self.assertEqual(to_proto(hold_pair(4, 9)),
                         events_pb2.Event(kind=events_pb2.Event.HOLD_PAIR, u=4, v=9))
        self.assertEqual(to_proto(release_pair(9, 4)),
                         events_pb2.Event(kind=events_pb2.Event.RELEASE_PAIR, u=9, v=4))
        self.assertEqual(to_proto(("hold", 2**64 - 1, 0)).u, 2**64 - 1)
        with self.assertRaises(ValueError):
            to_proto(("move", 1, 2))

    def test_one_constructor_per_wire_kind(self):
        E = events_pb2.Event
        cases = [(add_vertex(7), E(kind=E.ADD_VERTEX, u=7)),
                 (set_edge(7, 8, -3), E(kind=E.SET_EDGE, u=7, v=8, w=-3)),
                 (unset_edge(8, 7), E(kind=E.UNSET_EDGE, u=8, v=7)),
                 (remove_vertex(8), E(kind=E.REMOVE_VERTEX, u=8)),
                 (hold_pair(7, 8), E(kind=E.HOLD_PAIR, u=7, v=8)),
                 (release_pair(8, 7), E(kind=E.RELEASE_PAIR, u=8, v=7))]
        for event, message in cases:
            self.assertEqual(to_proto(event), message, event)
        # Wire numbers never change: old journals and snapshots still read.
        self.assertEqual((E.HOLD_PAIR, E.RELEASE_PAIR), (5, 6))


if __name__ == "__main__":
    unittest.main()
