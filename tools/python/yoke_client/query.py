"""Query: the query socket (default tcp://127.0.0.1:7412), one request, one reply; with the
query sockets of several daemons of a cluster, the request follows NOT_OWNER refusals to the
daemon that serves the pool (route.py)."""

import itertools
import time

import zmq

from yoke.v1 import protocol_pb2, query_pb2

from . import dicts
from .connection import DealerConnection
from .errors import QueryError, Unavailable
from .route import NOT_OWNER, Route, endpoint_list

VERSION = protocol_pb2.PROTOCOL_VERSION_1


class Query(DealerConnection):
    """Asks yoked about a pool or itself. Each method sends one QueryRequest and returns the
    reply as a plain dict (the keys `yoke query KIND` prints). Raises QueryError when the daemon
    answers with an Error, Unavailable when nothing comes back within timeout_s (the socket is
    then replaced, so a late reply is never taken for the next one's). Not thread safe.

    query_endpoint: one endpoint, or several (a list, or one comma-separated string) of the
    daemons of a cluster. A NOT_OWNER refusal sends the request to the daemon it names, or
    (none named, or an endpoint silent for timeout_s) to the next endpoint after a short
    backoff, for at most owner_wait_s; `moves` lists the owners followed."""

    def __init__(self, query_endpoint, timeout_s=5.0, context=None, owner_wait_s=20.0):
        self.endpoints = endpoint_list(query_endpoint)
        super().__init__(self.endpoints[0], context)
        self.timeout_s = timeout_s
        self.owner_wait_s = owner_wait_s
        self.moves = []
        self._ids = itertools.count(1)
        self._served_by = {}  # pool -> the endpoint that last answered for it

    def ask(self, kind, pool="", **fields):
        """Sends a request of `kind` (a QueryRequest oneof name) and returns the QueryReply
        message that answers it. Raises QueryError / Unavailable as described above."""
        route = Route(self.endpoints, "query", pool, self.owner_wait_s)
        start = self._served_by.get(pool, self.endpoint)
        route.start_at(start)
        if self.endpoint != start:
            self._move_to(start)
        while True:
            reply = self._ask_once(kind, pool, fields)
            if reply is None:
                self.close()  # a late reply must not be taken for the next request's
                if not route.several:
                    raise Unavailable(f"no reply to a {kind} query from {self.endpoint} "
                                      f"within {self.timeout_s} s")
                route.skip_silent()
            elif reply.HasField("error") and reply.error.code == NOT_OWNER:
                route.follow(reply.error)
                self.moves.extend(m for m in route.moves if m not in self.moves)
            else:
                route.answered()
                self._served_by[pool] = route.current
                if reply.HasField("error"):
                    raise QueryError(dicts.code_name(reply.error.code), reply.error.message)
                return reply
            self._move_to(route.current)

    def _ask_once(self, kind, pool, fields):
        """One request to self.endpoint: its reply, or None after timeout_s."""
        request = query_pb2.QueryRequest(version=VERSION, request_id=next(self._ids), pool=pool)
        body = getattr(request, kind)
        body.SetInParent()
        for name, value in fields.items():
            setattr(body, name, value)
        sock = self._socket()
        sock.send(request.SerializeToString())
        deadline = time.monotonic() + self.timeout_s
        while sock.poll(max(0, int((deadline - time.monotonic()) * 1000)), zmq.POLLIN):
            reply = query_pb2.QueryReply()
            reply.ParseFromString(sock.recv())
            if reply.request_id == request.request_id:
                return reply
            # else a late answer to an earlier request
        return None

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
        price = (dual_x2 - weight_offset) / 2, slack = slack_x2 / 2; a vertex of a held pair
        adds "held": True, with price None and no alternatives. alternatives: how many to list
        at most (0: the daemon's default)."""
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
