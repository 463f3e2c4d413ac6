"""End to end: clean shutdown. SIGTERM (and SIGINT) end yoked with status 0 after a final
snapshot; the restart recovers from it with the same state. A SIGTERM while a client streams
loses nothing the client was told was applied."""

import json
import os
import signal
import time
import unittest
import urllib.request

from e2e_harness import (SLOWDOWN, Daemon, check_binaries, gen_stream, log_fields,
                         networkx_weight, replay_commits, scaled)


class ShutdownTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_snapshots_after_events_and_not_when_idle(self):
        # snapshots.after_events: a snapshot once that many events were journalled since the
        # last one (daemon_config.h); the timer skips a daemon idle since its last snapshot.
        daemon = Daemon(self, config="[snapshots]\nafter_events = 500\ninterval_seconds = 1\n")
        daemon.start()
        path = os.path.join(daemon.dir, "harbour.txt")
        gen_stream(path, "city", 100, 2000, 20, seed=17)
        daemon.yoke("send", path)
        # Written off the loop, one at a time: the last ones may land after the last ack, so
        # wait until the count has stood still for 0.2 s (at most 2 s in all).
        give_up = time.monotonic() + 2.0
        by_events, still_since = len(daemon.log_lines("snapshot_written")), time.monotonic()
        while time.monotonic() < give_up:
            time.sleep(0.02)
            count = len(daemon.log_lines("snapshot_written"))
            if count != by_events:
                by_events, still_since = count, time.monotonic()
            elif by_events >= 2 and time.monotonic() - still_since >= 0.2:
                break
        self.assertGreaterEqual(by_events, 2, daemon.log_text())  # > 2000 events, 500 a time
        time.sleep(1.5)  # the timer fires at least once: one snapshot of the last state at most
        settled = len(daemon.log_lines("snapshot_written"))
        self.assertLessEqual(settled - by_events, 1, daemon.log_text())
        time.sleep(2.5)  # idle: the timer fires twice more and writes nothing
        self.assertEqual(len(daemon.log_lines("snapshot_written")), settled, daemon.log_text())
        summary = daemon.summary()
        self.assertEqual(daemon.ask("stats").stats.last_snapshot_seq, summary["seq"])

    def test_sigterm_snapshot_and_restart(self):
        daemon = Daemon(self).start()
        streams = {}
        for index, pool in enumerate(["quay", "ridge"]):
            path = os.path.join(daemon.dir, f"{pool}.txt")
            streams[pool] = gen_stream(path, "city", scaled(200, 80), scaled(2500, 500), 20,
                                       seed=71 + index, extra=("--mix", "test"))
            daemon.yoke("send", path, "--pool", pool)
        before = {pool: (daemon.summary(pool), daemon.matching(pool)) for pool in streams}
        # The HTTP health endpoint says ok while serving.
        with urllib.request.urlopen(daemon.metrics_url.replace("/metrics", "/healthz"),
                                    timeout=10) as response:
            self.assertEqual((response.status, response.read()), (200, b"ok\n"))

        status = daemon.terminate()
        self.assertEqual(status, 0, daemon.diagnostics())
        written = daemon.log_lines("snapshot_written")
        self.assertEqual(len(written), 1, daemon.log_text())
        self.assertEqual(len(daemon.log_lines("stopped")), 1)
        self.assertIn("status=0", daemon.log_lines("stopped")[0])
        journal_position = int(log_fields(written[0])["journal_position"])
        self.assertEqual(int(log_fields(written[0])["pools"]), 2)
        # The final snapshot is a whole file named by its journal position.
        self.assertEqual([os.path.basename(p) for p in daemon.snapshot_files()],
                         [f"snapshot-{journal_position:020d}.yks"])

        daemon.start()
        recovered = log_fields(daemon.log_lines("recovered")[-1])
        self.assertEqual(recovered["snapshot_position"], str(journal_position))
        self.assertEqual(recovered["journal_records"], "0")  # nothing after the snapshot
        for pool, stream in streams.items():
            self.assertEqual((daemon.summary(pool), daemon.matching(pool)), before[pool], pool)
            # Oracle: NetworkX on the pool's final graph.
            self.assertEqual(before[pool][0]["weight"], networkx_weight(stream.graph()))
        self.assertEqual(daemon.ask("stats", "quay").stats.last_snapshot_seq,
                         before["quay"][0]["seq"])

        # A second shutdown without new batches, then SIGINT: the same again.
        daemon.proc.send_signal(signal.SIGINT)
        self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 0, daemon.diagnostics())
        daemon.start()
        for pool in streams:
            self.assertEqual((daemon.summary(pool), daemon.matching(pool)), before[pool], pool)
        # And the pools go on taking batches where they were.
        more = os.path.join(daemon.dir, "more.txt")
        with open(more, "w") as out:
            out.write("set 900001 900002 77\ncommit\n")
        sent = daemon.yoke_json("send", more, "--pool", "quay")
        self.assertEqual(sent["first_seq"], before["quay"][0]["seq"] + 1)
        self.assertEqual(daemon.summary("quay")["weight"], before["quay"][0]["weight"] + 77)

    def test_sigterm_while_streaming(self):
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(220, 80), scaled(6000, 1200), 10, seed=73)
        batches = len(script.batches)
        sender = daemon.popen_yoke("send", path, "--in-flight", "2", "--timeout-ms", "300",
                                   "--retries", "50")
        deadline = time.monotonic() + 60 * SLOWDOWN
        while time.monotonic() < deadline:
            summary = daemon.summary()
            if summary is not None and summary["seq"] >= batches // 3:
                break
            time.sleep(0.005)
        status = daemon.terminate()
        self.assertEqual(status, 0, daemon.diagnostics())
        self.assertEqual(len(daemon.log_lines("snapshot_written")), 1)
        time.sleep(0.2)
        daemon.start()
        out, err = sender.communicate(timeout=120 * SLOWDOWN)
        self.assertEqual(sender.returncode, 0, f"{err}\n{daemon.diagnostics()}")
        self.assertEqual(json.loads(out)["last_seq"], batches)
        summary = daemon.summary()
        # Exactly once across the shutdown; reference `yoke replay SCRIPT`, oracle NetworkX.
        self.assertEqual(summary["seq"], batches)
        self.assertEqual(summary["weight"], replay_commits(path)[-1]["weight"])
        self.assertEqual(summary["weight"], networkx_weight(script.graph()))


if __name__ == "__main__":
    unittest.main()
