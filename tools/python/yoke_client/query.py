"""Query: the query socket (default tcp://127.0.0.1:7412), one request, one reply."""

import itertools

import zmq

from yoke.v1 import protocol_pb2, query_pb2

from . import dicts
from .connection import DealerConnection
from .errors import QueryError, Unavailable

VERSION = protocol_pb2.PROTOCOL_VERSION_1


class Query(DealerConnection):
    """Asks yoked about a pool or itself. Each method sends one QueryRequest and returns the
    reply as a plain dict (the keys `yoke query KIND` prints). Raises QueryError when the daemon
    answers with an Error, Unavailable when nothing comes back within timeout_s (the socket is
    then replaced, so a late reply is never taken for the next one's). Not thread safe."""

    def __init__(self, query_endpoint, timeout_s=5.0, context=None):
        super().__init__(query_endpoint, context)
        self.timeout_s = timeout_s
        self._ids = itertools.count(1)

    def ask(self, kind, pool="", **fields):
        """Sends a request of `kind` (a QueryRequest oneof name) and returns the QueryReply
        message that answers it. Raises QueryError / Unavailable as described above."""
        request = query_pb2.QueryRequest(version=VERSION, request_id=next(self._ids), pool=pool)
        body = getattr(request, kind)
        body.SetInParent()
        for name, value in fields.items():
            setattr(body, name, value)
        sock = self._socket()
        sock.send(request.SerializeToString())
        deadline_ms = int(self.timeout_s * 1000)
        while sock.poll(deadline_ms, zmq.POLLIN):
            reply = query_pb2.QueryReply()
            reply.ParseFromString(sock.recv())
            if reply.request_id != request.request_id:
                continue  # a late answer to an earlier request
            if reply.HasField("error"):
                raise QueryError(dicts.code_name(reply.error.code), reply.error.message)
            return reply
        self.close()
        raise Unavailable(f"no reply to a {kind} query from {self.endpoint} "
                          f"within {self.timeout_s} s")

    def summary(self, pool="default"):
        """{"pool","seq","weight","pairs","vertices","edges","mode","no_perfect_matching"}"""
        return dicts.reply(self.ask("summary", pool))

    def mate(self, pool, v):
        """{"pool","seq","vertex","mate" (None: unpaired),"pair_weight" (None: unpaired)};
        UNKNOWN_VERTEX if v is not alive."""
        return dicts.reply(self.ask("mate", pool, vertex=v))

    def matching(self, pool="default"):
        """{"pool","seq","weight","pairs" (the count),"matching": [[a, b, w], ...],"mode",
        "no_perfect_matching"}"""
        return dicts.reply(self.ask("matching", pool))

    def explain(self, pool, v, alternatives=0):
        """{"pool","seq","vertex","present","mate","pair_weight" (None: unpaired),"pair_bonus",
        "weight_offset","dual_x2","price","alternatives": [{"other","weight","slack","slack_x2",
        "other_mate"}, ...]}, as `yoke query explain` prints it: the _x2 values are doubled;
        price = (dual_x2 - weight_offset) / 2, slack = slack_x2 / 2. alternatives: how many
        to list at most (0: the daemon's default)."""
        return dicts.reply(self.ask("explain", pool, vertex=v, max_alternatives=alternatives))

    def stats(self, pool="default"):
        """The pool's counters, limits, last repair and timings."""
        return dicts.reply(self.ask("stats", pool))

    def snapshot(self, pool="default", all_pools=False):
        """Writes a snapshot now; returns {"pools": [{"pool","seq"}, ...],"path"} once durable."""
        return dicts.reply(self.ask("snapshot", pool, all_pools=all_pools))

    def health(self):
        """{"ok","status","uptime_s","pools","daemon_version"}"""
        return dicts.reply(self.ask("health"))
