"""Two pools fed the same events: the demo's link to a running yoked.

`PoolPair` sends every tick's batch to a lead pool (whose matching the simulation acts on:
its long-standing pairs are dispatched) and to a shadow pool (same events, its own settings,
e.g. no churn bonus), waits for both acknowledgements and both published diffs, and keeps per
pool: the acknowledged seq, the matching (from the diffs, after a catch-up at the start), the
weight, how many pairs each tick changed, and how many standing pairs were broken while both of
their ends stayed in the pool (reassignments, the churn a dispatcher and a courier feel). It
checks the holds too: a pair the simulation has held must stay matched until its hold ends (no
diff may remove it while it is held, and it is in the matching after every batch); each miss
counts as a hold violation (expected: none). It also records timings: the daemon's repair_us and
commit_to_publish_us from each diff, and send-to-ack and send-to-diff as the client saw them.
"""

import collections
import concurrent.futures
import time

from yoke_client import Sender, Watcher, events as event_codec


class PoolTrack:
    """What the demo knows about one pool, from its acks and diffs."""

    def __init__(self, name):
        self.name = name
        self.seq = 0
        self.weight = 0
        self.pairs = 0
        self.since = {}            # (a, b) -> tick it was formed
        self.changed_total = 0     # pairs removed + added, all ticks
        self.broken_total = 0      # standing pairs broken with both ends still in the pool
        self.hold_violations = 0    # held pairs removed (or missing) while held
        self.changed_tick = 0
        self.broken_tick = 0
        self.changed_recent = collections.deque(maxlen=10)  # changed_tick of the last ticks
        self.repair_us = collections.deque(maxlen=4096)   # (wall time, us)
        self.publish_us = collections.deque(maxlen=4096)  # commit_to_publish_us
        self.ack_ms = collections.deque(maxlen=4096)      # client send -> ack
        self.diff_ms = collections.deque(maxlen=4096)     # client send -> diff received
        self.resyncs = 0
        self.pairings = collections.Counter()  # vertex -> pairs formed
        self.sent_at = self.acked_at = None  # the last batch: sent, acknowledged (monotonic)
        self.acked_by = None  # the ingest endpoint that acknowledged it (a cluster: its server)

    def mate_pairs(self):
        return sorted(self.since)


def _timed_send(sender, protos):
    """(ack, when it came, the endpoint that sent it)."""
    ack = sender.send(protos)
    return ack, time.monotonic(), sender.endpoint


class PoolPair:
    QUIET_S = 1.0  # no diff this long after the ack: fetch the matching instead

    def __init__(self, ingest, publish, query, lead, shadow, client_id, timeout_s=5.0,
                 ack_timeout_s=None, retries=3):
        """Endpoints: one each, or lists (the daemons of a cluster: batches and queries follow
        NOT_OWNER, diffs come from every publisher). timeout_s: the wait for a diff (and a
        catch-up query); ack_timeout_s (default timeout_s): the silence after which a batch is
        resent, or sent to the next daemon of a cluster; retries: such resends of one batch."""
        self.lead = PoolTrack(lead)
        self.shadow = PoolTrack(shadow)
        self.tracks = (self.lead, self.shadow)
        ack_timeout_s = timeout_s if ack_timeout_s is None else ack_timeout_s
        self._senders = [Sender(ingest, pool=p.name, client_id=f"{client_id}-{p.name}",
                                in_flight=1, timeout_s=ack_timeout_s, retries=retries)
                         for p in self.tracks]
        self._watchers = [Watcher(publish, p.name, query_endpoint=query) for p in self.tracks]
        self._timeout_s = timeout_s
        self._pool = concurrent.futures.ThreadPoolExecutor(max_workers=1)

    def start(self):
        """Catches up with both pools (empty at seq 0 for a new pool). The SUB sockets need a
        moment to reach the daemon before the first diff is published."""
        for watcher, track in zip(self._watchers, self.tracks):
            watcher.catch_up(self._timeout_s)
            track.seq, track.weight = watcher.seq, watcher.weight
            track.pairs = len(watcher.matching) // 2
            track.since = {(a, b): 0 for a, b in watcher.matching.items() if a < b}
        time.sleep(0.3)

    def close(self):
        self._pool.shutdown(wait=True)
        for s in self._senders:
            s.close()
        for w in self._watchers:
            w.close()

    def send(self, events, tick, alive, held=()):
        """Sends one tick's events to both pools; returns once both are acknowledged and both
        diffs are in. `alive(v)` says whether v is still in the pool after this tick (to tell a
        reassignment from a departure); `held` holds the (a, b) pairs (a < b) held after
        this tick's events. Raises yoke_client's Rejected / Unavailable."""
        protos = [event_codec.to_proto(e) for e in events]
        started = time.monotonic()
        shadow_ack = self._pool.submit(_timed_send, self._senders[1], protos)
        answers = [_timed_send(self._senders[0], protos), shadow_ack.result()]
        acks = [ack for ack, _, _ in answers]
        for track, (_, acked, endpoint) in zip(self.tracks, answers):
            track.ack_ms.append((acked - started) * 1000.0)
            track.sent_at, track.acked_at, track.acked_by = started, acked, endpoint
        for watcher, track, ack in zip(self._watchers, self.tracks, acks):
            self._follow(watcher, track, ack.seq, tick, alive, held, started)
        return acks

    def _follow(self, watcher, track, seq, tick, alive, held, started):
        track.changed_tick = track.broken_tick = 0
        deadline = time.monotonic() + self._timeout_s
        heard = time.monotonic()
        while watcher.seq < seq:
            left = deadline - time.monotonic()
            if left <= 0:
                raise TimeoutError(f"no diff of pool {track.name} up to seq {seq} within "
                                   f"{self._timeout_s} s")
            before = watcher.refetches
            diff = watcher.next(min(left, 0.05))
            if watcher.refetches != before:  # a diff was missed: start over from the matching
                track.resyncs += 1
                track.since = {(a, b): tick for a, b in watcher.matching.items() if a < b}
                continue
            if diff is None:
                if time.monotonic() - heard >= self.QUIET_S:
                    # The diff went out while the SUB socket was reconnecting (the daemon
                    # restarted) and no later one will tell: fetch the matching again.
                    watcher.catch_up(self._timeout_s)
                    track.resyncs += 1
                    track.since = {(a, b): tick for a, b in watcher.matching.items() if a < b}
                    heard = time.monotonic()
                continue
            heard = now = time.monotonic()
            track.repair_us.append((now, diff["repair_us"]))
            track.publish_us.append((now, diff["commit_to_publish_us"]))
            track.diff_ms.append((now - started) * 1000.0)
            for a, b, _ in diff["removed"]:
                track.since.pop((a, b), None)
                if (a, b) in held:
                    track.hold_violations += 1
                if alive(a) and alive(b):
                    track.broken_tick += 1
            for a, b, _ in diff["added"]:
                track.since[(a, b)] = tick
                track.pairings[a] += 1
                track.pairings[b] += 1
            track.changed_tick += len(diff["removed"]) + len(diff["added"])
        track.changed_total += track.changed_tick
        track.changed_recent.append(track.changed_tick)
        track.broken_total += track.broken_tick
        track.hold_violations += sum(1 for a, b in held if watcher.matching.get(a) != b)
        track.seq, track.weight = watcher.seq, watcher.weight
        track.pairs = len(watcher.matching) // 2

