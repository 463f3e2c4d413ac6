"""End to end: a generated event stream through `yoke send` into a real yoked, checked against
`yoke replay` of the script and of the daemon's own journal, and against NetworkX; and a script
whose middle batch the daemon refuses."""

import os
import unittest

import networkx as nx

from e2e_harness import (Daemon, check_binaries, check_matching_in_graph, gen_stream,
                         metric_value, networkx_weight, replay_commits, replay_final_matching,
                         scaled)


class StreamTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def run_stream(self, seed, vertices, events, batch, extra=(), send_args=()):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", vertices, events, batch, seed, extra)
        sent = daemon.yoke_json("send", path, *send_args)
        batches = len(script.batches)
        self.assertEqual(sent["batches"], batches)
        self.assertEqual(sent["events"], script.event_count)
        self.assertEqual((sent["first_seq"], sent["last_seq"]), (1, batches))
        self.assertEqual(sent["duplicates"], 0)

        summary = daemon.yoke_json("query", "summary")
        # Contract (ingest.proto, Accepted.seq): one seq per accepted batch, so each batch was
        # applied exactly once when the final seq is the number of batches.
        self.assertEqual(summary["seq"], batches)
        # Reference: `yoke replay SCRIPT`, the same engine without the daemon.
        script_commits = replay_commits(path)
        self.assertEqual(len(script_commits), batches)
        self.assertEqual(summary["weight"], script_commits[-1]["weight"])
        # Oracle: NetworkX max_weight_matching on the final graph rebuilt from the script.
        graph = script.graph()
        self.assertEqual(summary["weight"], networkx_weight(graph))
        self.assertEqual(summary["vertices"], graph.number_of_nodes())
        self.assertEqual(summary["edges"], graph.number_of_edges())

        # Reference for the exact pairs: `yoke replay DATA_DIR --diffs` replays the journal,
        # committing at the daemon's window boundaries, so ties break the same way.
        matching = daemon.yoke_json("query", "matching")
        pairs = {(a, b) for a, b, _ in matching["matching"]}
        replay_pairs, journal_commits = replay_final_matching(daemon.data_dir)
        self.assertEqual(pairs, replay_pairs)
        self.assertEqual(journal_commits[-1]["seq"], batches)
        self.assertEqual(journal_commits[-1]["weight"], summary["weight"])
        self.assertEqual(matching["seq"], batches)
        self.assertEqual(matching["weight"], summary["weight"])
        self.assertEqual(len(pairs), summary["pairs"])
        self.assertEqual(matching["pairs"], summary["pairs"])
        # Common knowledge: the pairs form a matching of the final graph with that weight.
        check_matching_in_graph(self, pairs, graph, summary["weight"])
        for a, b, w in matching["matching"]:
            self.assertEqual(w, graph[a][b]["weight"])

        # The /metrics page agrees (daemon_metrics.cpp: batches by outcome, pool gauges).
        text = daemon.metrics_text()
        self.assertEqual(metric_value(text, "yoke_batches_total", pool="default",
                                      outcome="accepted"), batches)
        self.assertEqual(metric_value(text, "yoke_pool_seq", pool="default"), batches)
        self.assertEqual(metric_value(text, "yoke_pool_weight", pool="default"),
                         summary["weight"])
        self.assertEqual(metric_value(text, "yoke_events_applied_total", pool="default"),
                         script.event_count)
        return daemon, script

    def test_city_stream_windows_of_many_batches(self):
        # Up to 32 batches in flight: the batching window gathers several per commit.
        self.run_stream(seed=11, vertices=scaled(260, 120), events=scaled(6000, 1200),
                        batch=20, extra=("--batch-max", "60", "--mix", "test"))

    def test_city_stream_one_batch_per_window(self):
        # One batch in flight: every batch is its own commit.
        daemon, script = self.run_stream(seed=12, vertices=scaled(200, 80),
                                         events=scaled(1500, 400), batch=15,
                                         send_args=("--in-flight", "1"))
        self.assertEqual(len(replay_commits(daemon.data_dir)), len(script.batches))

    def test_scrambled_64_bit_keys(self):
        # Keys near 2^64 - 1 survive the wire, the journal and the JSON of the client.
        daemon, script = self.run_stream(seed=13, vertices=scaled(150, 60),
                                         events=scaled(1500, 300), batch=25,
                                         extra=("--scrambled-keys", "--mix", "test"))
        keys = set(script.graph().nodes())
        self.assertTrue(any(k >= 1 << 63 for k in keys))


class ModesTest(unittest.TestCase):
    """Pools declared in the config file with the other two modes (yoked.example.toml,
    [pools.NAME] mode)."""

    def setUp(self):
        check_binaries()

    def test_max_cardinality_and_perfect_pools(self):
        daemon = Daemon(self, config='[pools.gate]\nmode = "max-cardinality"\n'
                                     '[pools.ferry]\nmode = "perfect"\n').start()
        streams = {
            "gate": gen_stream(os.path.join(daemon.dir, "gate.txt"), "city", scaled(120, 50),
                               scaled(1500, 300), 20, seed=14, extra=("--mix", "test")),
            "ferry": gen_stream(os.path.join(daemon.dir, "ferry.txt"), "dispatch",
                                scaled(100, 40), scaled(1500, 300), 20, seed=15),
        }
        for pool, script in streams.items():
            daemon.yoke("send", script.path, "--pool", pool)
        for pool, script in streams.items():
            graph = script.graph()
            summary = daemon.summary(pool)
            self.assertEqual(summary["seq"], len(script.batches))
            # Oracle: NetworkX max_weight_matching with maxcardinality=True, the most weight
            # among the matchings of most pairs (perfect mode holds the same when no perfect
            # matching exists, proto Mode).
            oracle = nx.max_weight_matching(graph, maxcardinality=True)
            self.assertEqual(summary["pairs"], len(oracle), pool)
            self.assertEqual(summary["weight"], sum(graph[u][v]["weight"] for u, v in oracle))
            if pool == "ferry":
                self.assertEqual(summary["no_perfect_matching"],
                                 2 * len(oracle) < graph.number_of_nodes())
            # Reference: the journal replayed in the pool's own mode (from its created record).
            pairs, commits = replay_final_matching(daemon.data_dir, "--pool", pool)
            self.assertEqual(daemon.matching(pool)[2], pairs, pool)
            self.assertEqual(commits[-1]["weight"], summary["weight"])
            self.assertEqual(daemon.yoke_json("query", "summary", "--pool", pool)["mode"],
                             {"gate": "max-cardinality", "ferry": "perfect"}[pool])


class SendRejectedBatchTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_bad_batch_in_the_middle(self):
        daemon = Daemon(self).start()
        base = gen_stream(os.path.join(daemon.dir, "base.txt"), "city", scaled(120, 60),
                          scaled(600, 200), 20, seed=21)
        good = base.prefix(6)
        # Batch 7 unsets an edge that was never there (UNKNOWN_EDGE), at its third event; the
        # batches after it would be fine on their own.
        ids = sorted(good.graph().nodes())
        bad_lines = [f"set {ids[0]} {ids[1]} 5", f"set {ids[2]} {ids[3]} 6",
                     f"unset {ids[0]} 999999999", f"set {ids[4]} {ids[5]} 7"]
        text = good.text() + "# the bad batch\n" + "\n".join(bad_lines) + "\ncommit\n" + \
            base.suffix(6).prefix(4).text()
        path = os.path.join(daemon.dir, "bad.txt")
        with open(path, "w") as out:
            out.write(text)
        bad_line = text.splitlines().index(bad_lines[2]) + 1

        result = daemon.yoke("send", path, expect=2)
        # `yoke send --help`: a batch the daemon rejects exits 2 naming FILE:LINE of its event.
        self.assertIn(f"{path}:{bad_line}", result.stderr)
        # 999999999 is no vertex of the pool: no such edge (protocol.proto, UNKNOWN_EDGE)
        self.assertIn("UNKNOWN_EDGE", result.stderr)

        summary = daemon.summary()
        # The six batches before it are applied, and nothing after it: the later batches name
        # the refused one as their after_batch and are refused with OUT_OF_ORDER
        # (events.proto, EventBatch.after_batch).
        self.assertEqual(summary["seq"], 6)
        self.assertEqual(summary["weight"], replay_commits(good.write(
            os.path.join(daemon.dir, "good.txt")).path)[-1]["weight"])
        # Oracle: NetworkX on the graph of the six batches.
        self.assertEqual(summary["weight"], networkx_weight(good.graph()))
        self.assertEqual(len(daemon.log_lines("batch_rejected")) >= 1, True)

    def test_unknown_edge_names_its_line(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "edge.txt")
        with open(path, "w") as out:
            out.write("set 1 2 10\nset 3 4 20\ncommit\n# comment\nset 2 3 50\nunset 1 3\ncommit\n")
        result = daemon.yoke("send", path, expect=2)
        self.assertIn(f"{path}:6", result.stderr)
        self.assertIn("UNKNOWN_EDGE", result.stderr)
        summary = daemon.summary()
        # Common knowledge: {1-2, 3-4} weighs 30.
        self.assertEqual((summary["seq"], summary["weight"], summary["pairs"]), (1, 30, 2))


if __name__ == "__main__":
    unittest.main()
