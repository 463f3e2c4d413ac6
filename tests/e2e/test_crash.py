"""End to end: SIGKILL yoked while `yoke send` streams, at start-up, right after and during a
snapshot; restart it on the same data directory each time. Nothing acknowledged is lost and
nothing is applied twice."""

import contextlib
import json
import os
import signal
import time
import unittest

from e2e_harness import (SLOWDOWN, Daemon, ErrorCode, IngestClient, Subscriber, _dealer, ask,
                         check_binaries, check_matching_in_graph, gen_stream, log_fields,
                         make_batch_request, networkx_weight, query_request, replay_commits,
                         replay_final_matching, rng, scaled, small_scale)

KILLS = 6


def current_seq(daemon, pool="default"):
    """The pool's seq, or None when the daemon does not answer (yet) or holds no such pool."""
    reply = ask(daemon.query, "summary", pool, timeout_ms=300)
    if reply is None or not reply.HasField("summary"):
        return None
    return reply.summary.seq



@contextlib.contextmanager
def held(*processes):
    """Stops the processes that are still running (SIGSTOP) and lets them go on at the end."""
    running = [p for p in processes if p.poll() is None]
    for process in running:
        process.send_signal(signal.SIGSTOP)
    try:
        yield
    finally:
        for process in running:
            if process.poll() is None:
                process.send_signal(signal.SIGCONT)

class CrashTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def check_final_state(self, daemon, script, script_path):
        batches = len(script.batches)
        summary = daemon.summary()
        # Exactly once: one seq per applied batch (ingest.proto, Accepted.seq).
        self.assertEqual(summary["seq"], batches)
        # Reference: `yoke replay SCRIPT`; oracle: NetworkX on the final graph.
        self.assertEqual(summary["weight"], replay_commits(script_path)[-1]["weight"])
        graph = script.graph()
        self.assertEqual(summary["weight"], networkx_weight(graph))
        # Reference for the pairs: the journal replayed with the daemon's commit points.
        seq, weight, pairs = daemon.matching()
        replay_pairs, commits = replay_final_matching(daemon.data_dir)
        self.assertEqual(commits[-1]["seq"], batches)
        self.assertEqual(pairs, replay_pairs)
        check_matching_in_graph(self, pairs, graph, weight)
        return commits

    def test_sigkill_while_streaming(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        # Long enough that the sender is still streaming at the last kill point, also in the
        # sanitizer run (a 1500-event stream there once ended after 4 of the 6 kills).
        script = gen_stream(path, "city", scaled(260, 100), scaled(10000, 4000), 8, seed=51,
                            extra=("--batch-max", "24", "--mix", "test"))
        batches = len(script.batches)
        subscriber = Subscriber(daemon.publish, ["default"])
        self.addCleanup(subscriber.close)

        random = rng(51)
        # Kill points: the pool's seq reaching a seeded threshold, then a seeded delay of a few
        # milliseconds, so the kills land anywhere in receive / journal / repair / publish.
        thresholds = sorted(random.sample(range(batches // 20, batches * 8 // 10), KILLS))
        sender = daemon.popen_yoke("send", path, "--timeout-ms", "300", "--retries", "50",
                                   "--in-flight", "2")
        killed_at = []
        seq = None
        for threshold in thresholds:
            while sender.poll() is None:
                seq = current_seq(daemon)
                if seq is not None and seq >= threshold:
                    break
                time.sleep(0.003)
            if sender.poll() is not None:
                break
            # The sender is held while the daemon is down and restarting, so that it cannot run
            # to the end of the stream before the next kill point (its clock runs on: when it
            # goes on, its timeouts have expired and its retries come into play). The daemon
            # still works through the batches in flight until the kill.
            with held(sender):
                time.sleep(random.uniform(0, 0.03))
                daemon.kill()
                killed_at.append(seq)
                time.sleep(random.choice([0, 0, random.uniform(0.1, 0.6)]))
                daemon.start()
        out, err = sender.communicate(timeout=300 * SLOWDOWN)
        self.assertEqual(sender.returncode, 0, f"{err}\n{daemon.diagnostics()}")
        sent = json.loads(out)
        self.assertEqual(len(killed_at), KILLS,
                         f"the stream ended after {len(killed_at)} kills; make it longer")
        self.assertEqual(sent["batches"], batches)
        self.assertEqual(sent["last_seq"], batches)
        self.assertEqual(len(daemon.log_lines("recovered")), KILLS + 1)

        commits = self.check_final_state(daemon, script, path)

        # Every diff a subscriber received across the restarts: the weight `yoke replay
        # DATA_DIR` prints for the commit line with the same seq (the journal replayed with the
        # daemon's commit points).
        subscriber.wait_for_seq("default", batches, 5)
        by_seq = {commit["seq"]: commit for commit in commits}
        received = subscriber.diffs("default")
        self.assertGreater(len(received), 0)
        self.assertEqual(subscriber.errors, [])
        previous = 0
        for diff in received:
            self.assertIn(diff.seq, by_seq, f"diff {diff.seq} is no commit of the journal")
            self.assertEqual(diff.weight, by_seq[diff.seq]["weight"], f"diff {diff.seq}")
            self.assertEqual(diff.pairs, by_seq[diff.seq]["pairs"], f"diff {diff.seq}")
            # A diff goes out after its batches are durable, so no restart goes back behind
            # one that was published.
            self.assertGreaterEqual(diff.prev_seq, previous)
            previous = diff.seq

    def test_sigkill_two_pools_every_batch_durability(self):
        # Two senders into two pools, fsync after every batch record, a longer batching window;
        # the daemon killed at seeded points while they stream.
        daemon = Daemon(self, config='[journal]\ndurability = "every-batch"\n'
                                     '[batching]\nmax_delay_us = 3000\n').start()
        scripts = {}
        for index, (pool, family) in enumerate((("east", "city"), ("west", "random"))):
            path = os.path.join(daemon.dir, f"{pool}.txt")
            scripts[pool] = gen_stream(path, family, scaled(200, 80), scaled(6000, 3000), 10,
                                       seed=54 + index, extra=("--batch-max", "30"))
        senders = [daemon.popen_yoke("send", script.path, "--pool", pool, "--timeout-ms", "300",
                                     "--retries", "50", "--in-flight", "3")
                   for pool, script in scripts.items()]
        # Kill points: the two pools' seqs together reaching seeded thresholds, then a seeded
        # delay of up to 20 ms.
        random = rng(54)
        total = sum(len(script.batches) for script in scripts.values())
        thresholds = sorted(random.sample(range(total // 10, total * 8 // 10), 4))
        kills = 0
        for threshold in thresholds:
            while any(sender.poll() is None for sender in senders):
                seqs = [current_seq(daemon, pool) for pool in scripts]
                if all(seq is not None for seq in seqs) and sum(seqs) >= threshold:
                    break
                time.sleep(0.003)
            if all(sender.poll() is not None for sender in senders):
                break
            with held(*senders):
                time.sleep(random.uniform(0, 0.02))
                daemon.kill()
                kills += 1
                daemon.start()
        for sender in senders:
            out, err = sender.communicate(timeout=300 * SLOWDOWN)
            self.assertEqual(sender.returncode, 0, f"{err}\n{daemon.diagnostics()}")
        self.assertEqual(kills, 4, "the streams ended too soon; make them longer")
        for pool, script in scripts.items():
            summary = daemon.summary(pool)
            self.assertEqual(summary["seq"], len(script.batches), pool)
            self.assertEqual(summary["weight"], replay_commits(script.path)[-1]["weight"])
            self.assertEqual(summary["weight"], networkx_weight(script.graph()), pool)
            seq, weight, pairs = daemon.matching(pool)
            replay_pairs, commits = replay_final_matching(daemon.data_dir, "--pool", pool)
            self.assertEqual(pairs, replay_pairs, pool)
            self.assertEqual(commits[-1]["seq"], seq)

    def test_sigkill_with_timer_snapshots_and_segment_rotation(self):
        # Snapshots every second (the two newest kept), 1 MiB journal segments: recovery starts
        # from a snapshot, and segments older than the oldest kept snapshot are deleted.
        # A 3 ms batching window paces the stream (one batch in flight), so the timer has time
        # to take snapshots.
        daemon = Daemon(self, config="[journal]\nsegment_bytes = 1048576\n"
                                     "[snapshots]\ninterval_seconds = 1\nkeep = 2\n"
                                     "[batching]\nmax_delay_us = 3000\n").start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(400, 150), scaled(300000, 60000), 100, seed=57,
                            extra=("--batch-max", "300"))
        batches = len(script.batches)
        sender = daemon.popen_yoke("send", path, "--timeout-ms", "300", "--retries", "50",
                                   "--in-flight", "1")
        for fraction in (0.5, 0.8):
            # Killed past the fraction of the stream, once a timer snapshot holds the pool.
            while sender.poll() is None:
                seq = current_seq(daemon)
                snapshot_taken = any(log_fields(line)["pools"] == "1"
                                     for line in daemon.log_lines("snapshot_written"))
                if seq is not None and seq >= batches * fraction and snapshot_taken:
                    break
                time.sleep(0.005)
            self.assertIsNone(sender.poll(), "the stream ended too soon; make it longer")
            daemon.kill()
            daemon.start()
            recovered = log_fields(daemon.log_lines("recovered")[-1])
            self.assertNotEqual(recovered["snapshot_position"], "none",
                                "no timer snapshot was taken before the kill")
        out, err = sender.communicate(timeout=300 * SLOWDOWN)
        self.assertEqual(sender.returncode, 0, f"{err}\n{daemon.diagnostics()}")

        summary = daemon.summary()
        self.assertEqual(summary["seq"], batches)
        # Reference `yoke replay SCRIPT`, oracle NetworkX.
        self.assertEqual(summary["weight"], replay_commits(path)[-1]["weight"])
        graph = script.graph()
        self.assertEqual(summary["weight"], networkx_weight(graph))
        seq, weight, pairs = daemon.matching()
        check_matching_in_graph(self, pairs, graph, weight)
        # Reference: `yoke replay DATA_DIR` (from the oldest snapshot kept, then the journal).
        commits = replay_commits(daemon.data_dir)
        self.assertEqual((commits[-1]["seq"], commits[-1]["weight"]), (seq, weight))
        if not small_scale():
            # Several segments were written and the oldest ones dropped after snapshots.
            dropped = [int(log_fields(line)["segments_dropped"])
                       for line in daemon.log_lines("snapshot_written")]
            self.assertGreater(sum(dropped), 0, daemon.log_text())
            first = os.path.basename(daemon.journal_segments()[0])
            self.assertNotEqual(first, f"{1:020d}.seg")

    def test_sigkill_during_startup(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(200, 80), scaled(4000, 800), 20, seed=52)
        half = len(script.batches) // 2
        first = script.prefix(half).write(os.path.join(daemon.dir, "first.txt"))
        second = script.suffix(half).write(os.path.join(daemon.dir, "second.txt"))
        daemon.yoke("send", first.path)
        before = daemon.summary()
        daemon.kill()

        random = rng(52)
        for _ in range(5):
            daemon.spawn()
            time.sleep(random.uniform(0, 0.04) * SLOWDOWN)
            daemon.kill()
        daemon.start()
        # Recovery from the journal alone: the state before the kills.
        self.assertEqual(daemon.summary(), before)
        daemon.yoke("send", second.path)
        self.check_final_state(daemon, script, path)

    def test_sigkill_right_after_snapshot(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(200, 80), scaled(4000, 800), 20, seed=53,
                            extra=("--mix", "test"))
        third = len(script.batches) // 3
        parts = [script.prefix(third), script.suffix(third).prefix(third),
                 script.suffix(2 * third)]
        for index, part in enumerate(parts):
            part.write(os.path.join(daemon.dir, f"part{index}.txt"))

        daemon.yoke("send", parts[0].path)
        before = daemon.summary()
        before_matching = daemon.matching()
        taken = daemon.yoke_json("query", "snapshot")
        self.assertEqual(taken["pools"], [{"pool": "default", "seq": third}])
        daemon.kill()
        daemon.start()
        recovered = daemon.log_lines("recovered")[-1]
        # The snapshot file is named by its journal position (daemon/snapshots/FORMAT.md).
        position = int(os.path.basename(taken["path"]).split("-")[1].split(".")[0])
        self.assertIn(f"snapshot_position={position}", recovered)
        self.assertEqual(daemon.summary(), before)
        self.assertEqual(daemon.matching(), before_matching)

        # Killed during a snapshot: the request is sent and the daemon dies a moment later.
        daemon.yoke("send", parts[1].path)
        before = daemon.summary()
        before_matching = daemon.matching()
        random = rng(53)
        for _ in range(3):
            sock = _dealer(daemon.query)
            sock.send(query_request("snapshot").SerializeToString())
            time.sleep(random.uniform(0, 0.01))
            daemon.kill()
            sock.close()
            daemon.start()
            self.assertEqual(daemon.summary(), before)
            self.assertEqual(daemon.matching(), before_matching)

        daemon.yoke("send", parts[2].path)
        summary = daemon.summary()
        self.assertEqual(summary["seq"], len(script.batches))
        # Reference and oracle on the whole script.
        self.assertEqual(summary["weight"], replay_commits(path)[-1]["weight"])
        self.assertEqual(summary["weight"], networkx_weight(script.graph()))
        # The journal replay ends at the same weight (its pairs may differ where weights tie:
        # the daemon continued from a restored snapshot, the replay from scratch).
        seq, weight, pairs = daemon.matching()
        replay_pairs, commits = replay_final_matching(daemon.data_dir)
        self.assertEqual((commits[-1]["seq"], commits[-1]["weight"]), (seq, weight))
        check_matching_in_graph(self, pairs, script.graph(), weight)

    def test_retry_ledger_survives_restarts(self):
        # events.proto, EventBatch.client_batch: a retry of an applied batch is acknowledged
        # again and not applied, also after a restart from the journal or from a snapshot
        # (records.proto, ClientMark).
        daemon = Daemon(self).start()
        client = IngestClient(daemon.ingest)
        self.addCleanup(lambda: client.close())
        first = make_batch_request([("set", 1, 2, 10), ("set", 3, 4, 7)], client_id="dock",
                                   client_batch=100)
        second = make_batch_request([("set", 2, 3, 30)], client_id="dock", client_batch=101,
                                    after_batch=100)
        self.assertEqual(client.send(first).accepted.seq, 1)
        self.assertEqual(client.send(second).accepted.seq, 2)
        state = (daemon.summary(), daemon.matching())
        for restart in ("journal", "snapshot", "snapshot-then-journal"):
            if restart.startswith("snapshot"):
                daemon.yoke("query", "snapshot")
            if restart == "snapshot-then-journal":
                other = make_batch_request([("set", 8, 9, 1)], client_id="quay", client_batch=1)
                self.assertEqual(client.send(other).accepted.seq, 3)
                state = (daemon.summary(), daemon.matching())
            daemon.kill()
            client.close()
            daemon.start()
            client = IngestClient(daemon.ingest)
            for request, seq in ((first, 1), (second, 2)):
                ack = client.send(request)
                self.assertTrue(ack.accepted.duplicate, f"{restart}: {ack}")
                # Accepted.seq of a duplicate: the seq that batch got (ingest.proto).
                self.assertEqual(ack.accepted.seq, seq, restart)
            # A batch that does not follow the last applied one is still out of order.
            stale = make_batch_request([("set", 5, 6, 1)], client_id="dock", client_batch=102,
                                       after_batch=100)
            ack = client.send(stale)
            self.assertEqual(ack.rejected.errors[0].code, ErrorCode.OUT_OF_ORDER, restart)
            self.assertEqual((daemon.summary(), daemon.matching()), state, restart)


if __name__ == "__main__":
    unittest.main()
