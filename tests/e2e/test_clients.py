"""End to end: several `yoke send` processes at once into one yoked, into different pools and
into one shared pool on disjoint vertex ranges."""

import json
import os
import unittest

import zmq

from e2e_harness import (SLOWDOWN, Daemon, _dealer, check_binaries, check_matching_in_graph,
                         gen_stream, make_batch_request, networkx_weight, replay_final_matching,
                         scaled)
from yoke.v1 import ingest_pb2

SHARED_OFFSET = 1_000_000  # the second sender into the shared pool uses ids from here on


class ConcurrentClientsTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_four_senders(self):
        # A 2 ms batching window paces the senders that keep one batch in flight.
        daemon = Daemon(self, config="[batching]\nmax_delay_us = 2000\n").start()
        vertices, events = scaled(200, 80), scaled(3000, 600)
        harbour = gen_stream(os.path.join(daemon.dir, "harbour.txt"), "city", vertices, events,
                             20, seed=31, extra=("--batch-max", "40", "--mix", "test"))
        hill = gen_stream(os.path.join(daemon.dir, "hill.txt"), "dispatch", vertices, events, 25,
                          seed=32)
        # Small batches, one in flight each: the two market senders run long enough to overlap.
        market_a = gen_stream(os.path.join(daemon.dir, "market_a.txt"), "city", vertices, events,
                              5, seed=33)
        market_b = gen_stream(os.path.join(daemon.dir, "market_b_base.txt"), "random", vertices,
                              events, 8, seed=34).shifted(SHARED_OFFSET)
        market_b.write(os.path.join(daemon.dir, "market_b.txt"))

        senders = [("harbour", harbour, ()), ("hill", hill, ("--in-flight", "4")),
                   ("market", market_a, ("--in-flight", "1")),
                   ("market", market_b, ("--in-flight", "1"))]
        # The shared pool's senders start first, one right after the other.
        order = [2, 3, 0, 1]
        started = {i: daemon.popen_yoke("send", senders[i][1].path, "--pool", senders[i][0],
                                        *senders[i][2]) for i in order}
        procs = [started[i] for i in range(4)]
        outputs = []
        for proc in procs:
            out, err = proc.communicate(timeout=120 * SLOWDOWN)
            self.assertEqual(proc.returncode, 0, err)
            outputs.append(json.loads(out))
        for (pool, script, _), sent in zip(senders, outputs):
            self.assertEqual(sent["pool"], pool)
            self.assertEqual(sent["batches"], len(script.batches))
            self.assertEqual(sent["duplicates"], 0)

        graphs = {"harbour": harbour.graph(), "hill": hill.graph(),
                  "market": market_b.graph(into=market_a.graph())}
        batches = {"harbour": len(harbour.batches), "hill": len(hill.batches),
                   "market": len(market_a.batches) + len(market_b.batches)}
        # The shared pool's two senders really interleaved (seqs of one are not one block).
        a_out, b_out = outputs[2], outputs[3]
        self.assertTrue(a_out["first_seq"] < b_out["last_seq"] and
                        b_out["first_seq"] < a_out["last_seq"],
                        f"the two market senders did not overlap: {a_out} {b_out}")

        for pool, graph in graphs.items():
            summary = daemon.summary(pool)
            # Contract: one seq per accepted batch, so each batch was applied once.
            self.assertEqual(summary["seq"], batches[pool], pool)
            # Oracle: NetworkX max_weight_matching on the pool's final graph.
            self.assertEqual(summary["weight"], networkx_weight(graph), pool)
            self.assertEqual((summary["vertices"], summary["edges"]),
                             (graph.number_of_nodes(), graph.number_of_edges()), pool)
            seq, weight, pairs = daemon.matching(pool)
            self.assertEqual((seq, weight), (summary["seq"], summary["weight"]))
            # Common knowledge: a matching of the pool's graph with that weight.
            check_matching_in_graph(self, pairs, graph, weight)
            # Reference: the journal replayed pool by pool gives the same pairs.
            replay_pairs, commits = replay_final_matching(daemon.data_dir, "--pool", pool)
            self.assertEqual(pairs, replay_pairs, pool)
            self.assertEqual(commits[-1]["seq"], batches[pool])

        health = daemon.ask("health").health
        self.assertEqual(health.pools, 3)


class SameWindowTest(unittest.TestCase):
    """Raw clients whose batches share one batching window (a long one: 300 ms)."""

    def setUp(self):
        check_binaries()

    def test_retry_and_successor_in_the_same_window(self):
        daemon = Daemon(self, config="[batching]\nmax_delay_us = 300000\n").start()
        sock = _dealer(daemon.ingest)
        self.addCleanup(sock.close)
        batch = make_batch_request([("set", 1, 2, 10)], client_id="tram", client_batch=7)
        successor = make_batch_request([("set", 2, 3, 25)], client_id="tram", client_batch=8,
                                       after_batch=7)
        stranger = make_batch_request([("set", 4, 5, 3)], client_id="ferry", client_batch=1)
        # Sent back to back: the original, its retry, the next batch, another client's batch.
        for request in (batch, batch, successor, stranger):
            sock.send(request.SerializeToString())
        acks = []
        while len(acks) < 4 and sock.poll(10000 * SLOWDOWN, zmq.POLLIN):
            reply = ingest_pb2.IngestReply()
            reply.ParseFromString(sock.recv())
            acks.append(reply.ack)
        self.assertEqual(len(acks), 4, acks)
        by_key = {}
        for ack in acks:
            self.assertTrue(ack.HasField("accepted"), ack)
            by_key.setdefault((ack.client_id, ack.client_batch), []).append(ack.accepted)
        # ingest.proto: the retry is acknowledged (once durable) as a duplicate, not applied.
        self.assertEqual(sorted((a.seq, a.duplicate) for a in by_key[("tram", 7)]),
                         [(1, False), (1, True)])
        self.assertEqual([(a.seq, a.duplicate) for a in by_key[("tram", 8)]], [(2, False)])
        self.assertEqual([(a.seq, a.duplicate) for a in by_key[("ferry", 1)]], [(3, False)])
        summary = daemon.summary()
        # Common knowledge: path 1-2-3 (10, 25) and edge 4-5 (3): best is 2-3 and 4-5 = 28.
        self.assertEqual((summary["seq"], summary["weight"], summary["pairs"]), (3, 28, 2))
        # One window: one commit for the three batches.
        self.assertEqual(daemon.ask("stats").stats.commits, 1)


if __name__ == "__main__":
    unittest.main()
