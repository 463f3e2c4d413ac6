"""yoked under a service manager's readiness protocol (systemd's Type=notify), without systemd:
the test binds the unix datagram socket a manager would, names it in NOTIFY_SOCKET and starts a
real yoked. READY=1 must come only once every socket answers and recovery is done, STOPPING=1
when SIGTERM begins the shutdown; a manager that is gone must not stop the daemon."""

import os
import socket
import unittest

from e2e_harness import SLOWDOWN, Daemon, IngestClient, ask, check_binaries, make_batch_request
import urllib.request


class ManagerSocket:
    """The manager's end: a bound SOCK_DGRAM socket; each datagram is one report."""

    def __init__(self, path):
        self.path = path
        self.sock = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.sock.bind(path)
        self.sock.settimeout(20 * SLOWDOWN)

    def receive(self):
        """The next report as {KEY: VALUE}."""
        datagram = self.sock.recv(4096).decode()
        return dict(line.split("=", 1) for line in datagram.split("\n") if line)

    def close(self):
        self.sock.close()


def spawn_notifying(daemon, notify_socket):
    """Starts `daemon` with NOTIFY_SOCKET set, as systemd would (the variable is inherited)."""
    previous = os.environ.get("NOTIFY_SOCKET")
    os.environ["NOTIFY_SOCKET"] = notify_socket
    try:
        return daemon.spawn()
    finally:
        if previous is None:
            del os.environ["NOTIFY_SOCKET"]
        else:
            os.environ["NOTIFY_SOCKET"] = previous


class ServiceNotifyTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def manager(self, daemon, name="notify.sock"):
        manager = ManagerSocket(os.path.join(daemon.dir, name))
        self.addCleanup(manager.close)
        return manager

    def test_ready_after_recovery_with_sockets_bound_then_stopping(self):
        daemon = Daemon(self)
        daemon.start()
        client = IngestClient(daemon.ingest)
        for batch in range(1, 6):
            ack = client.send(make_batch_request([("set", batch, 100 + batch, 3)], pool="quay",
                                                 client_id="notify-test", client_batch=batch))
            self.assertEqual(ack.accepted.seq, batch)
        client.close()
        self.assertEqual(daemon.terminate(), 0)

        manager = self.manager(daemon)
        spawn_notifying(daemon, manager.path)
        reports = [manager.receive()]
        while "READY" not in reports[-1]:
            reports.append(manager.receive())
        self.assertEqual(reports[0], {"STATUS": f"recovering from {daemon.data_dir}"})
        self.assertEqual(reports[-1], {"READY": "1", "STATUS": f"serving on {daemon.ingest}"})

        # Ready means ready: this start's recovery is logged, and every endpoint answers at once.
        self.assertEqual(len(daemon.log_lines("recovered")), 2)
        health = ask(daemon.query, "health", timeout_ms=2000 * SLOWDOWN)
        self.assertTrue(health is not None and health.health.ok)
        with urllib.request.urlopen(daemon.metrics_url, timeout=5 * SLOWDOWN) as page:
            self.assertEqual(page.status, 200)
        summary = ask(daemon.query, "summary", pool="quay", timeout_ms=2000 * SLOWDOWN)
        self.assertEqual(summary.summary.seq, 5)  # the recovered state, not an empty pool
        client = IngestClient(daemon.ingest)
        ack = client.send(make_batch_request([("set", 7, 8, 1)], pool="quay",
                                             client_id="notify-test", client_batch=6))
        self.assertEqual(ack.accepted.seq, 6)
        client.close()

        daemon.proc.send_signal(15)
        self.assertEqual(manager.receive(),
                         {"STOPPING": "1",
                          "STATUS": "stopping: closing the last window, writing a final snapshot"})
        self.assertEqual(daemon.proc.wait(30 * SLOWDOWN), 0)

    def test_abstract_socket_name(self):
        daemon = Daemon(self)
        name = f"yoke-notify-test-{os.getpid()}-{id(self)}"
        manager = socket.socket(socket.AF_UNIX, socket.SOCK_DGRAM)
        self.addCleanup(manager.close)
        manager.bind("\0" + name)
        manager.settimeout(20 * SLOWDOWN)
        spawn_notifying(daemon, "@" + name)
        while b"READY=1" not in (report := manager.recv(4096)):
            self.assertTrue(report.startswith(b"STATUS="), report)
        daemon.wait_ready()
        self.assertEqual(daemon.terminate(), 0)

    def test_a_manager_that_is_gone_does_not_stop_the_daemon(self):
        daemon = Daemon(self)
        spawn_notifying(daemon, os.path.join(daemon.dir, "nobody-listens.sock"))
        daemon.wait_ready()
        self.assertEqual(len(daemon.log_lines("service_notify_failed")), 1)  # once, not per report
        self.assertEqual(daemon.terminate(), 0)
        self.assertEqual(len(daemon.log_lines("service_notify_failed")), 1)


if __name__ == "__main__":
    unittest.main()
