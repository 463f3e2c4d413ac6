"""The Python client (tools/python/yoke_client) against stand-in daemons of a cluster: small
ZeroMQ peers in this process that refuse with NOT_OWNER (naming the owner, or nobody), stay
silent, keep a retry ledger in small, or publish a pool's diffs. The C++ twin of these tests is
tests/cli/owner_following_test.cpp."""

import logging
import os
import shutil
import tempfile
import threading
import time
import unittest

import zmq

from yoke.v1 import ingest_pb2, protocol_pb2, publish_pb2, query_pb2
from yoke_client import Query, Sender, Unavailable, Watcher, set_edge
from yoke_client.route import endpoint_list

VERSION = protocol_pb2.PROTOCOL_VERSION_1


class Peer:
    """A ROUTER bound at `endpoint` on a thread: each one-frame request goes to answer(bytes),
    whose bytes (None: no reply) go back. `requests` holds every request, in order."""

    def __init__(self, endpoint, answer):
        self.requests = []
        self._answer = answer
        self._stop = threading.Event()
        self._sock = zmq.Context.instance().socket(zmq.ROUTER)
        self._sock.setsockopt(zmq.LINGER, 0)
        self._sock.bind(endpoint)
        self._thread = threading.Thread(target=self._serve, daemon=True)
        self._thread.start()

    def _serve(self):
        while not self._stop.is_set():
            if not self._sock.poll(20, zmq.POLLIN):
                continue
            frames = self._sock.recv_multipart()
            if len(frames) != 2:
                continue
            self.requests.append(frames[1])
            reply = self._answer(frames[1])
            if reply is not None:
                self._sock.send_multipart([frames[0], reply])

    def close(self):
        self._stop.set()
        self._thread.join()
        self._sock.close()


class Publisher:
    """An XPUB bound at `endpoint` that sends `diffs` ((seq, prev_seq) or (seq, prev_seq,
    incarnation) of pool "quillory") once its first subscriber has subscribed, after
    `delay_s`."""

    def __init__(self, endpoint, diffs, delay_s=0.0):
        self._sock = zmq.Context.instance().socket(zmq.XPUB)
        self._sock.setsockopt(zmq.LINGER, 0)
        self._sock.bind(endpoint)
        self._diffs, self._delay_s = diffs, delay_s
        self._stop = threading.Event()
        self.published = threading.Event()
        self._thread = threading.Thread(target=self._serve, daemon=True)
        self._thread.start()

    def _serve(self):
        while not self._stop.is_set():
            if not self._sock.poll(20, zmq.POLLIN):
                continue
            if self._sock.recv()[:1] != b"\x01" or self.published.is_set():
                continue
            time.sleep(self._delay_s)
            for seq, prev, *incarnation in self._diffs:
                publication = publish_pb2.Publication(version=VERSION)
                diff = publication.diff
                diff.pool, diff.seq, diff.prev_seq, diff.weight = "quillory", seq, prev, seq
                diff.incarnation = incarnation[0] if incarnation else 0
                self._sock.send_multipart([b"quillory", publication.SerializeToString()])
            self.published.set()

    def close(self):
        self._stop.set()
        self._thread.join()
        self._sock.close()


def not_owner(owner=None):
    error = protocol_pb2.Error(code=protocol_pb2.Error.NOT_OWNER,
                               message="no instance serves pool quillory now")
    if owner is not None:
        error.message = f"pool quillory is served by instance {owner['instance']}"
        error.owner.instance = owner["instance"]
        error.owner.ingest, error.owner.query = owner["ingest"], owner["query"]
    return error


def ingest_not_owner(owner=None):
    def answer(data):
        request = ingest_pb2.IngestRequest.FromString(data)
        reply = ingest_pb2.IngestReply(version=VERSION)
        ack = reply.ack
        ack.client_id, ack.client_batch = request.batch.client_id, request.batch.client_batch
        ack.pool = request.batch.pool
        ack.rejected.errors.append(not_owner(owner))
        return reply.SerializeToString()
    return answer


def query_not_owner(owner=None):
    def answer(data):
        request = query_pb2.QueryRequest.FromString(data)
        reply = query_pb2.QueryReply(version=VERSION, request_id=request.request_id,
                                     pool=request.pool)
        reply.error.CopyFrom(not_owner(owner))
        return reply.SerializeToString()
    return answer


class Ledger:
    """The serving daemon's ingest side: each client batch applied once, in order."""

    def __init__(self):
        self.last, self.seq = {}, 0

    def __call__(self, data):
        batch = ingest_pb2.IngestRequest.FromString(data).batch
        reply = ingest_pb2.IngestReply(version=VERSION)
        ack = reply.ack
        ack.client_id, ack.client_batch, ack.pool = batch.client_id, batch.client_batch, batch.pool
        if batch.client_batch <= self.last.get(batch.client_id, 0):
            ack.accepted.seq, ack.accepted.duplicate = self.seq, True
        else:
            self.last[batch.client_id] = batch.client_batch
            self.seq += 1
            ack.accepted.seq = self.seq
        return reply.SerializeToString()


def summary_at(seq):
    def answer(data):
        request = query_pb2.QueryRequest.FromString(data)
        reply = query_pb2.QueryReply(version=VERSION, request_id=request.request_id,
                                     pool=request.pool)
        reply.summary.seq = seq
        return reply.SerializeToString()
    return answer


def batches(peer):
    return [ingest_pb2.IngestRequest.FromString(r).batch for r in peer.requests]


class OwnerFollowingTest(unittest.TestCase):
    def setUp(self):
        self.dir = tempfile.mkdtemp(prefix="yoke-py-owner-")
        self.addCleanup(shutil.rmtree, self.dir, True)

    def endpoint(self, name):
        return "ipc://" + os.path.join(self.dir, name)

    def peer(self, name, answer):
        peer = Peer(self.endpoint(name), answer)
        self.addCleanup(peer.close)
        return peer

    def test_endpoint_lists(self):
        self.assertEqual(endpoint_list("tcp://a:1"), ["tcp://a:1"])
        self.assertEqual(endpoint_list("tcp://a:1, tcp://b:2,tcp://a:1"),
                         ["tcp://a:1", "tcp://b:2"])
        self.assertEqual(endpoint_list(["tcp://a:1", "tcp://b:2,tcp://c:3"]),
                         ["tcp://a:1", "tcp://b:2", "tcp://c:3"])
        with self.assertRaises(ValueError):
            endpoint_list(" , ")

    def test_sender_resends_the_same_batches_to_the_owner_named(self):
        west_ingest = self.endpoint("west-ingest")
        owner = {"instance": "west", "ingest": west_ingest, "query": self.endpoint("west-query")}
        east = self.peer("east-ingest", ingest_not_owner(owner))
        west = self.peer("west-ingest", Ledger())
        sender = Sender(self.endpoint("east-ingest"), pool="quillory", client_id="py-1")
        self.addCleanup(sender.close)
        with self.assertLogs("yoke_client", logging.INFO) as logged:
            seqs = sender.send_all([[set_edge(1, 2, 5)], [set_edge(2, 3, 7)], [set_edge(3, 4, 1)]])
        self.assertEqual(seqs, [1, 2, 3])
        self.assertEqual(sender.moves, [("quillory", "west", west_ingest)])
        self.assertIn(f"pool quillory moved to instance west ({west_ingest})", logged.output[0])
        refused, taken = batches(east), batches(west)
        self.assertEqual(len(taken), 3)
        self.assertEqual(taken[0].client_batch, refused[0].client_batch)
        self.assertEqual({b.client_id for b in taken}, {"py-1"})
        self.assertEqual([b.after_batch for b in taken[1:]], [b.client_batch for b in taken[:2]])
        # Later calls go straight to west.
        before = len(east.requests)
        self.assertEqual(sender.send([set_edge(5, 6, 2)]).seq, 4)
        self.assertEqual(len(east.requests), before)

    def test_sender_without_an_owner_named_or_with_a_silent_endpoint_tries_the_next(self):
        self.peer("east-ingest", ingest_not_owner())
        self.peer("quiet-ingest", lambda data: None)
        west = self.peer("west-ingest", Ledger())
        for first in ("east-ingest", "quiet-ingest"):
            sender = Sender(f"{self.endpoint(first)},{self.endpoint('west-ingest')}",
                            pool="quillory", timeout_s=1.0)  # a loaded machine's peers are slow
            self.addCleanup(sender.close)
            self.assertEqual(len(sender.send_all([[set_edge(1, 2, 5)], [set_edge(2, 3, 4)]])), 2)
            self.assertEqual(sender.moves, [])
        self.assertEqual(len(batches(west)), 4)

    def test_sender_gives_up_when_no_daemon_serves_the_pool(self):
        self.peer("east-ingest", ingest_not_owner())
        self.peer("west-ingest", ingest_not_owner())
        sender = Sender([self.endpoint("east-ingest"), self.endpoint("west-ingest")],
                        pool="quillory", owner_wait_s=0.4)
        self.addCleanup(sender.close)
        start = time.monotonic()
        with self.assertRaises(Unavailable) as caught:
            sender.send([set_edge(1, 2, 5)])
        self.assertLess(time.monotonic() - start, 3.0)
        self.assertIn("no daemon served pool quillory within 0.4 s", str(caught.exception))
        self.assertIn("last answer: NOT_OWNER: no instance serves pool quillory now",
                      str(caught.exception))

    def test_query_follows_the_owner_and_remembers_it(self):
        west_query = self.endpoint("west-query")
        owner = {"instance": "west", "ingest": self.endpoint("west-ingest"), "query": west_query}
        east = self.peer("east-query", query_not_owner(owner))
        west = self.peer("west-query", summary_at(17))
        query = Query(self.endpoint("east-query"))
        self.addCleanup(query.close)
        self.assertEqual(query.summary("quillory")["seq"], 17)
        self.assertEqual(query.moves, [("quillory", "west", west_query)])
        self.assertEqual(query.summary("quillory")["seq"], 17)
        self.assertEqual((len(east.requests), len(west.requests)), (1, 2))

    def test_query_tries_the_next_endpoint_and_gives_up_in_time(self):
        self.peer("east-query", query_not_owner())
        self.peer("quiet-query", lambda data: None)
        self.peer("west-query", summary_at(5))
        query = Query([self.endpoint("east-query"), self.endpoint("quiet-query"),
                       self.endpoint("west-query")], timeout_s=1.0)
        self.addCleanup(query.close)
        self.assertEqual(query.summary("quillory")["seq"], 5)
        lonely = Query(self.endpoint("east-query"), owner_wait_s=0.3)
        self.addCleanup(lonely.close)
        with self.assertRaises(Unavailable) as caught:
            lonely.summary("quillory")
        self.assertIn("no daemon served pool quillory within 0.3 s", str(caught.exception))

    def test_watcher_yields_each_diff_of_several_publishers_once_in_seq_order(self):
        east = Publisher(self.endpoint("east-publish"), [(1, 0), (2, 1), (3, 2)])
        self.addCleanup(east.close)
        # West took over: it publishes 2 and 3 again, then 5 before 4.
        west = Publisher(self.endpoint("west-publish"), [(2, 1), (3, 2), (5, 4), (4, 3)],
                         delay_s=0.2)
        self.addCleanup(west.close)
        watcher = Watcher([self.endpoint("east-publish"), self.endpoint("west-publish")],
                          pool="quillory")
        self.addCleanup(watcher.close)
        seqs = []
        while len(seqs) < 5:
            diff = watcher.next(5.0)
            self.assertIsNotNone(diff, seqs)
            seqs.append(diff["seq"])
        self.assertEqual(seqs, [1, 2, 3, 4, 5])
        self.assertIsNone(watcher.next(0.5))

    def test_watcher_tells_pools_of_one_name_apart_by_incarnation(self):
        """docs/protocol.md, "Catching up": the matching held is incarnation 10 at seq 3."""
        matchings = [(3, 10), (5, 20)]

        def matching(data):
            request = query_pb2.QueryRequest.FromString(data)
            reply = query_pb2.QueryReply(version=VERSION, request_id=request.request_id,
                                         pool=request.pool)
            seq, incarnation = matchings.pop(0) if len(matchings) > 1 else matchings[0]
            reply.matching.seq, reply.matching.incarnation = seq, incarnation
            return reply.SerializeToString()
        self.peer("query", matching)
        # An earlier pool's diff (5), dropped; a later pool's diff 4 (20) met in its middle:
        # fetched again (20 at seq 5); then 6 follows.
        middle = Publisher(self.endpoint("middle"), [(2, 1, 5), (4, 3, 20), (6, 5, 20)])
        self.addCleanup(middle.close)
        watcher = Watcher(self.endpoint("middle"), "quillory",
                          query_endpoint=self.endpoint("query")).catch_up()
        self.addCleanup(watcher.close)
        self.assertEqual((watcher.seq, watcher.incarnation), (3, 10))
        self.assertEqual(watcher.next(5.0)["seq"], 6)
        self.assertEqual((watcher.seq, watcher.incarnation, watcher.refetches), (6, 20, 1))
        # A later pool's first diff, its predecessor's retired diff missed: from empty.
        matchings[:] = [(3, 10)]
        first = Publisher(self.endpoint("first"), [(1, 0, 20), (2, 1, 20)])
        self.addCleanup(first.close)
        fresh = Watcher(self.endpoint("first"), "quillory",
                        query_endpoint=self.endpoint("query")).catch_up()
        self.addCleanup(fresh.close)
        self.assertEqual([fresh.next(5.0)["seq"], fresh.next(5.0)["seq"]], [1, 2])
        self.assertEqual((fresh.seq, fresh.incarnation, fresh.refetches), (2, 20, 0))


if __name__ == "__main__":
    unittest.main()
