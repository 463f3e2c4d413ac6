"""The Python NATS test cluster (nats_cluster.py): it forms, it finds a stream's leader, it
survives a leader kill and a pause, a restarted node catches up, and it leaves no process."""

import os
import time
import unittest

from nats_cluster import NatsCluster


def alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    # A reaped child is gone; a zombie would still answer, but stop() reaps.
    return True


class NatsClusterTest(unittest.TestCase):
    def test_forms_fails_over_and_stops_everything(self):
        with NatsCluster() as cluster:
            pids = [cluster.pid(k) for k in range(cluster.size)]
            self.assertTrue(all(pids))
            cluster.js_api("STREAM.CREATE.PYLOG", {
                "name": "PYLOG", "subjects": ["pylog.>"], "num_replicas": 3,
                "storage": "file", "discard": "new", "max_bytes": 1 << 20, "deny_delete": True})
            for k in range(5):
                ack = cluster.js_api("STREAM.INFO.PYLOG")  # the API answers through any node
                self.assertEqual(ack["config"]["num_replicas"], 3)
                reply = cluster.request("pylog.x", f"m{k}".encode(), node=k % 3)
                self.assertIn(b'"seq"', reply)
            leader = cluster.stream_leader("PYLOG")
            # A paused follower: the other two still make a quorum.
            follower = (leader + 1) % 3
            cluster.pause(follower)
            reply = cluster.request("pylog.x", b"one follower paused", node=leader, timeout=10)
            self.assertIn(b'"seq":6', reply)
            cluster.resume(follower)
            # A killed leader: the two left elect another.
            cluster.kill(leader)
            self.assertIsNone(cluster.pid(leader))
            new_leader = cluster.stream_leader("PYLOG", limit=30)
            self.assertNotEqual(new_leader, leader)
            deadline = time.monotonic() + 30
            while True:
                try:
                    reply = cluster.request("pylog.x", b"after the kill", node=new_leader)
                    if b'"seq":7' in reply:
                        break
                except (OSError, RuntimeError):
                    pass
                self.assertLess(time.monotonic(), deadline, "no acknowledgement after the kill")
                time.sleep(0.05)
            cluster.restart(leader)
            deadline = time.monotonic() + 30
            while any((cluster.stream_view(k, "PYLOG") or {}).get("last_seq") != 7
                      for k in range(3)):
                self.assertLess(time.monotonic(), deadline, "a node did not catch up")
                time.sleep(0.05)
            directory = cluster.directory
            pids = [cluster.pid(k) for k in range(cluster.size)]
        self.assertFalse(any(alive(pid) for pid in pids))
        self.assertFalse(os.path.exists(directory))


if __name__ == "__main__":
    unittest.main()
