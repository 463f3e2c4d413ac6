"""Probe cases about recovery: retirements, held pairs and the ledger's horizon across a
SIGKILL and a restart, and a new pool's big first batch (decoded off the loop)."""

import time

from harness import (Client, Code, Daemon, accepted, add, first_error, hold, outcome, qoutcome,
                     rejected_code, set_)
from yoke.v1 import query_pb2

P = "docs/protocol.md"


def _snapshot(c, pool):
    return c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest(all_pools=True)),
                   pool=pool, timeout=20)


def _kill_restart(d, c):
    c.close()
    d.proc.kill()
    d.proc.wait()
    d.start(timeout=20)
    return Client(d)


def recovery(rec, yoked):
    d = Daemon(yoked, "[ledger]\nidle_seconds = 1\n", tag="recover")
    d.start()
    c = Client(d)
    try:
        # retirement before and after a snapshot, then a new pool of the same name
        c.batch("rp", [set_(1, 2, 5)], client_id="X", client_batch=5)
        _snapshot(c, "rp")
        old_rp = c.matching("rp").matching.incarnation
        c.retire("rp", client_id="X", client_batch=6)
        n1 = c.batch("rp", [set_(7, 8, 3)], client_id="X", client_batch=1)
        c.batch("gone", [add(1)], client_id="X", client_batch=1)
        c.retire("gone", client_id="X", client_batch=2)
        # a held pair against a heavier edge
        c.batch("held", [set_(1, 2, 1), set_(1, 3, 50), hold(1, 2)], client_id="X",
                client_batch=1)
        # client ids that differ after a NUL byte, one of them kept in a snapshot
        c.batch("nul", [add(1)], client_id="n\0a", client_batch=1)
        _snapshot(c, "nul")
        c.batch("nul", [add(2)], client_id="n\0b", client_batch=1)
        # the horizon: a mark idle past idle_seconds in a pool that received nothing since
        q = c.batch("quiet", [add(1)], client_id="Q", client_batch=1)
        kept = ("rp", "held", "nul", "quiet")
        before = {p: c.matching(p).matching.incarnation for p in kept}
        time.sleep(2.2)
        c = _kill_restart(d, c)
        after = {p: c.matching(p).matching.incarnation for p in kept}
        rec.case("incarnations across SIGKILL and recovery (snapshot and journal)",
                 f"{P}:195-206 ('the same after a restart'); publish.proto Diff.incarnation",
                 "the same, not 0; the pool made again above its retired predecessor",
                 f"before {before}, after {after}; rp before its retirement {old_rp}",
                 before == after and all(before.values()) and before["rp"] > old_rp > 0)
        s = c.summary("rp")
        rec.case("SIGKILL after snapshot, retirement, new pool: the new pool is recovered",
                 f"{P}:259-264; records.proto JournalRecord.retired", "seq 1, 2 vertices",
                 qoutcome(s), s.WhichOneof("kind") == "summary" and s.summary.seq == 1
                 and s.summary.vertices == 2)
        r = c.batch("rp", [add(9)], client_id="X", client_batch=1)
        rec.case("after recovery: resend of the new pool's batch 1", f"{P}:219",
                 f"duplicate seq {n1.ack.accepted.seq if accepted(n1) else '?'}", outcome(r),
                 accepted(r) and r.ack.accepted.duplicate and r.ack.accepted.seq == 1)
        r = c.batch("rp", [add(10)], client_id="X", client_batch=5)
        rec.case("after recovery: the old pool's batch 5 is not remembered in the new pool",
                 f"{P}:119-120 (the marks go with the pool)", "a new batch: accepted seq 2, not "
                 "duplicate", outcome(r), accepted(r) and not r.ack.accepted.duplicate
                 and r.ack.accepted.seq == 2)
        g = c.summary("gone")
        rec.case("a pool retired before the kill stays retired", f"{P}:114-116",
                 "UNKNOWN_POOL", qoutcome(g), g.WhichOneof("kind") == "error"
                 and g.error.code == Code.UNKNOWN_POOL)
        r1 = c.batch("nul", [add(3)], client_id="n\0a", client_batch=1)
        r2 = c.batch("nul", [add(4)], client_id="n\0b", client_batch=1)
        r3 = c.batch("nul", [add(5)], client_id="n", client_batch=1)
        rec.case("client ids with NUL bytes, from a snapshot and the journal, after a restart",
                 f"{P}:259-264", "duplicate seq 1, duplicate seq 2, new seq 3", " / ".join(
                     outcome(r) for r in (r1, r2, r3)),
                 [(r.ack.accepted.duplicate, r.ack.accepted.seq) for r in (r1, r2, r3)] ==
                 [(True, 1), (True, 2), (False, 3)])
        m = c.mate("held", 1)
        rec.case("a held pair survives the restart", "events.proto HOLD_PAIR", "mate 2",
                 qoutcome(m), m.WhichOneof("kind") == "mate" and m.mate.mate == 2)
        r = c.batch("quiet", [add(2)], client_id="Q", client_batch=1)
        rec.case("idle mark across a restart: resend in a pool that received nothing",
                 f"{P}:259-264 (decisions depend on the log alone)", "as without a restart "
                 "(the no-restart probe saw a duplicate)", outcome(r) + f" (original seq "
                 f"{q.ack.accepted.seq if accepted(q) else None})",
                 accepted(r) and r.ack.accepted.duplicate)
    finally:
        c.close()
        d.stop()
    return d


def big_first_batch(rec, c):
    n = 100000
    evs = [add(i) for i in range(n - 1)] + [add(5)]
    r = c.batch("bigbad", evs, client_id="G", client_batch=1, timeout=30)
    ok = rejected_code(r) == Code.VERTEX_EXISTS and first_error(r).event_index == n - 1
    rec.case("a new pool's 100,000-event first batch, bad last event", f"{P}:46-50 (decoded and "
             "checked on a repair thread)", f"VERTEX_EXISTS at event_index {n - 1}",
             outcome(r), ok)
    q = c.summary("bigbad")
    rec.case("... creates no pool", f"{P}:97-98", "UNKNOWN_POOL", qoutcome(q),
             q.WhichOneof("kind") == "error" and q.error.code == Code.UNKNOWN_POOL)
    # a big first batch, and right behind it a small one that names its vertices
    from cases_state import _batch_request
    c.send_request(_batch_request("bigok", [add(i) for i in range(n)], "G1", 1))
    c.send_request(_batch_request("bigok", [set_(0, 1, 5)], "G2", 1))
    c.send_request(_batch_request("bigok", [add(1)], "G1", 1))
    a1, a2, a3 = c.wait_ack("G1", 1, 30), c.wait_ack("G2", 1, 30), c.wait_ack("G1", 1, 30)
    ok = accepted(a1) and accepted(a2) and a1.ack.accepted.seq == 1 and \
        a2.ack.accepted.seq == 2 and accepted(a3) and a3.ack.accepted.duplicate and \
        a3.ack.accepted.seq == 1
    rec.case("big first batch; a batch naming its vertices and its resend sent right behind",
             f"{P}:46-53 (the batches after it wait for it)", "seq 1, seq 2, duplicate seq 1",
             " / ".join(outcome(x) for x in (a1, a2, a3)), ok)
