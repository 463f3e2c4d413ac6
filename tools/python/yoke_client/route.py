"""Which daemon of a cluster a client talks to (the C++ twin is tools/cli/endpoint_route.h).

Each pool is served by one daemon at a time; the others refuse its batches and queries with
NOT_OWNER and name the daemon that serves it in `Error.owner` (proto/yoke/v1/protocol.proto),
or name none while a takeover is under way. A Route holds the endpoints of one socket kind
(ingest or query) and follows those refusals: to the owner named, else (and when an endpoint
stays silent) to the next known endpoint after a short backoff. Following is bounded by
owner_wait_s, counted from the first refusal or silence and restarted by every other answer;
past it, Unavailable."""

import logging
import time

from yoke.v1 import protocol_pb2

from . import dicts
from .errors import Unavailable

NOT_OWNER = protocol_pb2.Error.NOT_OWNER
FIRST_BACKOFF_S = 0.05
LONGEST_BACKOFF_S = 1.0

log = logging.getLogger("yoke_client")


def endpoint_list(endpoints):
    """A list of endpoints from one string ("tcp://a:7410" or "tcp://a:7410,tcp://b:7410") or
    an iterable of them; duplicates dropped, order kept. ValueError when none is left."""
    if isinstance(endpoints, str):
        endpoints = [endpoints]
    out = []
    for item in endpoints:
        for endpoint in item.split(","):
            endpoint = endpoint.strip()
            if endpoint and endpoint not in out:
                out.append(endpoint)
    if not out:
        raise ValueError("no endpoint given")
    return out


class Route:
    """The endpoints of one socket kind ("ingest" or "query") for one pool. `current` is the
    endpoint to use now; `moves` lists (pool, instance, endpoint) for every owner followed (the
    same goes to the "yoke_client" logger at INFO)."""

    def __init__(self, endpoints, kind, pool, owner_wait_s):
        self.endpoints = endpoint_list(endpoints)
        self.kind = kind
        self.pool = pool
        self.owner_wait_s = owner_wait_s
        self.moves = []
        self._index = 0
        self._deadline = None
        self._backoff = FIRST_BACKOFF_S

    @property
    def current(self):
        return self.endpoints[self._index]

    @property
    def several(self):
        return len(self.endpoints) > 1

    def start_at(self, endpoint):
        """Makes `endpoint` current (added when unknown): where the pool was served last."""
        if endpoint not in self.endpoints:
            self.endpoints.append(endpoint)
        self._index = self.endpoints.index(endpoint)

    def follow(self, error):
        """A NOT_OWNER Error from `current`: moves to the owner it names, or after a backoff to
        the next endpoint. Raises Unavailable past the deadline."""
        first = self._deadline is None
        self._check(f"{dicts.code_name(error.code)}: {error.message}")
        target = getattr(error.owner, self.kind) if error.HasField("owner") else ""
        if not target or target == self.current:
            self._back_off()
            self._index = (self._index + 1) % len(self.endpoints)
            return
        instance = error.owner.instance
        if not self.moves or self.moves[-1][1] != instance:
            self.moves.append((self.pool, instance, target))
            log.info("pool %s moved to instance %s (%s)", self.pool, instance, target)
        if not first:
            self._back_off()  # two daemons may name each other during a handover
        if target not in self.endpoints:
            self.endpoints.append(target)
        self._index = self.endpoints.index(target)

    def skip_silent(self):
        """`current` did not answer in time: after a backoff, the next endpoint."""
        self._check(f"no reply from {self.current}")
        self._back_off()
        self._index = (self._index + 1) % len(self.endpoints)

    def answered(self):
        """`current` answered with something other than NOT_OWNER."""
        self._deadline = None
        self._backoff = FIRST_BACKOFF_S

    def _check(self, last_answer):
        now = time.monotonic()
        if self._deadline is None:
            self._deadline = now + self.owner_wait_s
        elif now >= self._deadline:
            raise Unavailable(f"no daemon served pool {self.pool} within {self.owner_wait_s} s "
                              f"(tried {', '.join(self.endpoints)}; last answer: {last_answer})")

    def _back_off(self):
        wait = self._backoff
        if self._deadline is not None:
            wait = max(0.0, min(wait, self._deadline - time.monotonic()))
        time.sleep(wait)
        self._backoff = min(self._backoff * 2, LONGEST_BACKOFF_S)
