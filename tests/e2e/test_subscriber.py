"""End to end: the publication socket. `yoke watch` from the start and with --catch-up midway,
raw SUB sockets in Python, and topics of pools whose names share a prefix."""

import json
import os
import threading
import time
import unittest

from e2e_harness import (SLOWDOWN, Daemon, Subscriber, apply_diffs, check_binaries, gen_stream,
                         scaled)


class LineReader:
    """Reads a child's stdout lines on a thread (so a test can watch them arrive)."""

    def __init__(self, proc):
        self.proc = proc
        self.lines = []
        self._thread = threading.Thread(target=self._read, daemon=True)
        self._thread.start()

    def _read(self):
        for line in self.proc.stdout:
            self.lines.append(line)

    def json_lines(self):
        return [json.loads(line) for line in list(self.lines) if line.strip()]

    def join(self, timeout):
        self._thread.join(timeout)


def wait_until(predicate, timeout_s, what):
    deadline = time.monotonic() + timeout_s * SLOWDOWN
    while time.monotonic() < deadline:
        if predicate():
            return
        time.sleep(0.02)
    raise AssertionError(f"timed out waiting for {what}")


def json_pairs(pairs):
    return {(a, b) for a, b, _ in pairs}


class SubscriberTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def wait_connected(self, daemon, subscriber, pool):
        """ZeroMQ connects a SUB asynchronously and a PUB drops what it sends before the
        subscription arrives: sends empty batches into `pool` until `subscriber` sees one."""
        for _ in range(100 * SLOWDOWN):
            daemon.yoke("send", "-", "--pool", pool, input_text="commit\n")
            time.sleep(0.05)
            if subscriber.diffs(pool):
                return
        raise AssertionError("the subscriber never received a diff")

    def test_watch_from_start_and_late_catch_up(self):
        # A batching window of 5 ms paces the stream (one batch in flight waits it out each
        # time), so the late subscriber surely starts midway, also under the sanitizers.
        daemon = Daemon(self, config="[batching]\nmax_delay_us = 5000\n").start()
        path = os.path.join(daemon.dir, "stream.txt")
        script = gen_stream(path, "city", scaled(220, 80), scaled(3000, 1500), 4, seed=41,
                            extra=("--batch-max", "10", "--mix", "test"))
        batches = len(script.batches)

        # A raw SUB on the pool's topic (Python), and one on the probe topic that shows when
        # subscriptions have reached the daemon.
        raw = Subscriber(daemon.publish, ["default"])
        self.addCleanup(raw.close)
        probe = Subscriber(daemon.publish, ["probe"])
        self.addCleanup(probe.close)
        self.wait_connected(daemon, probe, "probe")
        self.assertEqual(raw.diffs("default"), [])

        # One batch in flight: each batch is a window of its own, so one diff per batch.
        watch = daemon.popen_yoke("watch", "--count", str(batches))
        watch_out = LineReader(watch)
        # `yoke watch` subscribes as it starts; its connection is asynchronous, so give it a
        # moment (a diff it missed would leave it short of --count, and the test would fail).
        time.sleep(0.5 * SLOWDOWN)
        sender = daemon.popen_yoke("send", path, "--in-flight", "1")
        late = None
        # A late subscriber starts once about a third of the stream is in.
        wait_until(lambda: daemon.summary() is not None and
                   daemon.summary()["seq"] >= batches // 3, 60, "a third of the stream")
        late = daemon.popen_yoke("watch", "--catch-up")
        late_out = LineReader(late)
        out, err = sender.communicate(timeout=120 * SLOWDOWN)
        self.assertEqual(sender.returncode, 0, err)
        self.assertEqual(json.loads(out)["last_seq"], batches)

        watch.wait(timeout=30 * SLOWDOWN)
        watch_out.join(5)
        self.assertEqual(watch.returncode, 0, watch.stderr.read())
        diffs = watch_out.json_lines()
        self.assertEqual(len(diffs), batches)
        final_seq, final_weight, final_pairs = daemon.matching()
        self.assertEqual(final_seq, batches)

        # Contract (publish.proto): consecutive diffs chain prev_seq to the previous seq; with
        # one batch per window each covers one seq.
        pairs, seq = set(), 0
        for diff in diffs:
            self.assertEqual(diff["pool"], "default")
            self.assertEqual(diff["prev_seq"], seq)
            self.assertEqual(diff["seq"], seq + 1)
            for a, b, _ in diff["removed"]:
                pairs.remove((a, b))
            for a, b, _ in diff["added"]:
                self.assertNotIn((a, b), pairs)
                pairs.add((a, b))
            self.assertEqual(len(pairs), diff["pairs"])
            seq = diff["seq"]
        # Applying every diff to an empty matching yields `yoke query matching`.
        self.assertEqual(pairs, final_pairs)
        self.assertEqual(diffs[-1]["weight"], final_weight)
        query = daemon.yoke_json("query", "matching")
        self.assertEqual(json_pairs(query["matching"]), pairs)

        # The late subscriber: the matching fetched at some seq s, then diffs after s.
        wait_until(lambda: any(line.get("seq") == batches for line in late_out.json_lines()),
                   30, "the late subscriber to reach the last seq")
        late.terminate()
        late.wait(timeout=30 * SLOWDOWN)
        late_out.join(5)
        self.assertEqual(late.returncode, 0, late.stderr.read())
        lines = late_out.json_lines()
        start = lines[0]
        self.assertTrue(start.get("catch_up"))
        self.assertGreaterEqual(start["seq"], batches // 3)
        self.assertLess(start["seq"], batches, "the late subscriber started after the stream")
        pairs, seq = json_pairs(start["matching"]), start["seq"]
        for diff in lines[1:]:
            if diff.get("catch_up"):
                # `yoke watch --help`: a missed diff (its SUB connects asynchronously, so the
                # first diffs after the fetched matching can be lost) fetches the matching again.
                self.assertGreaterEqual(diff["seq"], seq)
                pairs, seq = json_pairs(diff["matching"]), diff["seq"]
                continue
            self.assertEqual(diff["prev_seq"], seq)
            for a, b, _ in diff["removed"]:
                pairs.remove((a, b))
            for a, b, _ in diff["added"]:
                pairs.add((a, b))
            seq = diff["seq"]
        self.assertEqual(seq, batches)
        self.assertEqual(pairs, final_pairs)

        # The raw Python subscriber saw the same diffs.
        self.assertTrue(raw.wait_for_seq("default", batches, 10))
        raw_pairs, raw_seq = apply_diffs(self, raw.diffs("default"))
        self.assertEqual((raw_pairs, raw_seq), (final_pairs, batches))
        self.assertEqual(raw.errors, [])

    def test_pools_sharing_a_name_prefix(self):
        daemon = Daemon(self).start()
        brissa = gen_stream(os.path.join(daemon.dir, "brissa.txt"), "city", scaled(150, 60),
                            scaled(1200, 300), 20, seed=42)
        brissamar = gen_stream(os.path.join(daemon.dir, "brissamar.txt"), "city",
                               scaled(150, 60), scaled(1200, 300), 20, seed=43)
        sub_brissa = Subscriber(daemon.publish, ["brissa"])
        self.addCleanup(sub_brissa.close)
        sub_brissamar = Subscriber(daemon.publish, ["brissamar"])
        self.addCleanup(sub_brissamar.close)
        probe = Subscriber(daemon.publish, ["probe"])
        self.addCleanup(probe.close)
        self.wait_connected(daemon, probe, "probe")
        watch = daemon.popen_yoke("watch", "--pool", "brissa", "--count",
                                  str(len(brissa.batches)))
        watch_out = LineReader(watch)
        time.sleep(0.5 * SLOWDOWN)

        senders = [daemon.popen_yoke("send", brissa.path, "--pool", "brissa", "--in-flight", "1"),
                   daemon.popen_yoke("send", brissamar.path, "--pool", "brissamar")]
        for sender in senders:
            _, err = sender.communicate(timeout=120 * SLOWDOWN)
            self.assertEqual(sender.returncode, 0, err)
        watch.wait(timeout=30 * SLOWDOWN)
        watch_out.join(5)
        self.assertEqual(watch.returncode, 0, watch.stderr.read())

        # `yoke watch --pool brissa` prints brissa's diffs only.
        watched = watch_out.json_lines()
        self.assertEqual({line["pool"] for line in watched}, {"brissa"})
        self.assertEqual(watched[-1]["seq"], len(brissa.batches))

        self.assertTrue(sub_brissa.wait_for_seq("brissa", len(brissa.batches), 10))
        self.assertTrue(sub_brissamar.wait_for_seq("brissamar", len(brissamar.batches), 10))
        # A SUB on "brissamar" never receives "brissa": the topic frame is the whole pool name.
        self.assertEqual({topic for topic, _, _ in sub_brissamar.messages}, {b"brissamar"})
        # ZeroMQ subscriptions match prefixes, so the SUB on "brissa" is also handed "brissamar"
        # (publish.proto: the topic frame is the pool's name; `yoke watch` keeps the frames
        # equal to its pool). Every message carries its pool in the topic frame and in the
        # diff, so the exact-frame filter separates them; what it keeps is brissa's history.
        for topic, publication, _ in sub_brissa.messages:
            self.assertEqual(topic.decode(), publication.diff.pool)
            self.assertIn(topic, (b"brissa", b"brissamar"))
        brissa_pairs, brissa_seq = apply_diffs(self, sub_brissa.diffs("brissa"))
        self.assertEqual((brissa_seq, brissa_pairs), daemon.matching("brissa")[0::2])
        brissamar_pairs, brissamar_seq = apply_diffs(self, sub_brissamar.diffs("brissamar"))
        self.assertEqual((brissamar_seq, brissamar_pairs), daemon.matching("brissamar")[0::2])


if __name__ == "__main__":
    unittest.main()
