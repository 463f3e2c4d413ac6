"""Watcher: one pool's diffs from the publication socket (default tcp://127.0.0.1:7411).

Messages are two frames, [pool name][Publication]. ZeroMQ subscriptions match prefixes, so the
watcher keeps only the messages whose topic frame equals the pool's name exactly. In catch-up
mode (proto/yoke/v1/publish.proto) it holds the whole matching: it fetches it from the query
socket at some seq s, drops diffs with seq <= s, applies the rest in order, and fetches the
matching again when a diff's prev_seq is not the seq it holds (a message was missed). Diffs of
another incarnation of the pool (a pool retired and made again under its name) follow the rule
of docs/protocol.md, "Catching up".

A cluster: a pool's diffs come from whichever daemon serves it, and a daemon that takes a pool
over may publish again diffs its predecessor published. Given several publish endpoints, the
watcher subscribes to all of them and yields each diff (pool, seq) once, in seq order: a diff
that skips seqs waits up to REORDER_WAIT_S for the ones between before the gap counts.
"""

import time

import zmq

from yoke.v1 import protocol_pb2, publish_pb2

from . import dicts
from .errors import QueryError
from .query import Query
from .route import endpoint_list

VERSION = protocol_pb2.PROTOCOL_VERSION_1
REORDER_WAIT_S = 0.3


class Watcher:
    """Iterating yields each diff of the pool as a dict (the keys `yoke watch` prints), in the
    order received. After catch_up(), only diffs that apply on top of the held state are
    yielded, and `.matching`, `.weight` and `.seq` follow them.

    `.matching` maps every matched vertex to its mate (both ends of each pair: {a: b, b: a}).
    Pair weights are not kept per pair: a diff does not report a matched pair whose weight
    changed, so only the total (`.weight`, from each diff) stays exact.

    publish_endpoint (and query_endpoint): one endpoint, or several (a list, or a comma-separated
    string) of the daemons of a cluster; catch-up queries follow NOT_OWNER (query.py)."""

    def __init__(self, publish_endpoint, pool="default", query_endpoint=None, context=None):
        self.pool = pool
        self.query_endpoint = query_endpoint
        self.publish_endpoints = endpoint_list(publish_endpoint)
        self._several = len(self.publish_endpoints) > 1
        self._last = None        # several publishers: the seq of the last diff yielded
        self._held = {}          # several publishers: seq -> a diff after a gap, held back
        self._held_since = None
        self.matching = None  # {vertex: mate}, in catch-up mode
        self.weight = None    # the matching's total weight, in catch-up mode
        self.seq = None       # the seq `matching` describes, in catch-up mode
        self.incarnation = None  # which pool of the name `matching` is of (Diff.incarnation)
        self.refetches = 0    # matchings fetched again after a missed diff
        self._topic = pool.encode()
        self._query = None
        context = context or zmq.Context.instance()
        self._sock = context.socket(zmq.SUB)
        self._sock.setsockopt(zmq.LINGER, 0)
        self._sock.setsockopt(zmq.RCVHWM, 0)
        self._sock.setsockopt(zmq.RECONNECT_IVL, 50)
        self._sock.setsockopt(zmq.SUBSCRIBE, self._topic)
        for endpoint in self.publish_endpoints:
            self._sock.connect(endpoint)

    def close(self):
        """Closes the sockets; idempotent (also run when the watcher is collected)."""
        self._sock.close()
        if self._query is not None:
            self._query.close()

    def __del__(self):
        self.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def catch_up(self, timeout_s=5.0):
        """Switches to catch-up mode: fetches the whole matching now (needs query_endpoint;
        raises QueryError / Unavailable as Query does). A pool the daemon does not hold yet
        counts as empty at seq 0. Returns self."""
        if self.query_endpoint is None:
            raise ValueError("catch_up needs the query endpoint")
        if self._query is None:
            self._query = Query(self.query_endpoint, timeout_s)
        self._fetch()
        return self

    def _fetch(self):
        try:
            reply = self._query.ask("matching", self.pool)
            whole = dicts.reply(reply)
            whole["incarnation"] = reply.matching.incarnation
        except QueryError as error:
            if error.code_name != "UNKNOWN_POOL":
                raise
            # Created by its first batch.
            whole = {"seq": 0, "weight": 0, "matching": [], "incarnation": 0}
        self.matching = {}
        for a, b, _ in whole["matching"]:
            self.matching[a], self.matching[b] = b, a
        self.weight = whole["weight"]
        self.seq = whole["seq"]
        self.incarnation = whole["incarnation"]

    def __iter__(self):
        while True:
            diff = self.next(None)
            if diff is not None:
                yield diff

    def next(self, timeout_s=None):
        """The next diff as a dict, or None when none comes within timeout_s (None: wait for
        ever). In catch-up mode, applies it first."""
        deadline = None if timeout_s is None else time.monotonic() + timeout_s
        while True:
            ready = self._take_held()
            if ready is not None:
                return ready
            wake = deadline
            if self._held:
                release = self._held_since + REORDER_WAIT_S
                wake = release if wake is None else min(wake, release)
            wait_ms = -1 if wake is None else max(0, int((wake - time.monotonic()) * 1000))
            if not self._sock.poll(wait_ms, zmq.POLLIN):
                if self._held and time.monotonic() >= self._held_since + REORDER_WAIT_S:
                    # The diffs between never came: the gap is real.
                    diff = self._held.pop(min(self._held))
                    self._held_since = time.monotonic()
                    out = self._deliver(diff)
                    if out is not None:
                        return out
                    continue
                if deadline is not None and time.monotonic() >= deadline:
                    return None
                continue
            frames = self._sock.recv_multipart()
            if len(frames) != 2 or frames[0] != self._topic:
                continue
            publication = publish_pb2.Publication()
            publication.ParseFromString(frames[1])
            if publication.version != VERSION or not publication.HasField("diff"):
                continue
            diff = publication.diff
            if self._several:
                last = self._reference()
                if (last is not None and diff.seq <= last) or diff.seq in self._held:
                    continue  # published again by a daemon that took the pool over
                if last is not None and diff.prev_seq != last:
                    if not self._held:
                        self._held_since = time.monotonic()
                    self._held[diff.seq] = diff
                    continue
            out = self._deliver(diff)
            if out is not None:
                return out

    def _reference(self):
        """The seq the next diff should follow: the held state's, else the last yielded."""
        return self.seq if self.matching is not None else self._last

    def _deliver(self, diff):
        """The diff's dict, once applied in catch-up mode; None when it does not apply."""
        if self.matching is not None and not self._apply(diff):
            return None
        self._last = diff.seq
        if diff.retired:
            # The pool's last diff (Sender.retire): one made again under its name starts at
            # seq 1, following seq 0.
            self._last = 0
            if self.matching is not None:
                self.seq = 0
        return dicts.diff(diff)

    def _take_held(self):
        """A held-back diff that now follows on, delivered; None when there is none."""
        while self._held:
            last = self._reference()
            first = min(self._held)
            if last is not None and first <= last:
                del self._held[first]
                continue
            if last is not None and self._held[first].prev_seq != last:
                return None
            out = self._deliver(self._held.pop(first))
            self._held_since = time.monotonic()
            if out is not None:
                return out
        return None

    def wait_for_seq(self, seq, timeout_s):
        """Catch-up mode: reads diffs until the held state is at seq or later. True if it got
        there within timeout_s."""
        deadline = time.monotonic() + timeout_s
        while self.seq < seq:
            left = deadline - time.monotonic()
            if left <= 0:
                return False
            self.next(left)
        return True

    def _apply(self, diff):
        """Applies a diff to the held matching; False when it is old (dropped) or did not follow
        (the matching is fetched again)."""
        if diff.incarnation < self.incarnation:
            return False  # an earlier pool of the name, retired before the state held
        if diff.incarnation > self.incarnation:
            if diff.prev_seq != 0:  # a later pool, met in its middle: the retirement was missed
                self.refetches += 1
                self._fetch()
                return False
            # A later pool's first diff: the one held was retired (its last diff maybe missed).
            self.matching, self.seq, self.weight = {}, 0, 0
            self.incarnation = diff.incarnation
        if diff.seq <= self.seq:
            return False
        if diff.prev_seq != self.seq:
            self.refetches += 1
            self._fetch()
            return False
        for pair in diff.removed:
            self.matching.pop(pair.a, None)
            self.matching.pop(pair.b, None)
        for pair in diff.added:
            self.matching[pair.a], self.matching[pair.b] = pair.b, pair.a
        self.seq, self.weight = diff.seq, diff.weight
        return True
