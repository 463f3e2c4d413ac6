"""End to end: the edges of stopping and starting. SIGTERM answers every batch it will not
apply with UNAVAILABLE (refused unread: naming no batch) rather than leaving it unanswered;
those batches are not applied, and a resend after the restart is. A start waits (bounded, `[journal]
lock_wait_ms`) for the journal's lock instead of exiting at once: a daemon restarted right
after a SIGKILL finds the lock held while the kernel tears the killed process down."""

import fcntl
import os
import re
import signal
import time
import unittest

import zmq
from yoke.v1 import ingest_pb2

from e2e_harness import (SLOWDOWN, Daemon, ErrorCode, IngestClient, check_binaries, log_fields,
                         make_batch_request, metric_value)

CLIENT = "vardolune-dispatch"


def batch(number):
    """Batch `number` of the test's client: one edge of its own, so each applies."""
    return make_batch_request([("set", 2 * number, 2 * number + 1, number)], client_id=CLIENT,
                              client_batch=number)


def ack_outcome(ack):
    if ack.HasField("accepted"):
        return "accepted"
    return ErrorCode.Code.Name(ack.rejected.errors[0].code)


class SigtermInFlightTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_batches_in_flight_get_unavailable(self):
        # A long window: the first batches wait in it when SIGTERM comes.
        daemon = Daemon(self, config="[batching]\nmax_delay_us = 1000000\nmax_events = 1000000\n")
        daemon.start()
        client = IngestClient(daemon.ingest)
        self.addCleanup(client.close)
        # The pool exists first (a new pool's first batch is checked on a repair thread, and
        # the batches behind it wait for that): the window's batches are offered as read.
        self.assertEqual(ack_outcome(client.send(batch(1))), "accepted")
        answers = {1: "accepted"}
        waiting = 10
        for number in range(2, waiting + 2):
            client.sock.send(batch(number).SerializeToString())
        # All read into the window (which closes after 1 s) before the signal, however slow
        # the machine: the daemon counts every message it reads.
        self.wait_until_read(daemon, waiting + 1)
        daemon.proc.send_signal(signal.SIGTERM)

        # Then the client goes on sending, one batch per answer, while the daemon stops.

        def receive(timeout_s):
            """The next Ack, or None on silence."""
            if not client.sock.poll(int(timeout_s * 1000), zmq.POLLIN):
                return None
            reply = ingest_pb2.IngestReply()
            reply.ParseFromString(client.sock.recv())
            return reply.ack

        while len(answers) < waiting + 1:
            ack = receive(5 * SLOWDOWN)
            self.assertIsNotNone(ack, f"{answers}\n{daemon.diagnostics()}")
            self.assertEqual(ack.client_id, CLIENT)
            self.assertNotIn(ack.client_batch, answers)
            answers[ack.client_batch] = ack_outcome(ack)
        number = waiting + 1
        sent_unanswered = None  # the batch that met the closed socket, if any
        while True:
            number += 1
            client.sock.send(batch(number).SerializeToString())
            ack = receive(2 * SLOWDOWN)
            if ack is None:
                sent_unanswered = number  # never read, never applied
                break
            answers[number] = ack_outcome(ack)
            if ack.HasField("accepted"):
                self.assertEqual((ack.client_id, ack.client_batch), (CLIENT, number))
            else:
                # Refused unread: names no batch, so clients resend after their timeout.
                self.assertEqual((ack.client_id, ack.client_batch), ("", 0))
                if number > waiting + 3:
                    break
        self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 0, daemon.diagnostics())

        # The window's batches were applied and acknowledged; after them, only UNAVAILABLE.
        self.assertEqual([answers[n] for n in range(1, waiting + 2)], ["accepted"] * (waiting + 1))
        outcomes = [answers[n] for n in sorted(answers)]
        first_refused = outcomes.index("UNAVAILABLE")
        self.assertEqual(set(outcomes[first_refused:]), {"UNAVAILABLE"}, outcomes)
        self.assertEqual(set(outcomes[:first_refused]), {"accepted"}, outcomes)
        applied = first_refused
        self.assertTrue(daemon.log_lines("unread_refused"), daemon.log_text())

        # Nothing refused was applied; resent after the restart, each is applied once.
        daemon.start()
        self.assertEqual(daemon.summary()["seq"], applied)
        client.close()
        client = IngestClient(daemon.ingest)
        last = max(answers) if sent_unanswered is None else sent_unanswered
        for number in range(applied + 1, last + 1):
            ack = client.send(batch(number))
            self.assertEqual(ack_outcome(ack), "accepted", ack)
            self.assertFalse(ack.accepted.duplicate)
            self.assertEqual(ack.accepted.seq, number)
        self.assertEqual(daemon.summary()["seq"], last)

    def wait_until_read(self, daemon, messages):
        """Until the daemon's yoke_ingest_messages_total reaches `messages`."""
        deadline = time.monotonic() + 20 * SLOWDOWN
        while time.monotonic() < deadline:
            if metric_value(daemon.metrics_text(), "yoke_ingest_messages_total") >= messages:
                return
            time.sleep(0.01)
        self.fail(f"the daemon did not read {messages} messages\n{daemon.diagnostics()}")


class StopSignalsTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_only_the_signals_thread_takes_them(self):
        """A stop signal interrupts the system call of the thread it reaches, and ZeroMQ reports
        that as an error: delivered to the loop, a SIGTERM once stopped yoked with exit 1 and no
        snapshot (the second outside probe's SIGTERM case, on a loaded machine). Every thread but
        yoked-signals blocks SIGINT and SIGTERM."""
        daemon = Daemon(self)
        daemon.start()
        takers = []
        tasks = f"/proc/{daemon.proc.pid}/task"
        for task in os.listdir(tasks):
            with open(os.path.join(tasks, task, "status")) as status:
                blocked = int(re.search(r"^SigBlk:\s*([0-9a-f]+)$", status.read(), re.M)[1], 16)
            with open(os.path.join(tasks, task, "comm")) as comm:
                name = comm.read().strip()
            for stop in (signal.SIGINT, signal.SIGTERM):
                if not blocked & (1 << (stop - 1)):
                    takers.append((name, stop.name))
        self.assertEqual(sorted(takers),
                         [("yoked-signals", "SIGINT"), ("yoked-signals", "SIGTERM")])
        daemon.proc.send_signal(signal.SIGTERM)
        self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 0, daemon.diagnostics())


class LockWaitTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def hold_journal_lock(self, daemon):
        """Takes the journal directory's lock as another yoked would; returns its descriptor."""
        fd = os.open(os.path.join(daemon.data_dir, "journal"), os.O_RDONLY | os.O_DIRECTORY)
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        return fd

    def test_restart_right_after_sigkill(self):
        daemon = Daemon(self).start()
        client = IngestClient(daemon.ingest)
        self.addCleanup(lambda: client.close())
        number = 0
        for _ in range(5):
            number += 1
            self.assertEqual(ack_outcome(client.send(batch(number))), "accepted")
            daemon.kill()
            daemon.start()  # at once: raises if it exits ("journal already open")
            client.close()
            client = IngestClient(daemon.ingest)
        self.assertEqual(daemon.summary()["seq"], number)

    def test_waits_for_the_lock_then_serves(self):
        daemon = Daemon(self).start()
        self.assertEqual(daemon.terminate(), 0)
        fd = self.hold_journal_lock(daemon)
        try:
            daemon.spawn()
            time.sleep(1.0)
            self.assertIsNone(daemon.proc.poll(), daemon.diagnostics())  # waiting, not exited
        finally:
            os.close(fd)
        daemon.wait_ready()
        waited = daemon.log_lines("journal_lock_waited")
        self.assertEqual(len(waited), 1, daemon.log_text())
        self.assertGreater(int(log_fields(waited[0])["ms"]), 0)

    def test_gives_up_after_lock_wait_ms(self):
        daemon = Daemon(self, config="[journal]\nlock_wait_ms = 300\n").start()
        self.assertEqual(daemon.terminate(), 0)
        fd = self.hold_journal_lock(daemon)
        try:
            daemon.spawn()
            self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 1, daemon.diagnostics())
        finally:
            os.close(fd)
        refused = daemon.log_lines("cannot_serve")
        self.assertEqual(len(refused), 1, daemon.log_text())
        self.assertIn("is already open", refused[0])
        self.assertIn("after waiting 300 ms", refused[0])


if __name__ == "__main__":
    unittest.main()
