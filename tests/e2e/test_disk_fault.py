"""End to end: a real yoked on a disk that fails a sync (DEVELOPERS.md, "A failing disk"), by
preloaded stand-ins for fdatasync and sync_file_range that fail the N-th call with EIO
(failing_syncs.cpp).
- A journal sync: the window being synced is answered UNAVAILABLE naming its batch, the daemon
  logs journal_failed and exits 1; the restart on a healthy disk holds every batch acknowledged
  before and nothing else; a retry of an acknowledged batch is answered as a duplicate with its
  seq, and the refused batch sent again is applied once.
- A snapshot's paced write-back: the snapshot fails (the kernel reports a failed write-back
  once, so the file's fdatasync after it would have returned 0) and the daemon serves on; the
  next snapshot is written, and a restart from it holds the pool."""

import os
import unittest

from e2e_harness import (SLOWDOWN, Daemon, ErrorCode, IngestClient, check_binaries,
                         make_batch_request)

CLIENT = "quillmoor-depot"
FAIL_AT = 4  # the fourth fdatasync: one batch per window, so the fourth window's


def batch(number):
    """Batch `number` of the test's client: one edge of its own, so each applies."""
    return make_batch_request([("set", 2 * number, 2 * number + 1, number)], client_id=CLIENT,
                              client_batch=number)


class FailedSyncTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_a_failed_sync_stops_the_daemon_and_loses_nothing_acknowledged(self):
        daemon = Daemon(self)
        daemon.env = dict(os.environ, LD_PRELOAD=os.environ["YOKE_FAILING_SYNCS"],
                          YOKE_FAIL_FDATASYNC_AT=str(FAIL_AT))
        daemon.start()
        client = IngestClient(daemon.ingest)
        self.addCleanup(client.close)
        accepted = {}  # batch number -> seq
        refused = None
        for number in range(1, 3 * FAIL_AT):  # one at a time: a window each
            ack = client.send(batch(number))
            self.assertEqual(ack.client_batch, number)
            if ack.HasField("accepted"):
                self.assertFalse(ack.accepted.duplicate)
                accepted[number] = ack.accepted.seq
                continue
            self.assertEqual(ErrorCode.Code.Name(ack.rejected.errors[0].code), "UNAVAILABLE",
                             str(ack))
            refused = number
            break
        self.assertIsNotNone(refused, f"no batch refused\n{daemon.diagnostics()}")
        self.assertEqual(len(accepted), FAIL_AT - 1, daemon.diagnostics())
        self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 1, daemon.diagnostics())
        self.assertTrue(daemon.log_lines("journal_failed"), daemon.diagnostics())

        daemon.env = None  # the disk is back
        daemon.start()
        self.assertEqual(daemon.summary()["seq"], len(accepted), daemon.diagnostics())
        last = max(accepted)
        again = client.send(batch(last))
        self.assertTrue(again.HasField("accepted") and again.accepted.duplicate, str(again))
        self.assertEqual(again.accepted.seq, accepted[last])
        resent = client.send(batch(refused))
        self.assertTrue(resent.HasField("accepted") and not resent.accepted.duplicate, str(resent))
        self.assertEqual(resent.accepted.seq, len(accepted) + 1)
        self.assertEqual(daemon.summary()["seq"], len(accepted) + 1)
        self.assertEqual(daemon.terminate(), 0)


class FailedWriteBackTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_a_failed_write_back_fails_the_snapshot_and_the_daemon_serves_on(self):
        daemon = Daemon(self)
        daemon.env = dict(os.environ, LD_PRELOAD=os.environ["YOKE_FAILING_SYNCS"],
                          YOKE_FAIL_WRITE_BACK_AT="1")
        daemon.start()
        client = IngestClient(daemon.ingest)
        self.addCleanup(client.close)
        # A pool whose snapshot is well above one 256 KiB piece: a ring of 20,000 vertices and
        # its chords, 40,000 edges.
        count = 20000
        edges = [("set", v, (v + 1) % count, 1 + v % 7) for v in range(count)]
        edges += [("set", v, (v + 7) % count, 1 + v % 5) for v in range(count)]
        ack = client.send(make_batch_request(edges, client_id=CLIENT, client_batch=1),
                          timeout_ms=60000)
        self.assertTrue(ack.HasField("accepted"), str(ack))

        failed = daemon.ask("snapshot", all_pools=True, timeout_ms=60000)
        self.assertTrue(failed.HasField("error"), str(failed)[:500])
        self.assertEqual(failed.error.code, ErrorCode.INTERNAL)
        self.assertIn("write-back", failed.error.message)
        self.assertEqual(daemon.snapshot_files(), [], daemon.diagnostics())
        self.assertTrue(daemon.running(), daemon.diagnostics())

        taken = daemon.ask("snapshot", all_pools=True, timeout_ms=60000)
        self.assertTrue(taken.HasField("snapshot"), str(taken)[:500])
        self.assertEqual(len(daemon.snapshot_files()), 1, daemon.diagnostics())
        before = daemon.summary()
        self.assertEqual(daemon.terminate(), 0, daemon.diagnostics())
        daemon.env = None
        daemon.start()
        self.assertEqual(daemon.summary(), before)


if __name__ == "__main__":
    unittest.main()
