"""Sender: batches of events into one pool through the ingest socket (default
tcp://127.0.0.1:7410), pipelined, resent until acknowledged, each applied exactly once; and the
pool's retirement (Sender.retire).

How (proto/yoke/v1/events.proto, EventBatch): every batch carries this sender's client id and a
batch number; numbers increase (the first of a call is the current Unix time in microseconds, or
one more than the last number used), and each batch names the previous batch's number as its
after_batch (0 for the sender's very first batch), so the daemon never applies a batch whose
predecessor was lost. On silence (timeout_s) or an OUT_OF_ORDER / UNAVAILABLE refusal the sender
resends from the oldest unacknowledged batch with the same numbers: the daemon acknowledges an
already-applied batch again, with its own seq, without applying it (it remembers a client's latest
64 batches by default, `[ledger] batches_per_client`: keep in_flight at or below it). A lower
number it does not hold is refused (BATCH_SKIPPED, BATCH_FORGOTTEN): raised as Rejected, since
a sender never reuses a number. A sender idle past the daemon's horizon (`[ledger]
idle_seconds`) finds its first batch refused OUT_OF_ORDER with no last_batch: the daemon forgot
it, so that batch is sent again without its after_batch condition (its predecessor was
acknowledged).

A cluster (several ingest endpoints): a NOT_OWNER refusal sends every unacknowledged batch, with
the same numbers, to the daemon it names, or (none named, or an endpoint silent for timeout_s)
to the next endpoint after a short backoff, for at most owner_wait_s (route.py). The daemon that
takes over a pool has its retry ledger from the shared log, so exactly-once holds across moves.
"""

import collections
import os
import secrets
import time

import zmq

from yoke.v1 import ingest_pb2, protocol_pb2

from . import dicts, events as event_codec
from .connection import DealerConnection
from .errors import Rejected, Unavailable
from .route import NOT_OWNER, Route

VERSION = protocol_pb2.PROTOCOL_VERSION_1
_RESEND_CODES = (protocol_pb2.Error.OUT_OF_ORDER, protocol_pb2.Error.UNAVAILABLE)

Ack = collections.namedtuple("Ack", "seq duplicate client_batch pool")
Ack.__doc__ = """An accepted batch: the pool's seq for it (for a duplicate too: the seq the batch
got when it was applied), whether it was a retry of an applied batch, its number, and the pool as
the daemon resolved it."""


class Sender(DealerConnection):
    """Sends batches to one pool. Not thread safe; one call at a time.

    in_flight: batches sent and not yet acknowledged, at most. timeout_s: silence after which the
    unacknowledged batches are resent. retries: resends of one batch before Unavailable.
    client_id: stable across reconnects; a fresh random one by default.
    ingest_endpoint: one endpoint, or several (a list, or one comma-separated string) of the
    daemons of a cluster; owner_wait_s bounds following NOT_OWNER refusals and silent endpoints
    (route.py); `moves` lists the owners followed as (pool, instance, endpoint).
    """

    fast_reconnect = True  # a restarting daemon is found again within half a second

    def __init__(self, ingest_endpoint, pool="default", client_id=None, in_flight=32,
                 timeout_s=5.0, retries=5, context=None, owner_wait_s=20.0):
        self.route = Route(ingest_endpoint, "ingest", pool, owner_wait_s)
        super().__init__(self.route.current, context)
        self.pool = pool
        self.client_id = client_id or f"py-{os.getpid()}-{secrets.token_hex(6)}"
        self.in_flight = max(1, in_flight)
        self.timeout_s = timeout_s
        self.retries = retries
        self._last_used = 0     # the largest batch number sent so far
        self._last_applied = 0  # the after_batch of the next batch (0: no condition)

    @property
    def moves(self):
        return self.route.moves

    def send(self, events):
        """Sends one batch (an iterable of events, see yoke_client.events) and returns its Ack
        once it is durable. Raises Rejected (batch_index 0) or Unavailable."""
        return self._pipeline([events])[0]

    def send_all(self, batches):
        """Sends the batches in order, up to in_flight at once, and returns their seqs once all
        are acknowledged. Raises Rejected for the first refused batch (every batch before it is
        then applied, none after it) or Unavailable after the retries (the batches not
        acknowledged may or may not be applied; the next call sends without a predecessor
        condition)."""
        return [ack.seq for ack in self._pipeline(list(batches))]

    def retire(self, at_seq=0):
        """Retires (deletes) this sender's pool (RetirePool, proto/yoke/v1/ingest.proto) and
        returns its Ack once durable: seq is the retirement's own seq (the pool's last + 1).
        With at_seq, only if the pool's last seq is at_seq. The pool's state and its clients'
        retry marks go; the next send() creates it afresh at seq 1 (without a predecessor
        condition). Raises Rejected (UNKNOWN_POOL: no such pool, also when an earlier attempt
        retired it; SEQ_MISMATCH; RETIRE_NOT_SUPPORTED in a cluster) or Unavailable."""
        number = max(time.time_ns() // 1000, self._last_used + 1)
        self._last_used = number
        request = ingest_pb2.IngestRequest(version=VERSION)
        retire = request.retire
        retire.client_id, retire.client_batch = self.client_id, number
        retire.pool, retire.at_seq = self.pool, at_seq
        run = _Run(self, [request.SerializeToString()], [number])
        try:
            ack = run.wait()[0]
        except Unavailable:
            self._last_applied = 0
            self.close()
            raise
        self._last_applied = 0  # the pool's marks went with it
        return ack

    # --- the pipeline ---

    def _encode(self, events, number, after):
        request = ingest_pb2.IngestRequest(version=VERSION)
        batch = request.batch
        batch.client_id, batch.client_batch = self.client_id, number
        batch.pool, batch.after_batch = self.pool, after
        batch.events.extend(event_codec.to_proto(e) for e in events)
        return request.SerializeToString()

    def _pipeline(self, batches):
        if not batches:
            return []
        first = max(time.time_ns() // 1000, self._last_used + 1)
        numbers = [first + i for i in range(len(batches))]
        self._last_used = numbers[-1]
        afters = [self._last_applied] + numbers[:-1]
        requests = [self._encode(b, n, a) for b, n, a in zip(batches, numbers, afters)]
        run = _Run(self, requests, numbers)
        try:
            acks = run.wait()
        except Rejected:
            if run.oldest > 0:
                self._last_applied = numbers[run.oldest - 1]
            raise
        except Unavailable:
            self._last_applied = 0
            self.close()  # drop what is still queued: it must not arrive later
            raise
        self._last_applied = numbers[-1]
        return acks


class _Run:
    """One call's batches in flight: which are sent, acknowledged, refused, resent."""

    def __init__(self, sender, requests, numbers):
        self.s = sender
        self.sock = sender._socket()
        self.requests = requests
        self.index = {n: i for i, n in enumerate(numbers)}
        n = len(requests)
        self.acks = [None] * n
        self.pending = [0] * n     # sends of the batch not answered yet
        self.sent_round = [0] * n  # the resend round of the batch's latest send
        self.resends = [0] * n
        self.round = 0
        self.oldest = 0            # the first batch not acknowledged
        self.next = 0              # the first batch not sent yet
        self.failure = None        # (index, Error) of the first real refusal
        self.resend_at = None      # a refusal asked for a resend at this time
        self.deadline = time.monotonic() + sender.timeout_s

    def forgotten(self, error):
        """Whether an OUT_OF_ORDER refusal of the first batch of the call says the daemon holds
        no batch of this client (no Error.last_batch) although the batch names one."""
        if error.code != protocol_pb2.Error.OUT_OF_ORDER or error.HasField("last_batch"):
            return False
        request = ingest_pb2.IngestRequest()
        request.ParseFromString(self.requests[0])
        return request.batch.after_batch != 0

    def limit(self):
        return len(self.requests) if self.failure is None else self.failure[0]

    def transmit(self, i):
        self.sock.send(self.requests[i])
        self.pending[i] += 1
        self.sent_round[i] = self.round

    def wait(self):
        while self.oldest < len(self.requests):
            if self.failure is not None and self.oldest >= self.failure[0]:
                index, error = self.failure
                raise Rejected(dicts.code_name(error.code), error.message,
                               error.event_index if error.HasField("event_index") else None,
                               index, error.last_batch if error.HasField("last_batch") else None)
            while self.next < self.limit() and self.next - self.oldest < self.s.in_flight:
                self.transmit(self.next)
                self.next += 1
            now = time.monotonic()
            wake = self.deadline if self.resend_at is None else min(self.deadline, self.resend_at)
            if now >= wake:
                if now >= self.deadline and self.s.route.several:
                    self.count_resend()
                    self.s.route.skip_silent()
                    self.move()
                    continue
                self.resend(timed_out=now >= self.deadline)
                continue
            if self.sock.poll(max(1, int((wake - now) * 1000)), zmq.POLLIN):
                self.receive(self.sock.recv())
        return self.acks

    def count_resend(self):
        if self.resends[self.oldest] >= self.s.retries:
            raise Unavailable(f"batch {self.oldest} not accepted after {self.s.retries} resends "
                              f"to {self.s.endpoint}")
        self.resends[self.oldest] += 1

    def move(self):
        """Every unacknowledged batch, from the oldest, to the route's current endpoint over a
        fresh socket (answers still due on the old one are dropped with it)."""
        self.s._move_to(self.s.route.current)
        self.sock = self.s._socket()
        self.round += 1
        for i in range(self.oldest, min(self.next, self.limit())):
            self.pending[i] = 0
            if self.acks[i] is None:
                self.transmit(i)
        self.resend_at = None
        self.deadline = time.monotonic() + self.s.timeout_s

    def resend(self, timed_out):
        """Sends again every unacknowledged batch from the oldest, with the same numbers."""
        self.count_resend()
        self.round += 1
        for i in range(self.oldest, min(self.next, self.limit())):
            if self.acks[i] is None:
                if timed_out:
                    self.pending[i] = 0  # its earlier sends are presumed lost
                self.transmit(i)
        self.resend_at = None
        self.deadline = time.monotonic() + self.s.timeout_s

    def receive(self, payload):
        reply = ingest_pb2.IngestReply()
        reply.ParseFromString(payload)
        if not reply.HasField("ack"):
            return
        ack = reply.ack
        if ack.client_id == "" and ack.HasField("rejected"):
            error = ack.rejected.errors[0]  # the daemon could not read one of our messages
            if error.code == NOT_OWNER:
                self.s.route.follow(error)
                self.move()
                return
            raise Rejected(dicts.code_name(error.code), error.message, None, None)
        i = self.index.get(ack.client_batch)
        if ack.client_id != self.s.client_id or i is None:
            return  # a late answer from an earlier call
        self.pending[i] = max(0, self.pending[i] - 1)
        if ack.HasField("accepted"):
            self.s.route.answered()
            if self.acks[i] is None:
                self.acks[i] = Ack(ack.accepted.seq, ack.accepted.duplicate, ack.client_batch,
                                   ack.pool)
                while self.oldest < len(self.acks) and self.acks[self.oldest] is not None:
                    self.oldest += 1
                self.deadline = time.monotonic() + self.s.timeout_s
            return
        error = ack.rejected.errors[0]
        if error.code == NOT_OWNER:
            if self.acks[i] is None:
                self.s.route.follow(error)
                self.move()
            return
        self.s.route.answered()
        if i == 0 and self.forgotten(error):
            # The daemon holds no batch of this client in the pool: it was idle past the
            # exactly-once horizon (docs/protocol.md). The predecessor named was acknowledged,
            # so the condition is dropped and the batch sent again.
            request = ingest_pb2.IngestRequest()
            request.ParseFromString(self.requests[0])
            request.batch.after_batch = 0
            self.requests[0] = request.SerializeToString()
        if error.code not in _RESEND_CODES:
            if self.failure is None or i < self.failure[0]:
                self.failure = (i, error)
            return
        # Act on the answer to a batch's latest send only; one resend for a burst of refusals.
        if (self.acks[i] is None and i < self.limit() and self.pending[i] == 0
                and self.sent_round[i] == self.round and self.resend_at is None):
            backoff = min(self.s.timeout_s, 0.05 * 2 ** self.resends[self.oldest])
            self.resend_at = time.monotonic() + backoff
