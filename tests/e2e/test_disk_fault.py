"""End to end: a real yoked whose disk fails a journal sync (DEVELOPERS.md, "A failing disk").
The process's N-th fdatasync fails with EIO (a preloaded stand-in, failing_fdatasync.cpp): the
window being synced is answered UNAVAILABLE naming its batch, the daemon logs journal_failed
and exits 1; the restart on a healthy disk holds every batch acknowledged before and nothing
else; a retry of an acknowledged batch is answered as a duplicate with its seq, and the refused
batch sent again is applied once."""

import os
import unittest

from e2e_harness import SLOWDOWN, Daemon, ErrorCode, IngestClient, check_binaries, make_batch_request

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
        daemon.env = dict(os.environ, LD_PRELOAD=os.environ["YOKE_FAILING_FDATASYNC"],
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


if __name__ == "__main__":
    unittest.main()
