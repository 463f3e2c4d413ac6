"""End to end: bad input on the ingest socket, sent by a raw DEALER with messages built from the
generated yoke.v1 modules, and bad queries through `yoke query`. Each refusal: the error code and
event_index in the Ack (protocol.proto, ingest.proto), every pool untouched, the counter
yoke_batches_rejected_total{code} on /metrics one higher and a batch_rejected log line (for a
message not read as a batch: yoke_ingest_messages_rejected_total{code} and message_rejected,
the batch counter unchanged); the daemon then applies a good batch."""

import unittest

import zmq

from e2e_harness import (SLOWDOWN, Daemon, ErrorCode, IngestClient, _context, check_binaries,
                         make_batch_request, metric_value)
from yoke.v1 import events_pb2, ingest_pb2

MAX_MESSAGE_BYTES = 16384
MAX_EVENTS = 50
CONFIG = f"""
[limits]
max_message_bytes = {MAX_MESSAGE_BYTES}
max_events_per_batch = {MAX_EVENTS}

[pools.tiny]
max_vertices = 4

[pools.capped]
max_abs_weight = 1000
"""

POOLS = ("default", "tiny", "capped")


class BadInputTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        check_binaries()
        # One daemon for the whole class: each test checks its own refusals against counters
        # read just before, and leaves the pools as it found them or in a state it checks.
        cls.daemon = Daemon(None, config=CONFIG).start()
        cls.client = IngestClient(cls.daemon.ingest)
        # A base graph in each pool: default 1-2 (10), 3-4 (20); capped 1-2 (500); tiny 1-2 (5).
        cls.good_counter = 0
        for pool, events in (("default", [("set", 1, 2, 10), ("set", 3, 4, 20)]),
                             ("capped", [("set", 1, 2, 500)]),
                             ("tiny", [("set", 1, 2, 5)])):
            ack = cls.client.send(make_batch_request(events, pool=pool))
            assert ack.HasField("accepted"), ack

    @classmethod
    def tearDownClass(cls):
        cls.client.close()
        cls.daemon.cleanup()

    # --- helpers ---

    def pools_state(self):
        return {pool: (self.daemon.summary(pool), self.daemon.matching(pool)) for pool in POOLS}

    def expect_refusal(self, payload, code, event_index=None, pool=None, client=None):
        """Sends `payload` (an IngestRequest or raw bytes) and checks the refusal."""
        code_name = ErrorCode.Code.Name(code)
        # Refusals of what was never read as a batch (batch_decoder.h, refuses_unread_message).
        unread = event_index is None and code in (
            ErrorCode.OVERSIZED_MESSAGE, ErrorCode.MALFORMED_MESSAGE,
            ErrorCode.UNSUPPORTED_VERSION, ErrorCode.UNKNOWN_MESSAGE_KIND)
        metric = "yoke_ingest_messages_rejected_total" if unread else "yoke_batches_rejected_total"
        other_metric = ("yoke_batches_rejected_total" if unread
                        else "yoke_ingest_messages_rejected_total")
        event = "message_rejected" if unread else "batch_rejected"
        before_state = self.pools_state()
        before_pools = self.daemon.ask("health").health.pools
        metrics = self.daemon.metrics_text()
        before_metric = metric_value(metrics, metric, code=code_name)
        before_other = metric_value(metrics, other_metric, code=code_name)
        before_log = len(self.daemon.log_lines(event))

        client = client or self.client
        if isinstance(payload, bytes):
            reply = client.send_bytes(payload)
            self.assertIsNotNone(reply, f"no reply to a message that should get {code_name}")
            self.assertEqual(reply.version, 1)
            ack = reply.ack
        else:
            ack = client.send(payload)
        self.assertTrue(ack.HasField("rejected"), f"expected {code_name}, got {ack}")
        first = ack.rejected.errors[0]
        self.assertEqual(ErrorCode.Code.Name(first.code), code_name, first.message)
        self.assertTrue(first.message)
        if event_index is None:
            self.assertFalse(first.HasField("event_index"), first)
        else:
            self.assertTrue(first.HasField("event_index"), first)
            self.assertEqual(first.event_index, event_index)
        if pool is not None:
            self.assertEqual(ack.pool, pool)

        # Whatever was refused left every pool untouched (protocol.proto, Error).
        self.assertEqual(self.pools_state(), before_state)
        self.assertEqual(self.daemon.ask("health").health.pools, before_pools,
                         "a refused batch created a pool")
        metrics = self.daemon.metrics_text()
        after_metric = metric_value(metrics, metric, code=code_name)
        self.assertEqual(after_metric, before_metric + 1, f"{metric}{{{code_name}}}")
        self.assertEqual(metric_value(metrics, other_metric, code=code_name), before_other,
                         f"{other_metric}{{{code_name}}}")
        lines = self.daemon.log_lines(event)
        self.assertEqual(len(lines), before_log + 1)
        self.assertIn(f"code={code_name}", lines[-1])
        self.good_batch_applies()
        return ack

    def good_batch_applies(self, client=None):
        """The daemon still serves: a batch that sets and then unsets an edge in the default pool
        is applied (the seq moves on; the matching comes back to what it was)."""
        client = client or self.client
        before = self.daemon.summary()
        ack = client.send(make_batch_request([("set", 1, 3, 1000), ("unset", 1, 3)]))
        self.assertTrue(ack.HasField("accepted"), ack)
        self.assertEqual(ack.accepted.seq, before["seq"] + 1)
        after = self.daemon.summary()
        self.assertEqual(after["seq"], before["seq"] + 1)
        self.assertEqual(after["weight"], before["weight"])

    # --- malformed envelopes ---

    def test_garbage_bytes(self):
        self.expect_refusal(b"\xff\xff\xff\xff not a protobuf \x00\x01", ErrorCode.MALFORMED_MESSAGE)

    def test_unsupported_versions(self):
        for version in (0, 2):
            request = make_batch_request([("set", 7, 8, 1)], version=version)
            self.expect_refusal(request, ErrorCode.UNSUPPORTED_VERSION)

    def test_empty_oneof(self):
        self.expect_refusal(ingest_pb2.IngestRequest(version=1), ErrorCode.UNKNOWN_MESSAGE_KIND)

    def test_unknown_event_kind_and_stray_fields(self):
        request = make_batch_request([("set", 7, 8, 1)])
        request.batch.events.add(kind=events_pb2.Event.KIND_UNSPECIFIED, u=9)
        self.expect_refusal(request, ErrorCode.MALFORMED_MESSAGE, event_index=1, pool="default")
        request = make_batch_request([("set", 7, 8, 1), ("set", 8, 9, 1)])
        request.batch.events.add(kind=events_pb2.Event.ADD_VERTEX, u=10, v=11)
        self.expect_refusal(request, ErrorCode.MALFORMED_MESSAGE, event_index=2)
        request = make_batch_request([])
        request.batch.events.add(kind=events_pb2.Event.REMOVE_VERTEX, u=1, w=5)
        self.expect_refusal(request, ErrorCode.MALFORMED_MESSAGE, event_index=0)

    # --- sizes ---

    def test_oversized_message(self):
        # A well-formed batch just over limits.max_message_bytes: refused unparsed.
        events = [("set", 10_000 + i, 20_000 + i, 1) for i in range(MAX_EVENTS)]
        request = make_batch_request(events, client_id="x" * (MAX_MESSAGE_BYTES // 2) * 2)
        self.assertGreater(request.ByteSize(), MAX_MESSAGE_BYTES)
        self.expect_refusal(request, ErrorCode.OVERSIZED_MESSAGE)
        self.expect_refusal(b"\x00" * (MAX_MESSAGE_BYTES + 1), ErrorCode.OVERSIZED_MESSAGE)

    def test_far_oversized_message_drops_only_its_peer(self):
        # Past 2 x max_message_bytes + 1 MiB ZeroMQ itself drops the message and its peer
        # (yoked_server.cpp, hard_message_cap): no reply, and the daemon serves everyone else.
        rogue = IngestClient(self.daemon.ingest)
        self.addCleanup(rogue.close)
        other = IngestClient(self.daemon.ingest)
        self.addCleanup(other.close)
        before = self.pools_state()
        big = b"\x0a" * (2 * MAX_MESSAGE_BYTES + (1 << 20) + 4096)
        self.assertIsNone(rogue.send_bytes(big, timeout_ms=1000))
        self.assertTrue(self.daemon.running())
        self.assertEqual(self.pools_state(), before)
        self.assertTrue(self.daemon.ask("health").health.ok)
        self.good_batch_applies(other)
        self.good_batch_applies()

    def test_too_many_events(self):
        events = [("set", 100, 200 + i, 1) for i in range(MAX_EVENTS + 1)]
        self.expect_refusal(make_batch_request(events, pool="default"), ErrorCode.TOO_MANY_EVENTS,
                            pool="default")

    # --- events the pool cannot take ---

    def test_self_loop_set(self):
        request = make_batch_request([("set", 5, 6, 3), ("set", 6, 6, 3)])
        self.expect_refusal(request, ErrorCode.SELF_LOOP, event_index=1)

    def test_self_loop_unset(self):
        # protocol.proto: SELF_LOOP is "a SET_EDGE or UNSET_EDGE with u == v" (1 is alive).
        self.expect_refusal(make_batch_request([("set", 5, 6, 3), ("unset", 1, 1)]),
                            ErrorCode.SELF_LOOP, event_index=1)

    def test_weight_out_of_range(self):
        request = make_batch_request([("set", 3, 4, 1000), ("set", 5, 6, -1001)], pool="capped")
        ack = self.expect_refusal(request, ErrorCode.WEIGHT_OUT_OF_RANGE, event_index=1,
                                  pool="capped")
        self.assertIn("1000", ack.rejected.errors[0].message)  # names the bound
        # Past the engine's bound in a pool with the defaults: 2^52 + 1.
        request = make_batch_request([("set", 5, 6, (1 << 52) + 1)])
        self.expect_refusal(request, ErrorCode.WEIGHT_OUT_OF_RANGE, event_index=0)

    def test_default_weight_bound(self):
        # docs/protocol.md: max_abs_weight 0 resolves to the mode's exact bound, 2^40 for
        # max-weight with the default 4194304 vertices (engine/pool/pool_limits.cpp), reported
        # resolved in Stats.config.
        stats = self.daemon.ask("stats").stats
        self.assertEqual(stats.config.limits.max_abs_weight, 1 << 40)
        ack = self.expect_refusal(make_batch_request([("set", 5, 6, (1 << 40) + 1)]),
                                  ErrorCode.WEIGHT_OUT_OF_RANGE, event_index=0)
        self.assertIn(str(1 << 40), ack.rejected.errors[0].message)

    def test_unknown_vertex(self):
        self.expect_refusal(make_batch_request([("set", 5, 6, 1), ("remove", 424242)]),
                            ErrorCode.UNKNOWN_VERTEX, event_index=1)
        # A vertex removed earlier in the same batch is unknown to a later event.
        self.expect_refusal(make_batch_request([("remove", 3), ("remove", 3)]),
                            ErrorCode.UNKNOWN_VERTEX, event_index=1)

    def test_unknown_edge(self):
        # 1 and 3 are alive, {1, 3} is no edge.
        self.expect_refusal(make_batch_request([("set", 5, 6, 1), ("unset", 1, 3)]),
                            ErrorCode.UNKNOWN_EDGE, event_index=1)
        # protocol.proto: UNKNOWN_EDGE is "UNSET_EDGE ... of an edge that does not exist", also
        # when an end is not alive (UNKNOWN_VERTEX names REMOVE_VERTEX, HOLD_PAIR, RELEASE_PAIR).
        ack = self.expect_refusal(make_batch_request([("unset", 1, 424242)]),
                                  ErrorCode.UNKNOWN_EDGE, event_index=0)
        self.assertIn("424242", ack.rejected.errors[0].message)

    def test_vertex_exists(self):
        self.expect_refusal(make_batch_request([("add", 77), ("add", 1)]), ErrorCode.VERTEX_EXISTS,
                            event_index=1)

    def test_pool_limit_exceeded(self):
        # tiny holds 1 and 2 and takes 4 vertices at most: the fifth arrives at event 1, and the
        # daemon names that event.
        request = make_batch_request([("set", 3, 4, 1), ("add", 5)], pool="tiny")
        self.expect_refusal(request, ErrorCode.POOL_LIMIT_EXCEEDED, event_index=1, pool="tiny")
        # Limits hold at the end of the batch: passing above on the way is fine (and this batch
        # leaves tiny as it found it: 1-2).
        ack = self.client.send(make_batch_request(
            [("set", 3, 4, 1), ("add", 5), ("remove", 5), ("remove", 3), ("remove", 4)],
            pool="tiny"))
        self.assertTrue(ack.HasField("accepted"), ack)

    def test_snapshot_of_one_pool(self):
        # query.proto, SnapshotRequest: all_pools false snapshots the named pool only, and the
        # reply lists it alone (the local file still holds every pool: recovery needs them at
        # one journal position).
        reply = self.daemon.ask("snapshot", pool="tiny", all_pools=False)
        self.assertTrue(reply.HasField("snapshot"), reply)
        self.assertEqual([entry.pool for entry in reply.snapshot.pools], ["tiny"])
        self.assertEqual(reply.snapshot.pools[0].seq, self.daemon.summary("tiny")["seq"])
        every = self.daemon.ask("snapshot", all_pools=True)
        self.assertEqual(sorted(entry.pool for entry in every.snapshot.pools), sorted(POOLS))
        # A pool that does not exist has no snapshot to take.
        missing = self.daemon.ask("snapshot", pool="nowhere", all_pools=False)
        self.assertTrue(missing.HasField("error"), missing)
        self.assertEqual(missing.error.code, ErrorCode.UNKNOWN_POOL)

    def test_bad_pool_name(self):
        for name in ("no spaces", "dock/7", "x" * 300):
            request = make_batch_request([("set", 1, 2, 1)], pool=name)
            self.expect_refusal(request, ErrorCode.UNKNOWN_POOL)

    def test_refused_first_batch_creates_no_pool(self):
        # protocol.proto, Error: "Whatever was refused left every pool untouched"; a pool is
        # created by its first (accepted) batch. The summary of "fresh" stays UNKNOWN_POOL.
        request = make_batch_request([("set", 1, 2, 1), ("set", 3, 3, 1)], pool="fresh")
        self.expect_refusal(request, ErrorCode.SELF_LOOP, event_index=1, pool="fresh")
        self.assertIsNone(self.daemon.summary("fresh"))

    # --- retries and order ---

    def test_out_of_order(self):
        request = make_batch_request([("set", 5, 6, 1)], client_id="ooo", client_batch=2,
                                     after_batch=1)
        ack = self.expect_refusal(request, ErrorCode.OUT_OF_ORDER)
        self.assertEqual((ack.client_id, ack.client_batch), ("ooo", 2))

    def test_retry_is_acknowledged_as_duplicate(self):
        before = self.daemon.summary()
        dup_before = metric_value(self.daemon.metrics_text(), "yoke_batches_total",
                                  pool="default", outcome="duplicate")
        request = make_batch_request([("set", 50, 51, 9), ("unset", 50, 51)], client_id="retry",
                                     client_batch=5)
        first = self.client.send(request)
        self.assertTrue(first.HasField("accepted"))
        self.assertFalse(first.accepted.duplicate)
        self.assertEqual(first.accepted.seq, before["seq"] + 1)
        middle = self.pools_state()
        again = self.client.send(request)
        self.assertTrue(again.HasField("accepted"))
        self.assertTrue(again.accepted.duplicate)
        self.assertEqual(again.accepted.seq, first.accepted.seq)
        self.assertEqual(self.pools_state(), middle)
        self.assertEqual(metric_value(self.daemon.metrics_text(), "yoke_batches_total",
                                      pool="default", outcome="duplicate"), dup_before + 1)
        # The next number, after the last one, applies.
        nxt = self.client.send(make_batch_request([("set", 50, 51, 9), ("unset", 50, 51)],
                                                  client_id="retry", client_batch=6,
                                                  after_batch=5))
        self.assertFalse(nxt.accepted.duplicate)
        self.assertEqual(nxt.accepted.seq, first.accepted.seq + 1)

    def test_batch_numbers_below_the_highest(self):
        # events.proto, EventBatch.client_batch: a remembered batch gets its own seq back; a
        # lower number never applied is BATCH_SKIPPED, one below what the daemon remembers of
        # the client BATCH_FORGOTTEN, both naming the client's highest batch (Error.last_batch).
        seq = self.daemon.summary()["seq"]
        first = self.client.send(make_batch_request([("set", 60, 61, 3)], client_id="rule",
                                                    client_batch=5))
        third = self.client.send(make_batch_request([("set", 62, 63, 4)], client_id="rule",
                                                    client_batch=7))
        self.assertEqual((first.accepted.seq, third.accepted.seq), (seq + 1, seq + 2))
        state = self.pools_state()
        again = self.client.send(make_batch_request([("set", 60, 61, 3)], client_id="rule",
                                                    client_batch=5))
        self.assertTrue(again.accepted.duplicate)
        self.assertEqual(again.accepted.seq, first.accepted.seq)
        self.assertEqual(self.pools_state(), state)
        skipped = self.expect_refusal(
            make_batch_request([("set", 64, 65, 1)], client_id="rule", client_batch=6),
            ErrorCode.BATCH_SKIPPED, pool="default")
        self.assertEqual(skipped.rejected.errors[0].last_batch, 7)
        # A client counting from 1 again under the same id is told, not silently dropped.
        restarted = self.expect_refusal(
            make_batch_request([("set", 64, 65, 1)], client_id="rule", client_batch=1),
            ErrorCode.BATCH_FORGOTTEN, pool="default")
        self.assertEqual(restarted.rejected.errors[0].last_batch, 7)
        self.assertEqual((restarted.client_id, restarted.client_batch), ("rule", 1))
        # The top of the range: 2^64-1 is a batch like any other, and nothing is above it.
        top = 2**64 - 1
        last = self.client.send(make_batch_request([("set", 64, 65, 1), ("unset", 64, 65)],
                                                   client_id="rule", client_batch=top))
        self.assertFalse(last.accepted.duplicate)
        after_top = self.expect_refusal(
            make_batch_request([("add", 66)], client_id="rule", client_batch=8),
            ErrorCode.BATCH_SKIPPED, pool="default")
        self.assertEqual(after_top.rejected.errors[0].last_batch, top)

    def test_client_id_length(self):
        longest = "c" * 128
        ack = self.client.send(make_batch_request([("set", 70, 71, 1), ("unset", 70, 71)],
                                                  client_id=longest, client_batch=1))
        self.assertTrue(ack.HasField("accepted"), ack)
        too_long = "c" * 129
        ack = self.expect_refusal(make_batch_request([("add", 72)], client_id=too_long,
                                                     client_batch=1),
                                  ErrorCode.MALFORMED_MESSAGE, pool="default")
        self.assertEqual(ack.client_id, too_long)  # echoed, so the client can match it
        self.assertIn("at most 128 bytes", ack.rejected.errors[0].message)

    # --- queries ---

    def test_query_errors(self):
        result = self.daemon.yoke("query", "mate", "--vertex", "999999", expect=2)
        self.assertIn("UNKNOWN_VERTEX", result.stderr)
        result = self.daemon.yoke("query", "summary", "--pool", "nowhere", expect=2)
        self.assertIn("UNKNOWN_POOL", result.stderr)
        result = self.daemon.yoke("query", "matching", "--pool", "nowhere", expect=2)
        self.assertIn("UNKNOWN_POOL", result.stderr)
        mate = self.daemon.yoke_json("query", "mate", "--vertex", "3")
        self.assertEqual((mate["mate"], mate["pair_weight"]), (4, 20))
        # The query socket refuses garbage too, and keeps serving.
        sock = _context.socket(zmq.DEALER)
        sock.setsockopt(zmq.LINGER, 0)
        sock.connect(self.daemon.query)
        self.addCleanup(sock.close)
        sock.send(b"\xff\x00garbage")
        self.assertTrue(sock.poll(5000 * SLOWDOWN))
        from yoke.v1 import query_pb2
        reply = query_pb2.QueryReply()
        reply.ParseFromString(sock.recv())
        self.assertEqual(reply.error.code, ErrorCode.MALFORMED_MESSAGE)
        self.assertTrue(self.daemon.ask("health").health.ok)


if __name__ == "__main__":
    unittest.main()
