"""Two yoked daemons sharing a three-node NATS JetStream cluster ([cluster] backend =
"jetstream"): each owns one pool and stands by for the other's. Checked here against real
processes, killed and paused by PID:

- a batch sent to the daemon that does not serve its pool is refused with NOT_OWNER naming the
  one that does, and changes nothing;
- the owner SIGKILLed mid-stream: the standby claims the pool and serves it; every batch of the
  stream is acknowledged with the seq it would have had on one daemon (none lost, none applied
  twice), and the final matching equals that of a single local-journal daemon fed the same
  batches; the pool's diff subject in the stream (yoke.diff.<pool>) then holds exactly one
  diff per seq 1..N, in order (the new owner stored exactly those its predecessor had not),
  which compose from the empty matching to the final one, and `yoke watch --cluster
  --from-seq 1` prints that same chain;
- the owner stopped with SIGTERM: it says it leaves, and the standby claims at once;
- the owner SIGSTOPped until the standby claims, then SIGCONT: the paused owner acknowledges
  nothing after the claim, drops the pool and follows it; the diff subject is as above;
- the stream's leader (a NATS node) SIGKILLed mid-stream, and later everything (three nodes,
  two daemons) stopped and started again: the stream goes on where it was;
- after each: `yoke replay --cluster --verify` of the pool's log certifies every commit and ends
  at the serving daemon's matching and seq, and every NATS node holds the same log.
"""

import base64
import json
import os
import time
import unittest

from e2e_harness import (Daemon, IngestClient, ErrorCode, make_batch_request, replay_commits,
                         run_yoke, SLOWDOWN)
from cluster_toml import cluster_section
from nats_cluster import NatsCluster
from yoke.v1 import publish_pb2

STREAM = "yoke-e2e"

HEARTBEAT_MS = 200
TAKEOVER_MS = 1500
STREAM = "yoke-e2e"


def cluster_config(nats, daemons, instance, owns):
    """The [cluster] section shared by every daemon, naming `instance` as this one. `owns`
    maps instance name -> (owned pools, stood-by pools)."""
    # max_bytes well below the nodes' file store: a 1 GiB stream (the default) did not always
    # find room while the harness's probe stream was still being deleted.
    return cluster_section(instance, nats.client_urls(), daemons, owns, stream=STREAM,
                           max_bytes=268435456, heartbeat_ms=HEARTBEAT_MS,
                           takeover_ms=TAKEOVER_MS)


def batch_events(k):
    """Batch k (1-based) of the stream: two new vertices, an edge between them and one back to
    an earlier vertex. Valid whenever batches 1..k-1 were applied, in order."""
    a, b = 2 * k, 2 * k + 1
    events = [("add", a), ("add", b), ("set", a, b, 10 + (k * 37) % 90)]
    if k > 1:
        events.append(("set", b, 2 * ((k * 7) % (k - 1) + 1), 5 + (k * 53) % 120))
    return events


def stored_diffs(nats, subject):
    """Every message of `subject` in the stream, in stream order, as (Yoke-Seq header, Diff),
    read through the JetStream API (STREAM.MSG.GET with next_by_subj)."""
    diffs = []
    next_sequence = 1
    while True:
        reply = json.loads(nats.request(f"$JS.API.STREAM.MSG.GET.{STREAM}",
                                        {"seq": next_sequence, "next_by_subj": subject}))
        if "error" in reply:
            if reply["error"].get("err_code") == 10037:  # no message found: the end
                return diffs
            raise AssertionError(f"reading {subject}: {reply['error']}")
        message = reply["message"]
        headers = base64.b64decode(message.get("hdrs", "")).decode()
        seq_header = None
        for line in headers.split("\r\n")[1:]:
            if line.startswith("Yoke-Seq:"):
                seq_header = int(line.split(":", 1)[1])
        publication = publish_pb2.Publication()
        publication.ParseFromString(base64.b64decode(message.get("data", "")))
        diffs.append((seq_header, publication.diff))
        next_sequence = message["seq"] + 1


def compose(diffs):
    """The pairs the diffs lead to from the empty matching; each removed pair must be there and
    each added one must not."""
    pairs = set()
    for diff in diffs:
        for pair in diff.removed:
            key = (min(pair.a, pair.b), max(pair.a, pair.b))
            assert key in pairs, f"diff {diff.seq} removes {key}, which is not matched"
            pairs.remove(key)
        for pair in diff.added:
            key = (min(pair.a, pair.b), max(pair.a, pair.b))
            assert key not in pairs, f"diff {diff.seq} adds {key}, which is matched already"
            pairs.add(key)
    return pairs


class FollowingSender:
    """Sends numbered batches one at a time to whichever daemon serves the pool: follows
    NOT_OWNER to the owner it names, and tries the other daemons when one is silent or names
    nobody. Records every Ack."""

    def __init__(self, endpoints, pool, client_id):
        self.endpoints = list(endpoints)
        self.current = 0
        self.pool = pool
        self.client_id = client_id
        self.clients = {}
        self.redirects = 0

    def _client(self, endpoint):
        if endpoint not in self.clients:
            self.clients[endpoint] = IngestClient(endpoint)
        return self.clients[endpoint]

    def _drop(self, endpoint):
        client = self.clients.pop(endpoint, None)
        if client is not None:
            client.close()

    def send(self, k, limit_s=30):
        request = make_batch_request(batch_events(k), pool=self.pool, client_id=self.client_id,
                                     client_batch=k)
        deadline = time.monotonic() + limit_s * SLOWDOWN
        while time.monotonic() < deadline:
            endpoint = self.endpoints[self.current]
            reply = self._client(endpoint).send_bytes(request.SerializeToString(), 700)
            if reply is None:  # silent (dead or paused): a fresh socket, the next daemon
                self._drop(endpoint)
                self.current = (self.current + 1) % len(self.endpoints)
                continue
            ack = reply.ack
            if ack.HasField("accepted"):
                return ack
            error = ack.rejected.errors[0]
            if error.code == ErrorCode.NOT_OWNER:
                self.redirects += 1
                if error.owner.ingest in self.endpoints:
                    self.current = self.endpoints.index(error.owner.ingest)
                else:
                    self.current = (self.current + 1) % len(self.endpoints)
                    time.sleep(0.1)
                continue
            raise AssertionError(f"batch {k} refused: {ack}")
        raise AssertionError(f"batch {k} not acknowledged within {limit_s} s")

    def close(self):
        for client in self.clients.values():
            client.close()


class ClusterTest(unittest.TestCase):
    def setUp(self):
        self.nats = NatsCluster(nodes=3)
        self.addCleanup(self.nats.stop)
        self.east = Daemon(self, name="east")
        self.west = Daemon(self, name="west")
        self.daemons = {"east": self.east, "west": self.west}
        roles = {"east": (["brissamar"], ["tazzaline"]), "west": (["tazzaline"], ["brissamar"])}
        for name, daemon in self.daemons.items():
            daemon.extra_config = cluster_config(self.nats, self.daemons, name, roles)
            daemon._write_config()
        self.east.start(timeout_s=60)
        self.west.start(timeout_s=60)

    def wait_serving(self, daemon, pool, limit_s=20):
        """Until `daemon` acknowledges a summary query of `pool` (it serves it)."""
        deadline = time.monotonic() + limit_s * SLOWDOWN
        while time.monotonic() < deadline:
            reply = daemon.ask("summary", pool)
            if not reply.HasField("error") or reply.error.code == ErrorCode.UNKNOWN_POOL:
                return
            time.sleep(0.05)
        raise AssertionError(f"{daemon.name} does not serve {pool}\n{daemon.diagnostics()}")

    def reference_matching(self, batches):
        """The matching one local-journal daemon reaches on batches 1..`batches`."""
        alone = Daemon(self, name="alone").start()
        client = IngestClient(alone.ingest)
        for k in range(1, batches + 1):
            ack = client.send(make_batch_request(batch_events(k), pool="brissamar",
                                                 client_id="ref", client_batch=k))
            self.assertEqual(ack.accepted.seq, k)
        client.close()
        return alone.matching("brissamar")

    def serving_daemon(self, pool):
        for daemon in self.daemons.values():
            if daemon.running():
                reply = daemon.ask("summary", pool)
                if not reply.HasField("error"):
                    return daemon
        raise AssertionError(f"no daemon serves {pool}")

    def check_log_agrees(self, pool, batches):
        """The pool's log replayed from the cluster, every commit certified, ends where the
        serving daemon is; and every NATS node holds the same stream."""
        urls = ",".join(self.nats.client_urls())
        # From the pool's newest snapshot when there is one (a SIGTERM writes one), so the
        # commit lines are compared, not the diffs accumulated from empty.
        commits = replay_commits(f"--cluster={urls}", "--stream", STREAM, "--pool", pool,
                                 "--verify")
        daemon = self.serving_daemon(pool)
        seq, weight, matching = daemon.matching(pool)
        self.assertEqual(seq, batches)
        self.assertEqual(commits[-1]["seq"], batches)
        self.assertEqual(commits[-1]["weight"], weight)
        self.assertEqual(commits[-1]["pairs"], len(matching))
        deadline = time.monotonic() + 20 * SLOWDOWN
        while True:
            views = [self.nats.stream_view(node, STREAM) for node in range(self.nats.size)
                     if self.nats.pid(node) is not None]
            states = {(v["messages"], v["first_seq"], v["last_seq"]) for v in views if v}
            if len(states) == 1 and len(views) == self.nats.size:
                return
            if time.monotonic() > deadline:
                raise AssertionError(f"NATS nodes disagree on {STREAM}: {views}")
            time.sleep(0.2)

    def test_a_batch_for_a_pool_served_elsewhere_names_its_owner(self):
        self.wait_serving(self.east, "brissamar")
        client = IngestClient(self.west.ingest)
        request = make_batch_request(batch_events(1), pool="brissamar", client_id="c",
                                     client_batch=1)
        # west learns who serves the pool from the log (it started after east claimed it).
        deadline = time.monotonic() + 10 * SLOWDOWN
        while True:
            ack = client.send(request)
            self.assertTrue(ack.HasField("rejected"), ack)
            error = ack.rejected.errors[0]
            self.assertEqual(error.code, ErrorCode.NOT_OWNER, ack)
            if error.owner.instance or time.monotonic() > deadline:
                break
            time.sleep(0.05)
        client.close()
        self.assertEqual(error.owner.instance, "east")
        self.assertEqual(error.owner.ingest, self.east.ingest)
        # Nothing was applied anywhere: the owner's first batch still gets seq 1.
        client = IngestClient(self.east.ingest)
        ack = client.send(make_batch_request(batch_events(1), pool="brissamar",
                                             client_id="c", client_batch=1))
        client.close()
        self.assertEqual(ack.accepted.seq, 1)
        self.assertFalse(ack.accepted.duplicate)

    def run_stream(self, batches, disrupt_at, disrupt):
        sender = FollowingSender([self.east.ingest, self.west.ingest], "brissamar", "quay-7")
        self.addCleanup(sender.close)
        for k in range(1, batches + 1):
            if k == disrupt_at:
                disrupt()
            ack = sender.send(k)
            # Exactly once, nothing lost: batch k is the pool's k-th batch, whichever daemon
            # answered and whether or not this was a retry of one applied before a failure.
            self.assertEqual(ack.accepted.seq, k, f"batch {k}: {ack}")
        return sender

    def test_the_owner_killed_mid_stream_is_replaced_and_nothing_is_lost_or_doubled(self):
        self.wait_serving(self.east, "brissamar")
        batches = 120
        killed_at = []

        def kill_east():
            killed_at.append(time.monotonic())
            self.east.kill()

        self.run_stream(batches, 50, kill_east)
        taken = self.west.log_lines("pool_taken")
        self.assertTrue(any("brissamar" in line for line in taken), self.west.diagnostics())
        self.assertEqual(self.west.summary("brissamar")["seq"], batches)
        final = self.west.matching("brissamar")
        self.assertEqual(final, self.reference_matching(batches))
        self.check_log_agrees("brissamar", batches)
        self.check_diff_subject("brissamar", batches, final)

    def test_an_owner_stopped_with_sigterm_hands_its_pool_over_without_the_takeover_wait(self):
        self.wait_serving(self.east, "brissamar")
        sender = FollowingSender([self.east.ingest, self.west.ingest], "brissamar", "quay-7")
        self.addCleanup(sender.close)
        for k in range(1, 21):
            self.assertEqual(sender.send(k).accepted.seq, k)
        stopped = time.monotonic()
        self.assertEqual(self.east.terminate(), 0)
        # Its last snapshot holds the whole pool (its log trimmed below it): a replay starts
        # there and has nothing after it.
        urls = ",".join(self.nats.client_urls())
        alone = run_yoke("replay", f"--cluster={urls}", "--stream", STREAM, "--pool",
                         "brissamar", "--verify").stdout
        self.assertIn("note: starting from the snapshot at seq 20", alone)
        for k in range(21, 41):
            self.assertEqual(sender.send(k).accepted.seq, k)
            if k == 21:
                gap = time.monotonic() - stopped
        taken = [line for line in self.west.log_lines("pool_taken") if "brissamar" in line]
        self.assertTrue(taken and "previous_left=true" in taken[-1], self.west.diagnostics())
        # Told, the standby claims on its next follow tick instead of after takeover_ms.
        self.assertLess(gap, TAKEOVER_MS / 1000 * SLOWDOWN, f"gap {gap:.2f} s")
        self.check_log_agrees("brissamar", 40)

    def check_diff_subject(self, pool, batches, final):
        """The pool's diff subject holds one diff per seq 1..batches in order (waiting a moment
        for the last ones, which go out after their acknowledgements), composing to `final`."""
        subject = f"yoke.diff.{pool}"
        deadline = time.monotonic() + 15 * SLOWDOWN
        while True:
            stored = stored_diffs(self.nats, subject)
            if (stored and stored[-1][0] == batches) or time.monotonic() > deadline:
                break
            time.sleep(0.1)
        diffs = [diff for _, diff in stored]
        self.assertEqual([header for header, _ in stored], [diff.seq for diff in diffs])
        chain = [(diff.prev_seq, diff.seq) for diff in diffs]
        # Each seq 1..batches covered by exactly one diff, in order: every diff starts where the
        # one before it ended, from 0 to the last batch.
        self.assertTrue(diffs, "no diff stored")
        self.assertEqual(diffs[0].prev_seq, 0, chain)
        for before, after in zip(diffs, diffs[1:]):
            self.assertEqual(after.prev_seq, before.seq, chain)
        self.assertEqual(diffs[-1].seq, batches, chain)
        self.assertEqual(compose(diffs), final[2])
        self.assertEqual(diffs[-1].weight, final[1])
        # A watcher that starts now catches up from the stream: the same chain.
        urls = ",".join(self.nats.client_urls())
        watched = run_yoke("watch", "--cluster", urls, "--stream", STREAM, "--pool", pool,
                           "--from-seq", "1", "--count", str(len(diffs)), "--timeout-ms", "10000")
        lines = [json.loads(line) for line in watched.stdout.splitlines()]
        self.assertEqual([(line["prev_seq"], line["seq"]) for line in lines], chain)
        self.assertEqual(watched.stderr, "")

    def test_a_paused_owner_acknowledges_nothing_after_the_claim(self):
        self.wait_serving(self.east, "brissamar")
        batches = 80

        def pause_east():
            self.east.proc.send_signal(19)  # SIGSTOP

        sender = self.run_stream(batches, 30, pause_east)
        # The stream finished on west; now wake east with a batch it may still answer.
        stale = IngestClient(self.east.ingest)
        self.east.proc.send_signal(18)  # SIGCONT
        ack = stale.send(make_batch_request(batch_events(batches + 1), pool="brissamar",
                                            client_id="quay-7", client_batch=batches + 1),
                         timeout_ms=10000)
        stale.close()
        self.assertTrue(ack.HasField("rejected"), ack)
        self.assertEqual(ack.rejected.errors[0].code, ErrorCode.NOT_OWNER)
        self.assertEqual(ack.rejected.errors[0].owner.instance, "west")
        self.assertGreater(sender.redirects + 1, 0)
        self.assertEqual(self.west.summary("brissamar")["seq"], batches)
        final = self.west.matching("brissamar")
        self.assertEqual(final, self.reference_matching(batches))
        self.check_log_agrees("brissamar", batches)
        self.check_diff_subject("brissamar", batches, final)

    def test_the_stream_leader_killed_mid_stream_then_everything_restarted(self):
        self.wait_serving(self.east, "brissamar")
        batches = 90
        killed = []

        def kill_leader():
            leader = self.nats.stream_leader(STREAM)
            killed.append(leader)
            self.nats.kill(leader)

        sender = FollowingSender([self.east.ingest, self.west.ingest], "brissamar", "quay-7")
        self.addCleanup(sender.close)
        for k in range(1, batches + 1):
            if k == 40:
                kill_leader()
            if k == 60:
                self.nats.restart(killed[0])
            self.assertEqual(sender.send(k, limit_s=60).accepted.seq, k, f"batch {k}")
        self.check_log_agrees("brissamar", batches)

        # Everything down (daemons first, then every node), everything up again.
        for daemon in self.daemons.values():
            daemon.kill()
        for node in range(self.nats.size):
            self.nats.kill(node)
        self.nats.restart_all()
        self.east.start(timeout_s=60)
        self.west.start(timeout_s=60)
        more = 30
        for k in range(batches + 1, batches + more + 1):
            self.assertEqual(sender.send(k, limit_s=60).accepted.seq, k, f"batch {k}")
        self.assertEqual(self.serving_daemon("brissamar").matching("brissamar"),
                         self.reference_matching(batches + more))
        self.check_log_agrees("brissamar", batches + more)


class ClusterConfigTest(unittest.TestCase):
    """Bad cluster setups stop yoked at once with a clear message."""

    def config_for(self, daemon, servers, owners):
        return cluster_section("east", servers, {name: daemon for name in owners},
                               {name: (owned, None) for name, owned in owners.items()})

    def exit_of(self, daemon):
        daemon.spawn()
        return daemon.proc.wait(60 * SLOWDOWN)

    def test_no_reachable_nats_server_is_a_clear_failure(self):
        from e2e_harness import free_tcp_port
        daemon = Daemon(self, name="east")
        silent = [f"nats://127.0.0.1:{free_tcp_port()}", f"nats://127.0.0.1:{free_tcp_port()}"]
        daemon.extra_config = self.config_for(daemon, silent, {"east": ["brissamar"]})
        daemon._write_config()
        self.assertEqual(self.exit_of(daemon), 1)
        self.assertTrue(daemon.log_lines("nats_unreachable"), daemon.diagnostics())
        self.assertIn(silent[0], daemon.log_text())

    def test_two_owners_of_one_pool_is_a_config_error(self):
        daemon = Daemon(self, name="east")
        daemon.extra_config = self.config_for(daemon, ["nats://127.0.0.1:4222"],
                                              {"east": ["brissamar"], "west": ["brissamar"]})
        daemon._write_config()
        self.assertEqual(self.exit_of(daemon), 2)
        self.assertIn("brissamar", daemon.stderr_text())
        self.assertIn("east", daemon.stderr_text())
        self.assertIn("west", daemon.stderr_text())


if __name__ == "__main__":
    unittest.main()
