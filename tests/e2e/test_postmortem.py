"""End to end: `yoke replay DATA_DIR --until SEQ` and `--from SEQ` on a real daemon's journal and
snapshots. The reference is the full journal replay of the same directory (the daemon's own
commits, regrouped by window_start)."""

import os
import unittest

from e2e_harness import Daemon, check_binaries, gen_stream, replay_commits, run_yoke, scaled


class PostmortemReplayTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_until_and_from(self):
        daemon = Daemon(self).start()
        first = gen_stream(os.path.join(daemon.dir, "first.txt"), "dispatch", scaled(300, 100),
                           scaled(3000, 600), 10, seed=5)
        daemon.yoke("send", first.path)
        snapshot_seq = daemon.summary()["seq"]
        daemon.yoke("query", "snapshot")
        second = gen_stream(os.path.join(daemon.dir, "second.txt"), "dispatch", scaled(300, 100),
                            scaled(3000, 600), 10, seed=6)
        shifted = second.shifted(10**6).write(os.path.join(daemon.dir, "second-shifted.txt"))
        daemon.yoke("send", shifted.path)
        final = daemon.summary()
        self.assertEqual(daemon.terminate(), 0, daemon.diagnostics())

        full = replay_commits(daemon.data_dir)
        self.assertEqual((full[-1]["seq"], full[-1]["weight"]), (final["seq"], final["weight"]))

        # --until: the state after the last commit ending at or before SEQ (reference: the full
        # replay's commit lines, which carry the same seq numbers).
        for until in sorted({full[len(full) // 3]["seq"], full[len(full) // 2]["seq"] + 1,
                             final["seq"]}):
            expected = [c for c in full if c["seq"] <= until]
            got = replay_commits(daemon.data_dir, "--until", str(until))
            self.assertEqual([(c["seq"], c["weight"], c["pairs"]) for c in got],
                             [(c["seq"], c["weight"], c["pairs"]) for c in expected], until)

        # --from: starts at the snapshot taken at snapshot_seq, then the commits after it, with
        # every certificate checked (--verify).
        out = run_yoke("replay", daemon.data_dir, "--from", str(snapshot_seq), "--verify").stdout
        self.assertIn(f"note: starting from the snapshot at seq {snapshot_seq}", out)
        got = replay_commits(daemon.data_dir, "--from", str(snapshot_seq))
        after = [c for c in full if c["seq"] > snapshot_seq]
        self.assertEqual([(c["seq"], c["weight"]) for c in got],
                         [(c["seq"], c["weight"]) for c in after])

        # A script has no snapshots: --from is refused (exit 2); --until counts its commits.
        run_yoke("replay", first.path, "--from", "3", expect=2)
        self.assertEqual([c["commit"] for c in replay_commits(first.path, "--until", "3")],
                         [1, 2, 3])


if __name__ == "__main__":
    unittest.main()
