"""End to end: retiring pools of a real yoked (`yoke retire`, the Python client's
Sender.retire): the slot under limits.max_pools freed, declared pools reserved, the last diff a
watcher sees, queries answering UNKNOWN_POOL, the pool made again at seq 1; after a SIGKILL and
a restart the daemon holds exactly what it held (journal alone, then a snapshot plus the
journal), and `yoke replay DATA_DIR` replays the pool's current life."""

import json
import os
import random
import threading
import time
import unittest

from e2e_harness import (PROTOCOL_VERSION, SLOWDOWN, Daemon, ErrorCode, IngestClient,
                         check_binaries, make_batch_request, replay_final_matching)
from yoke.v1 import ingest_pb2
from yoke_client import Rejected, Sender, Watcher, set_edge

# Two slots for undeclared pools: max_pools 3, one declared.
CONFIG = ("[limits]\nmax_pools = 3\n"
          "[pools.vardolune]\nmode = \"max-weight\"\n")


def script(path, edges):
    with open(path, "w") as out:
        for u, v, w in edges:
            out.write(f"set {u} {v} {w}\n")
        out.write("commit\n")
    return path


class RetireTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def send(self, daemon, pool, edges, expect=0):
        path = script(os.path.join(daemon.dir, f"{pool}.txt"), edges)
        return daemon.yoke("send", path, "--pool", pool, expect=expect)

    def test_retire_frees_slots_and_survives_restarts(self):
        daemon = Daemon(self, config=CONFIG).start()
        self.send(daemon, "quay", [(1, 2, 5), (2, 3, 4), (3, 4, 5)])
        self.send(daemon, "market", [(1, 2, 1)])
        # Both undeclared slots are taken; the declared pool still has its own.
        refused = self.send(daemon, "flood", [(1, 2, 1)], expect=2)
        self.assertIn("UNKNOWN_POOL", refused.stderr)
        self.send(daemon, "vardolune", [(7, 8, 3)])

        watcher = daemon.popen_yoke("watch", "--pool", "quay", "--count", "2")
        time.sleep(0.5 * SLOWDOWN)  # a SUB socket's subscription takes a moment to arrive
        retired = daemon.yoke_json("retire", "quay")
        self.assertEqual(retired, {"pool": "quay", "retired_at_seq": 2})
        self.assertIsNone(daemon.summary("quay"))
        self.assertIn("no pool quay",
                      daemon.yoke("query", "summary", "--pool", "quay", expect=2).stderr)
        again = daemon.yoke("retire", "quay", expect=2)
        self.assertIn("UNKNOWN_POOL", again.stderr)
        stale = daemon.yoke("retire", "market", "--at-seq", "7", expect=2)
        self.assertIn("SEQ_MISMATCH", stale.stderr)
        self.assertEqual(daemon.summary("market")["seq"], 1)

        # The slot is free: a new pool, and quay again from seq 1.
        self.send(daemon, "flood", [(1, 2, 1)])
        sent = json.loads(self.send(daemon, "market", [(2, 3, 2)]).stdout)
        self.assertEqual(sent["first_seq"], 2)
        self.send(daemon, "flood", [(5, 6, 1)])
        daemon.yoke_json("retire", "flood")
        resent = json.loads(self.send(daemon, "quay", [(10, 11, 6)]).stdout)
        self.assertEqual(resent["first_seq"], 1)
        out, err = watcher.communicate(timeout=30 * SLOWDOWN)
        self.assertEqual(watcher.returncode, 0, err)
        lines = [json.loads(line) for line in out.splitlines()]
        self.assertTrue(lines[0]["retired"])
        self.assertEqual((lines[0]["seq"], lines[0]["prev_seq"]), (2, 1))
        self.assertEqual(sorted((a, b) for a, b, _ in lines[0]["removed"]), [(1, 2), (3, 4)])
        self.assertEqual((lines[0]["weight"], lines[0]["pairs"]), (0, 0))
        self.assertEqual((lines[1]["seq"], lines[1]["prev_seq"]), (1, 0))
        self.assertNotIn("retired", lines[1])
        self.assertIn("yoke_pool_seq{pool=\"market\"}", daemon.metrics_text())
        self.assertNotIn("pool=\"flood\"", daemon.metrics_text())

        held = {pool: daemon.summary(pool) for pool in ("quay", "market", "vardolune", "flood")}
        self.assertIsNone(held["flood"])
        daemon.restart()  # SIGKILL: the journal alone
        for pool, summary in held.items():
            self.assertEqual(daemon.summary(pool), summary, pool)
        self.send(daemon, "flood", [(1, 2, 1)], expect=2)  # still two undeclared pools

        pairs, commits = replay_final_matching(daemon.data_dir, "--pool", "quay")
        self.assertEqual(pairs, {(10, 11)})
        self.assertEqual(commits[-1]["weight"], 6)
        gone = daemon.yoke("replay", daemon.data_dir, "--pool", "flood", expect=2)
        self.assertIn("retired at seq 3", gone.stderr)

        # A snapshot, a retirement after it, a restart from both.
        self.assertTrue(daemon.ask("snapshot", all_pools=True).HasField("snapshot"))
        daemon.yoke_json("retire", "market")
        daemon.restart()
        self.assertIsNone(daemon.summary("market"))
        self.assertEqual(daemon.summary("quay"), held["quay"])
        self.send(daemon, "flood", [(1, 2, 1)])

    def test_a_new_pool_sent_behind_a_retirement_takes_its_slot(self):
        # ingest.proto, RetirePool: the slot is free again once the retirement is applied, and
        # a first batch of another pool sent right behind it, every slot taken, waits for it
        # (as the retired pool's own batches do) instead of being refused for coming early.
        # The retired pool's batch just before keeps its repair in flight, so the retirement
        # itself waits too.
        daemon = Daemon(self, config=CONFIG).start()
        self.send(daemon, "quay", [(1, 2, 5)])
        self.send(daemon, "market", [(1, 2, 1)])
        ingest = IngestClient(daemon.ingest)
        self.addCleanup(ingest.close)
        for _ in range(3):
            ingest.sock.send(make_batch_request([("set", 3, 4, 2)], pool="quay",
                                                client_id="desk", client_batch=1)
                             .SerializeToString())
            retire = ingest_pb2.IngestRequest(version=PROTOCOL_VERSION)
            retire.retire.pool, retire.retire.client_id, retire.retire.client_batch = \
                "quay", "desk", 2
            ingest.sock.send(retire.SerializeToString())
            ingest.sock.send(make_batch_request([("set", 7, 8, 3)], pool="lantern",
                                                client_id="desk", client_batch=3)
                             .SerializeToString())
            acks = {}
            while len(acks) < 3 and ingest.sock.poll(10000 * SLOWDOWN):
                reply = ingest_pb2.IngestReply()
                reply.ParseFromString(ingest.sock.recv())
                acks[reply.ack.client_batch] = reply.ack
            self.assertEqual(sorted(acks), [1, 2, 3], acks)
            for number, ack in acks.items():
                self.assertEqual(ack.WhichOneof("outcome"), "accepted", f"{number}: {ack}")
            self.assertEqual(acks[3].accepted.seq, 1)
            self.assertIsNone(daemon.summary("quay"))
            self.assertEqual(daemon.summary("lantern")["pairs"], 1)
            # Round again the other way: lantern retired, quay made anew in its slot.
            daemon.yoke_json("retire", "lantern")
            self.send(daemon, "quay", [(1, 2, 5)])

    def test_creations_and_retirements_at_the_cap_are_all_answered(self):
        # Clients at once creating, feeding and retiring pools over more names than slots, some
        # first batches big enough to be checked on a worker: every request is answered (a
        # batch waiting for a slot is never left waiting: session 17 found one that was), only
        # accepted or UNKNOWN_POOL, and a restart holds what the daemon held.
        daemon = Daemon(self, config=CONFIG).start()
        names = ["cove", "dray", "fell", "hythe"]
        answers = {}

        def client(number):
            rnd = random.Random(number)
            ingest = IngestClient(daemon.ingest)
            client_id = f"desk-{number}"
            for batch_number in range(1, 151):
                pool = rnd.choice(names)
                if rnd.random() < 0.35:
                    request = ingest_pb2.IngestRequest(version=PROTOCOL_VERSION)
                    request.retire.pool, request.retire.client_id = pool, client_id
                    request.retire.client_batch = batch_number
                elif rnd.random() < 0.1:
                    request = make_batch_request(
                        [("set", k, k + 1, 1) for k in range(1, 6000)], pool=pool,
                        client_id=client_id, client_batch=batch_number)
                else:
                    request = make_batch_request(
                        [("set", rnd.randrange(1, 40), rnd.randrange(40, 80), rnd.randint(1, 9))],
                        pool=pool, client_id=client_id, client_batch=batch_number)
                ingest.sock.send(request.SerializeToString())
            got = {}
            while len(got) < 150 and ingest.sock.poll(20000 * SLOWDOWN):
                reply = ingest_pb2.IngestReply()
                reply.ParseFromString(ingest.sock.recv())
                ack = reply.ack
                got[ack.client_batch] = (ack.WhichOneof("outcome") if ack.HasField("accepted")
                                         else ack.rejected.errors[0].code)
            ingest.close()
            answers[number] = got

        threads = [threading.Thread(target=client, args=(n,)) for n in range(3)]
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join()
        for number, got in answers.items():
            self.assertEqual(sorted(got), list(range(1, 151)), f"client {number}")
            for outcome in got.values():
                self.assertIn(outcome, ("accepted", ErrorCode.UNKNOWN_POOL))
        held = {pool: daemon.summary(pool) for pool in names}
        self.assertLessEqual(sum(summary is not None for summary in held.values()), 2)
        daemon.restart()  # SIGKILL: the journal alone
        for pool, summary in held.items():
            self.assertEqual(daemon.summary(pool), summary, pool)

    def test_python_client_retires(self):
        daemon = Daemon(self, config=CONFIG).start()
        sender = Sender(daemon.ingest, pool="dock", timeout_s=5.0 * SLOWDOWN)
        watcher = Watcher(daemon.publish, "dock", query_endpoint=daemon.query).catch_up()
        time.sleep(0.5 * SLOWDOWN)  # a SUB socket's subscription takes a moment to arrive
        try:
            self.assertEqual(sender.send([set_edge(1, 2, 3), set_edge(3, 4, 1)]).seq, 1)
            ack = sender.retire(at_seq=1)
            self.assertEqual(ack.seq, 2)
            diff = watcher.next(10 * SLOWDOWN)
            while not diff.get("retired"):
                diff = watcher.next(10 * SLOWDOWN)
            self.assertEqual(diff["seq"], 2)
            self.assertEqual(watcher.matching, {})
            retired = watcher.incarnation
            self.assertGreater(retired, 0)
            with self.assertRaises(Rejected) as refused:
                sender.retire()
            self.assertEqual(refused.exception.code_name, "UNKNOWN_POOL")
            # The same sender starts the pool afresh, and the watcher follows it from seq 0.
            self.assertEqual(sender.send([set_edge(5, 6, 2)]).seq, 1)
            diff = watcher.next(10 * SLOWDOWN)
            self.assertEqual((diff["seq"], diff["prev_seq"]), (1, 0))
            self.assertEqual(watcher.matching, {5: 6, 6: 5})
            self.assertGreater(watcher.incarnation, retired)  # a later pool of the name
        finally:
            sender.close()
            watcher.close()


if __name__ == "__main__":
    unittest.main()
