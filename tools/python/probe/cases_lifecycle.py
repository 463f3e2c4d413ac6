"""Probe cases about the daemon's life: SIGTERM with batches in flight, SIGKILL and restart,
the journal's lock, and a far oversized message."""

import signal
import time

import zmq

from harness import (Client, Code, Daemon, V1, accepted, add, code_name, outcome,
                     rejected_code)
from yoke.v1 import ingest_pb2, query_pb2

P = "docs/protocol.md"


def _request(pool, u, cid, number):
    req = ingest_pb2.IngestRequest(version=V1)
    req.batch.pool, req.batch.client_id, req.batch.client_batch = pool, cid, number
    req.batch.events.append(add(u))
    return req.SerializeToString()


def _burst(c, pool, cid, count, on_half):
    c.ing.setsockopt(zmq.SNDHWM, 0)
    for b in range(1, count + 1):
        c.send_raw(_request(pool, b, cid, b))
        if b == count // 2:
            on_half()


def _collect(c, timeout):
    got = []
    deadline = time.time() + timeout
    while time.time() < deadline:
        r = c.recv_ack(0.3)
        if r is None:
            if got and time.time() > deadline - timeout + 1.0:
                break
            continue
        got.append(r)
    return got


def _pipeline(c, pool, cid, numbers, in_flight=64, vertex_base=0, stop_after=None,
              on_stop=None, timeout=5.0):
    """Sends the batches numbered `numbers` (one ADD_VERTEX of vertex_base + b each), at most
    in_flight unanswered, as a client within the exactly-once horizon does; the replies by
    number. After stop_after replies, calls on_stop and sends nothing more."""
    replies, todo = {}, list(numbers)
    outstanding = 0
    stopped = False
    while (todo and not stopped) or outstanding:
        while todo and not stopped and outstanding < in_flight:
            b = todo.pop(0)
            c.send_raw(_request(pool, vertex_base + b, cid, b))
            outstanding += 1
        r = c.recv_ack(timeout if not stopped else 0.5)
        if r is None:
            break
        outstanding -= 1
        replies[r.ack.client_batch if r.ack.client_id else -len(replies) - 1] = r
        if stop_after is not None and not stopped and len(replies) >= stop_after:
            stopped = True
            on_stop()
    return replies


def _kinds(replies):
    codes = {}
    for r in replies.values():
        k = "dup" if accepted(r) and r.ack.accepted.duplicate else (
            "new" if accepted(r) else code_name(rejected_code(r)))
        codes[k] = codes.get(k, 0) + 1
    return codes


def sigterm_in_flight(rec, yoked):
    d = Daemon(yoked, "", tag="term")
    d.start()
    c = Client(d)
    n = 20000
    c.batch("term", [add(0)], client_id="warm", client_batch=1)
    _burst(c, "term", "T", n, lambda: d.signal(signal.SIGTERM))
    replies = _collect(c, 6.0)
    code = d.wait_exit(30)
    c.close()
    acc = {r.ack.client_batch: r.ack.accepted.seq for r in replies if accepted(r)
           and r.ack.client_id == "T"}
    unav_named = [r for r in replies if rejected_code(r) == Code.UNAVAILABLE and r.ack.client_id]
    unav_unnamed = [r for r in replies if rejected_code(r) == Code.UNAVAILABLE
                    and not r.ack.client_id]
    other = [r for r in replies if not accepted(r) and rejected_code(r) != Code.UNAVAILABLE]
    rec.case("SIGTERM with 20,000 one-event batches in flight: exit status", "README.md:166-167",
             "exit 0", f"exit {code}", code == 0)
    rec.case("SIGTERM in flight: replies", f"{P}:162-165",
             "accepted ones, then UNAVAILABLE naming no batch for the queued rest",
             f"{len(acc)} accepted, {len(unav_unnamed)} UNAVAILABLE unnamed, {len(unav_named)} "
             f"UNAVAILABLE naming a batch, {len(other)} other, {n - len(replies)} unanswered; "
             f"other e.g. {outcome(other[0]) if other else '-'}",
             not other and not unav_named)
    prefix = sorted(acc) == list(range(1, len(acc) + 1))
    rec.case("SIGTERM in flight: accepted batches are a prefix 1..k", "implied by FIFO reading "
             "(spec silent)", "prefix", f"{len(acc)} accepted, prefix={prefix}", None if not
             prefix else True)
    d.start()
    c = Client(d)
    s = c.summary("term")
    seq_after = s.summary.seq if s.WhichOneof("kind") == "summary" else None
    want = 1 + len(acc)
    rec.case("restart after SIGTERM: every accepted batch kept, nothing else", "README.md:166-167,"
             f" {P}:162-165", f"seq {want} (1 warm-up + accepted)", f"seq {seq_after}",
             seq_after == want)
    st = c.stats("term")
    rec.case("SIGTERM writes a snapshot: after the restart, last_snapshot_seq = seq",
             "README.md:166 ('finishes the window, writes a snapshot and exits 0')",
             f"last_snapshot_seq {want}", f"last_snapshot_seq {st.stats.last_snapshot_seq}",
             st.stats.last_snapshot_seq == want)
    k = len(acc)
    again = _pipeline(c, "term", "T", range(max(1, k - 63), n + 1))
    dups_ok = all(again.get(b) is not None and again[b].ack.accepted.duplicate and
                  again[b].ack.accepted.seq == acc[b] for b in range(max(1, k - 63), k + 1))
    s2 = c.summary("term")
    rec.case("resend (64 in flight) the last 64 accepted and every UNAVAILABLE batch",
             f"{P}:162-169, :223-224", "the accepted answered duplicate with their seq; the rest "
             f"applied once; seq {n + 1}", f"{_kinds(again)}, duplicates' seqs ok={dups_ok}; "
             f"seq {s2.summary.seq}", dups_ok and s2.summary.seq == n + 1
             and _kinds(again).get("new") == n - k)
    c.close()
    d.stop()
    return d


def sigkill_restart(rec, yoked):
    d = Daemon(yoked, "[journal]\nlock_wait_ms = 10000\n", tag="kill")
    d.start()
    c = Client(d)
    for b in range(1, 51):
        c.batch("kill", [add(b)], client_id="K", client_batch=b)
    c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest()), pool="kill",
            timeout=20)
    n = 5000
    base = 100000
    replies = _pipeline(c, "kill", "K2", range(1, n + 1), vertex_base=base, stop_after=2000,
                        on_stop=d.proc.kill, timeout=2.0)
    d.proc.wait()
    c.close()
    acc = {b: r.ack.accepted.seq for b, r in replies.items() if accepted(r)}
    t0 = time.time()
    d.start(timeout=20)
    up = time.time() - t0
    rec.case("restart right after SIGKILL (journal lock)", "README.md:169-171; yoked.example.toml"
             " [journal] lock_wait_ms", "comes up (within lock_wait_ms)", f"up in {up:.2f} s",
             True)
    c = Client(d)
    lost = []
    for b in acc:
        m = c.mate("kill", base + b)
        if m is None or m.WhichOneof("kind") != "mate":
            lost.append(b)
    rec.case("SIGKILL mid-stream (64 in flight): every acknowledged batch's vertex is there",
             "docs/contracts.md:67-68; README.md:167-168", "none lost",
             f"{len(acc)} acked before the kill, {len(lost)} lost {lost[:5]}", not lost)
    # The unacknowledged batches were at most 64 (the ledger's batches_per_client) in flight:
    # each resend is answered exactly (a duplicate when the journal kept it), none refused.
    # Acknowledged batches are not resent: journalled unacknowledged ones may have pushed them
    # out of the remembered 64 (BATCH_FORGOTTEN would then be right).
    k = max(acc) if acc else 0
    again = _pipeline(c, "kill", "K2", range(k + 1, n + 1), vertex_base=base)
    kinds = _kinds(again)
    s = c.summary("kill")
    rec.case("after SIGKILL: resend every unacknowledged batch (64 in flight)",
             f"{P}:223-224, :167-169", f"each duplicate or new, none refused; final seq {50 + n}",
             f"{kinds}, seq {s.summary.seq}", set(kinds) <= {"dup", "new"}
             and s.summary.seq == 50 + n)
    r = c.batch("kill", [add(10 ** 6)], client_id="K", client_batch=50)
    rec.case("resend of a batch acked before the snapshot, after SIGKILL restart",
             f"{P}:259-264 (ledger rebuilt from snapshot + journal)", "duplicate seq 50",
             outcome(r), accepted(r) and r.ack.accepted.duplicate and r.ack.accepted.seq == 50)
    # a second daemon on the same data directory while this one runs
    other = Daemon(yoked, "[journal]\nlock_wait_ms = 1000\n", data_dir=d.data_dir, tag="second")
    t0 = time.time()
    other.start(wait=False)
    code = other.wait_exit(15)
    rec.case("a second yoked on the same data directory (lock_wait_ms 1000)",
             "yoked.example.toml [journal] lock_wait_ms: 'then it exits 1'", "exit 1 after ~1 s",
             f"exit {code} after {time.time() - t0:.2f} s", code == 1)
    if code is None:
        other.proc.kill()
    s = c.summary("kill")
    rec.case("first daemon unaffected by the second's attempt", "-", "still answers",
             f"seq {s.summary.seq}" if s else "no reply", s is not None)
    c.close()
    d.stop()
    return d


def far_oversized(rec, d):
    victim, bystander = Client(d), Client(d)
    victim.send_raw(b"\0" * (10 * 1024 * 1024))
    r = victim.recv_ack(1.5)
    b = bystander.batch("oversize", [add(1)], client_id="by", client_batch=1)
    rec.case("a 10 MiB message (> 2 x 4 MiB + 1 MiB)", f"{P}:29-31",
             "no reply; the connection dropped; other peers unaffected",
             f"victim: {outcome(r)}; bystander: {outcome(b)}", r is None and accepted(b))
    victim.close()
    bystander.close()


def unread_replies(rec, d):
    """250,000 queries sent without reading the replies for 3 s (a client with ZeroMQ's default
    receive queue of 1,000)."""
    s = zmq.Context.instance().socket(zmq.DEALER)
    s.setsockopt(zmq.SNDHWM, 0)
    s.setsockopt(zmq.LINGER, 0)
    s.connect(d.query)
    n = 250000
    for i in range(1, n + 1):
        s.send(query_pb2.QueryRequest(version=V1, request_id=i,
                                      health=query_pb2.HealthRequest()).SerializeToString())
    time.sleep(3)
    got = set()
    while s.poll(2000):
        r = query_pb2.QueryReply()
        r.ParseFromString(s.recv())
        got.add(r.request_id)
    s.close(0)
    missing = sorted(set(range(1, n + 1)) - got)
    rec.case("250,000 queries whose replies are read only after 3 s", f"{P}:154-158 (replies "
             "past 100,000 unread are dropped)", "at least 100,000 replies; the rest may be lost",
             f"{len(got)} replies; {len(missing)} lost silently, from request "
             f"{missing[0] if missing else None}", len(got) >= 100000)


def replay_equals_daemon(rec, yoke, d, summaries):
    """contracts.md §4: a replay of the journal commits the daemon's groups and ends in the
    daemon's state. `summaries` are the Summary replies taken before the daemon stopped."""
    import subprocess
    for pool, reply in summaries.items():
        out = subprocess.run([yoke, "replay", d.data_dir, "--pool", pool, "--verify"],
                             capture_output=True, text=True, timeout=120)
        if reply.WhichOneof("kind") != "summary":
            rec.case(f"yoke replay DATA_DIR --pool {pool}, a pool retired at the end",
                     "README.md:116-117 ('replay shows a pool's life since its last "
                     "retirement'); contracts.md:41-42 (exit 2: bad input)",
                     "(GAP) an error naming the retirement, or an empty replay",
                     f"exit {out.returncode}: {out.stderr.strip()[:140]!r}", None)
            continue
        s = reply.summary
        last = [ln for ln in out.stdout.splitlines() if ln.startswith("commit ")]
        fields = last[-1].split() if last else []
        got = {fields[i]: fields[i + 1] for i in range(2, len(fields) - 1, 2)} if fields else {}
        want = {"weight": str(s.weight), "pairs": str(s.pairs), "seq": str(s.seq)}
        ok = out.returncode == 0 and all(got.get(k) == v for k, v in want.items())
        rec.case(f"yoke replay DATA_DIR --pool {pool} --verify ends in the daemon's state",
                 "docs/contracts.md:38-40, :47-50; README.md:116-117", f"exit 0, last commit "
                 f"{want}", f"exit {out.returncode}, last line {last[-1] if last else None!r} "
                 f"{out.stderr.strip()[:120]!r}", ok)
