"""Probe cases about state across messages: the retry ledger, retirement, queries, catch-up,
max_pools and the exactly-once horizon."""

import time

from harness import (Code, Subscriber, accepted, add, apply_diff, first_error, outcome,
                     qoutcome, rejected_code, set_)
from yoke.v1 import query_pb2

P = "docs/protocol.md"
EV = "proto/yoke/v1/events.proto"
IN = "proto/yoke/v1/ingest.proto"
PU = "proto/yoke/v1/publish.proto"
QU = "proto/yoke/v1/query.proto"


def is_dup(r, seq):
    return accepted(r) and r.ack.accepted.duplicate and r.ack.accepted.seq == seq


def refused(r, code, last_batch="any"):
    if rejected_code(r) != code:
        return False
    e = first_error(r)
    if last_batch == "any":
        return True
    if last_batch is None:
        return not e.HasField("last_batch")
    return e.HasField("last_batch") and e.last_batch == last_batch


def ledger(rec, c):
    pool = "ledger"
    seqs = {}
    for b in (1, 2, 3, 5):
        r = c.batch(pool, [add(b)], client_id="L", client_batch=b)
        seqs[b] = r.ack.accepted.seq if accepted(r) else None
    r = c.batch(pool, [add(999)], client_id="L", client_batch=2)
    rec.case("resend of a remembered batch (2) with different events", f"{EV}:57-58",
             f"Accepted duplicate seq={seqs[2]}; nothing applied", outcome(r),
             is_dup(r, seqs[2]))
    m = c.mate(pool, 999)
    rec.case("the duplicate's events were not applied", f"{EV}:58", "UNKNOWN_VERTEX for 999",
             qoutcome(m), m is not None and m.WhichOneof("kind") == "error"
             and m.error.code == Code.UNKNOWN_VERTEX)
    r = c.batch(pool, [add(40)], client_id="L", client_batch=4)
    rec.case("batch below the highest, never accepted (4 < 5)", f"{EV}:59-60; {P}:220",
             "BATCH_SKIPPED last_batch=5", outcome(r), refused(r, Code.BATCH_SKIPPED, 5))
    r = c.batch(pool, [add(41)], client_id="L", client_batch=4)
    rec.case("the same skipped batch again", f"{P}:223-224 (a refused batch is checked again)",
             "BATCH_SKIPPED last_batch=5 again", outcome(r), refused(r, Code.BATCH_SKIPPED, 5))
    r = c.batch(pool, [add(60)], client_id="L", client_batch=6, after_batch=3)
    rec.case("after_batch naming a batch that is not the last applied (3, last is 5)",
             f"{P}:218; {EV}:81-85", "OUT_OF_ORDER last_batch=5", outcome(r),
             refused(r, Code.OUT_OF_ORDER, 5))
    r = c.batch(pool, [add(60)], client_id="L", client_batch=6, after_batch=5)
    rec.case("after_batch = the last applied", f"{P}:218", "accepted", outcome(r), accepted(r))
    seqs[6] = r.ack.accepted.seq if accepted(r) else None
    r = c.batch(pool, [add(61)], client_id="L", client_batch=6, after_batch=4)
    rec.case("resend of 6 with a wrong after_batch (retry rule first)", f"{EV}:85 (checked "
             "after the retry rule)", f"duplicate seq={seqs[6]}", outcome(r), is_dup(r, seqs[6]))
    r = c.batch(pool, [add(62)], client_id="fresh-L", client_batch=1, after_batch=7)
    rec.case("after_batch from a client with no mark in the pool", f"{P}:253-255; protocol.proto "
             "Error.last_batch", "OUT_OF_ORDER without last_batch", outcome(r),
             refused(r, Code.OUT_OF_ORDER, None))
    # restart of the counter: far above, then from 1 again
    base = 1_700_000_000_000_000
    c.batch(pool, [add(70)], client_id="clock", client_batch=base)
    c.batch(pool, [add(71)], client_id="clock", client_batch=base + 10)
    r = c.batch(pool, [add(72)], client_id="clock", client_batch=1)
    rec.case("client restarts its counter at 1 below its first batch", f"{P}:226-228",
             f"BATCH_FORGOTTEN (or BATCH_SKIPPED) last_batch={base + 10}", outcome(r),
             refused(r, Code.BATCH_FORGOTTEN, base + 10) or
             refused(r, Code.BATCH_SKIPPED, base + 10))
    r = c.batch(pool, [add(73)], client_id="clock", client_batch=base + 5)
    rec.case("batch between two remembered ones, never sent", f"{EV}:59-60",
             f"BATCH_SKIPPED last_batch={base + 10}", outcome(r),
             refused(r, Code.BATCH_SKIPPED, base + 10))
    # 0 and 2^64 - 1
    r0 = c.batch(pool, [add(80)], client_id="zero", client_batch=0)
    r0b = c.batch(pool, [add(81)], client_id="zero", client_batch=0)
    rec.case("batch number 0, then its resend", f"{P}:230; {EV}:52",
             "accepted, then duplicate with the same seq", outcome(r0) + " / " + outcome(r0b),
             accepted(r0) and is_dup(r0b, r0.ack.accepted.seq))
    r = c.batch(pool, [add(82)], client_id="zero", client_batch=1, after_batch=0)
    rec.case("after batch 0, batch 1 with after_batch 0 (0 = no condition)", f"{EV}:82",
             "accepted", outcome(r), accepted(r))
    top = 2 ** 64 - 1
    rt = c.batch(pool, [add(83)], client_id="top", client_batch=top)
    r1 = c.batch(pool, [add(84)], client_id="top", client_batch=5)
    r2 = c.batch(pool, [add(85)], client_id="top", client_batch=top)
    rec.case("batch 2^64-1 accepted", f"{P}:230", "accepted", outcome(rt), accepted(rt))
    rec.case("after 2^64-1, a lower number", f"{P}:230-232", f"refused naming last_batch={top}",
             outcome(r1), rejected_code(r1) in (Code.BATCH_SKIPPED, Code.BATCH_FORGOTTEN)
             and first_error(r1).last_batch == top)
    rec.case("after 2^64-1, its resend", f"{EV}:57-58", "duplicate", outcome(r2),
             accepted(rt) and is_dup(r2, rt.ack.accepted.seq))
    # a refused batch is not remembered
    rb = c.batch(pool, [set_(9, 9, 1)], client_id="refused", client_batch=3)
    rb2 = c.batch(pool, [add(90)], client_id="refused", client_batch=3)
    rec.case("refused batch resent with the same number and good events", f"{P}:223-224",
             "first SELF_LOOP, then accepted (not a duplicate)", outcome(rb) + " / " +
             outcome(rb2), rejected_code(rb) == Code.SELF_LOOP and accepted(rb2)
             and not rb2.ack.accepted.duplicate)
    # no client id: applied each time
    s1 = c.batch(pool, [set_(100, 101, 1)], client_id="", client_batch=9)
    s2 = c.batch(pool, [set_(100, 101, 2)], client_id="", client_batch=9)
    rec.case("no client id: same batch number twice", f"{P}:236", "both applied, new seqs",
             outcome(s1) + " / " + outcome(s2), accepted(s1) and accepted(s2)
             and not s2.ack.accepted.duplicate
             and s2.ack.accepted.seq == s1.ack.accepted.seq + 1)
    # the same client id in two pools: independent ledgers
    a = c.batch("ledger-other", [add(1)], client_id="L", client_batch=1)
    rec.case("same client id and batch number in another pool", f"{P}:210 (per pool)",
             "a new batch, accepted seq 1 not duplicate", outcome(a), accepted(a)
             and not a.ack.accepted.duplicate and a.ack.accepted.seq == 1)
    # a resend before the original's window is durable: answered as a duplicate
    c.send_request(_batch_request(pool, [add(300)], "inflight", 1))
    c.send_request(_batch_request(pool, [add(301)], "inflight", 1))
    ra = c.wait_ack("inflight", 1)
    rb = c.wait_ack("inflight", 1)
    ok = accepted(ra) and accepted(rb) and \
        sorted([ra.ack.accepted.duplicate, rb.ack.accepted.duplicate]) == [False, True] and \
        ra.ack.accepted.seq == rb.ack.accepted.seq
    rec.case("original and resend sent back to back (same window)", f"{P}:233-235",
             "one accepted, one duplicate, same seq", outcome(ra) + " / " + outcome(rb), ok)


def _batch_request(pool, events, cid, number, after=0):
    from yoke.v1 import ingest_pb2
    from harness import V1
    req = ingest_pb2.IngestRequest(version=V1)
    req.batch.pool, req.batch.client_id, req.batch.client_batch = pool, cid, number
    req.batch.after_batch = after
    for e in events:
        req.batch.events.append(e)
    return req


def queries(rec, c):
    pool = "queries"
    c.batch(pool, [set_(1, 2, 7), add(3)], client_id="q", client_batch=1)
    m = c.mate(pool, 3)
    rec.case("mate of an alive unpaired vertex", f"{QU}:82-83", "Mate with mate absent",
             qoutcome(m), m.WhichOneof("kind") == "mate" and not m.mate.HasField("mate")
             and not m.mate.HasField("pair_weight"))
    m = c.mate(pool, 12345)
    rec.case("mate of a vertex not in the pool", f"{QU}:82-83", "Error UNKNOWN_VERTEX",
             qoutcome(m), m.WhichOneof("kind") == "error" and m.error.code == Code.UNKNOWN_VERTEX)
    e = c.query(query_pb2.QueryRequest(explain=query_pb2.ExplainRequest(vertex=12345)), pool=pool)
    rec.case("explain of a vertex not in the pool", "query.proto: silent (Error kinds list "
             "UNKNOWN_VERTEX for 'a vertex the pool does not hold')", "Error UNKNOWN_VERTEX",
             qoutcome(e), e.WhichOneof("kind") == "error" and e.error.code == Code.UNKNOWN_VERTEX)
    for kind, req in (("summary", query_pb2.QueryRequest(summary=query_pb2.SummaryRequest())),
                      ("stats", query_pb2.QueryRequest(stats=query_pb2.StatsRequest())),
                      ("snapshot (one pool)",
                       query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest()))):
        r = c.query(req, pool="never-made")
        ok = r.WhichOneof("kind") == "error" and r.error.code == Code.UNKNOWN_POOL and \
            r.error.message == "there is no pool never-made"
        rec.case(f"{kind} of a pool never made", f"{P}:99-101",
                 "Error UNKNOWN_POOL 'there is no pool never-made'", qoutcome(r), ok)
        rec.case(f"{kind} of a pool never made: QueryReply.pool", f"{QU}:40 ('The pool as "
                 "resolved')", "'never-made' (as the other kinds answer)", repr(r.pool),
                 r.pool == "never-made")
    r = c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest(all_pools=True)),
                pool="never-made", timeout=20)
    rec.case("snapshot all_pools naming a pool that does not exist", f"{P}:140-142",
             "every pool written; QueryReply.pool the name as sent", qoutcome(r)[:200],
             r is not None and r.WhichOneof("kind") == "snapshot" and r.pool == "never-made"
             and len(r.snapshot.pools) > 1)
    r = c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest()), pool=pool,
                timeout=20)
    ok = r.WhichOneof("kind") == "snapshot" and [e.pool for e in r.snapshot.pools] == [pool]
    rec.case("snapshot of one pool lists that pool alone", f"{QU}:178-182", f"pools=[{pool}]",
             qoutcome(r)[:200], ok)
    st = c.stats(pool)
    rec.case("stats after a snapshot: last_snapshot_seq", f"{QU}:172-173", "1",
             qoutcome(st)[:120] + f" ... last_snapshot_seq={st.stats.last_snapshot_seq}",
             st.stats.last_snapshot_seq == 1)
    # a REQ socket works too
    import zmq
    req = zmq.Context.instance().socket(zmq.REQ)
    req.setsockopt(zmq.LINGER, 0)
    req.connect(c.daemon_query)
    q = query_pb2.QueryRequest(version=1, request_id=77, pool=pool,
                               summary=query_pb2.SummaryRequest())
    req.send(q.SerializeToString())
    got = None
    if req.poll(3000):
        got = query_pb2.QueryReply()
        got.ParseFromString(req.recv())
    req.close(0)
    rec.case("query from a REQ socket", f"{P}:26", "summary reply id 77",
             qoutcome(got), got is not None and got.request_id == 77
             and got.WhichOneof("kind") == "summary")


def retire(rec, c, daemon):
    pool = "ret"
    sub = Subscriber(daemon, pool)
    time.sleep(0.3)
    c.batch(pool, [set_(1, 2, 5), set_(3, 4, 6)], client_id="R", client_batch=1)
    c.batch(pool, [set_(5, 6, 1)], client_id="R", client_batch=2)
    d = sub.diffs(0.5)
    first = d[0][1].diff if d else None
    rec.case("a pool's first diff has prev_seq 0 and two frames (topic = pool)", f"{P}:102-103, "
             ":34-35", "prev_seq 0 seq 1", f"{len(d)} diffs; first: topic={d[0][0] if d else None}"
             f" frames={d[0][2] if d else None} prev_seq={first.prev_seq if first else None} "
             f"seq={first.seq if first else None}",
             bool(d) and d[0][0] == pool and d[0][2] == 2 and first.prev_seq == 0 and
             first.seq == 1)
    r = c.retire(pool, client_id="R", client_batch=99, at_seq=1)
    rec.case("retire with a wrong at_seq (1; pool at 2)", f"{IN}:48-49",
             "SEQ_MISMATCH naming the pool's seq 2", outcome(r),
             rejected_code(r) == Code.SEQ_MISMATCH and "2" in first_error(r).message)
    r = c.retire(pool, client_id="R", client_batch=100, at_seq=2)
    ok = accepted(r) and r.ack.accepted.seq == 3 and r.ack.client_batch == 100
    rec.case("retire with the right at_seq", f"{P}:112-113; {IN}:24-25",
             "Ack accepted seq 3 (last seq + 1)", outcome(r), ok)
    d = sub.diffs(0.5)
    last = d[-1][1].diff if d else None
    ok = last is not None and last.retired and last.seq == 3 and last.prev_seq == 2 and \
        last.weight == 0 and last.pairs == 0 and len(last.removed) == 3
    rec.case("subscribers get a last diff with retired set, removing every pair", f"{P}:114;"
             f" {PU} Diff.retired", "retired seq 3 prev_seq 2, removed 3 pairs, weight 0",
             (f"retired={last.retired} seq={last.seq} prev={last.prev_seq} removed="
              f"{len(last.removed)} weight={last.weight} pairs={last.pairs}") if last else
             "no diff", ok)
    for kind, req in (("summary", query_pb2.QueryRequest(summary=query_pb2.SummaryRequest())),
                      ("matching", query_pb2.QueryRequest(matching=query_pb2.MatchingRequest())),
                      ("mate", query_pb2.QueryRequest(mate=query_pb2.MateRequest(vertex=1)))):
        q = c.query(req, pool=pool)
        rec.case(f"{kind} query on a retired pool", f"{P}:115-116", "Error UNKNOWN_POOL",
                 qoutcome(q), q.WhichOneof("kind") == "error" and q.error.code == Code.UNKNOWN_POOL)
    r = c.batch(pool, [add(77)], client_id="R", client_batch=2, after_batch=1)
    rec.case("first retry after the retirement carries after_batch", f"{IN}:38-40 ('unless it "
             "carries after_batch (then OUT_OF_ORDER)')", "OUT_OF_ORDER without last_batch; no "
             "pool created", outcome(r), refused(r, Code.OUT_OF_ORDER, None))
    r = c.retire(pool, client_id="R", client_batch=100)
    rec.case("resent retirement (reply lost)", f"{P}:117-118", "UNKNOWN_POOL", outcome(r),
             rejected_code(r) == Code.UNKNOWN_POOL)
    # a retry of a batch sent before the retirement, without after_batch: applied to the new pool
    r = c.batch(pool, [set_(1, 2, 5), set_(3, 4, 6)], client_id="R", client_batch=1)
    ok = accepted(r) and not r.ack.accepted.duplicate and r.ack.accepted.seq == 1
    rec.case("retry of an old batch after the retirement, no after_batch", f"{P}:119-120",
             "applied to the new pool: accepted seq 1, not duplicate", outcome(r), ok)
    d = sub.diffs(0.5)
    nd = d[-1][1].diff if d else None
    rec.case("new pool of the same name: first diff prev_seq 0", f"{P}:115-116; {PU}",
             "seq 1 prev_seq 0", f"seq={nd.seq} prev={nd.prev_seq}" if nd else "no diff",
             nd is not None and nd.seq == 1 and nd.prev_seq == 0 and not nd.retired)
    r = c.batch(pool, [add(9)], client_id="R", client_batch=2, after_batch=1)
    rec.case("retry of old batch 2 (after_batch 1) in the new pool", f"{P}:119-120; {IN}:38-40",
             "duplicate? batch 1 was applied in the new pool, so 2 after 1 is a new batch:"
             " accepted seq 2", outcome(r), accepted(r) and r.ack.accepted.seq == 2)
    # retirement and the same pool's batch sent back to back, and two retirements at once
    c.send_request(_retire_request(pool, "R2", 1))
    c.send_request(_retire_request(pool, "R2", 2))
    a1 = c.wait_ack("R2", 1)
    a2 = c.wait_ack("R2", 2)
    rec.case("two retirements of one pool sent back to back", f"{IN}:28-31 (a retirement sent "
             "after it waits, and finds the new pool or none)",
             "first accepted; second UNKNOWN_POOL", outcome(a1) + " / " + outcome(a2),
             accepted(a1) and rejected_code(a2) == Code.UNKNOWN_POOL)
    c.send_request(_batch_request(pool, [add(1)], "R3", 1))
    c.send_request(_retire_request(pool, "R3", 2))
    c.send_request(_batch_request(pool, [add(2)], "R3", 3))
    b1, rt, b3 = c.wait_ack("R3", 1), c.wait_ack("R3", 2), c.wait_ack("R3", 3)
    q = c.summary(pool)
    ok = accepted(b1) and accepted(rt) and accepted(b3) and b3.ack.accepted.seq == 1 and \
        q.WhichOneof("kind") == "summary" and q.summary.vertices == 1
    rec.case("batch, retire, batch of one pool back to back", f"{IN}:28-31; {P}:123-130",
             "all accepted; the third is seq 1 of the new pool holding vertex 2 only",
             " / ".join(outcome(x) for x in (b1, rt, b3)) + " ; " + qoutcome(q), ok)
    r = c.retire("never-existed-pool", client_id="R", client_batch=5)
    rec.case("retire a pool that never existed", f"{IN}:32-33", "UNKNOWN_POOL", outcome(r),
             rejected_code(r) == Code.UNKNOWN_POOL)
    r = c.retire("bad name", client_id="R", client_batch=6)
    rec.case("retire naming an invalid pool name", f"{P}:64-71", "UNKNOWN_POOL", outcome(r),
             rejected_code(r) == Code.UNKNOWN_POOL)
    sub.close()


def _retire_request(pool, cid, number, at_seq=0):
    from yoke.v1 import ingest_pb2
    from harness import V1
    req = ingest_pb2.IngestRequest(version=V1)
    req.retire.pool, req.retire.client_id, req.retire.client_batch = pool, cid, number
    req.retire.at_seq = at_seq
    return req


def catch_up(rec, c, daemon):
    """Subscribe, ask for the matching, then a retirement and a new pool in between."""
    pool = "catch"
    prefix_pool = "catch-2"
    c.batch(pool, [set_(1, 2, 5), set_(3, 4, 6)], client_id="C", client_batch=1)
    c.batch(prefix_pool, [set_(1, 2, 5)], client_id="C", client_batch=1)
    sub = Subscriber(daemon, pool)
    time.sleep(0.3)
    m = c.matching(pool)
    s = m.matching.seq
    held = {(p.a, p.b) for p in m.matching.matching}
    c.batch(pool, [set_(5, 6, 9)], client_id="C", client_batch=2)
    c.batch(prefix_pool, [set_(3, 4, 5)], client_id="C", client_batch=2)
    c.retire(pool, client_id="C", client_batch=3)
    c.batch(pool, [set_(7, 8, 2)], client_id="C", client_batch=4)
    got = sub.diffs(1.0)
    topics = [t for t, _, _ in got]
    mine = [p.diff for t, p, _ in got if t == pool]
    rec.case("prefix subscription receives the other pool's diffs too", f"{P}:36-38",
             f"topics include {prefix_pool!r} (client must filter)", str(topics),
             prefix_pool in topics)
    seq, broken = s, []
    for d in mine:
        if d.seq <= seq and not d.retired:
            continue
        if d.prev_seq != seq:
            broken.append((d.seq, d.prev_seq, seq))
        apply_diff(held, d)
        seq = 0 if d.retired else d.seq
    final = c.matching(pool)
    want = {(p.a, p.b) for p in final.matching.matching}
    rec.case("catch-up: matching at s, then diffs with a retire and a new pool between",
             f"{P}:173-206; {PU} Diff.retired (subscriber forgets the seq)",
             f"chain unbroken, final pairs = daemon's {sorted(want)}",
             f"s={s}, diffs={[(d.seq, d.prev_seq, d.retired) for d in mine]}, breaks={broken}, "
             f"held={sorted(held)}", not broken and held == want)
    sub.close()


def max_pools(rec, c):
    """Daemon 2: max_pools 4 with pools 'd1' and 'd2' declared: 2 slots shared by the others."""
    r1 = c.batch("u1", [add(1)], client_id="mp", client_batch=1)
    r2 = c.batch("u2", [add(1)], client_id="mp", client_batch=2)
    r3 = c.batch("u3", [add(1)], client_id="mp", client_batch=3)
    rec.case("max_pools 4, 2 declared: third undeclared pool", "README.md:106-108; "
             f"{P}:72-73", "u1, u2 accepted; u3 UNKNOWN_POOL", " / ".join(
                 outcome(x) for x in (r1, r2, r3)), accepted(r1) and accepted(r2)
             and rejected_code(r3) == Code.UNKNOWN_POOL)
    d1 = c.batch("d1", [add(1)], client_id="mp", client_batch=4)
    d2 = c.batch("d2", [add(1)], client_id="mp", client_batch=5)
    rec.case("declared pools still get their reserved slots", "README.md:106-108",
             "d1 and d2 accepted", outcome(d1) + " / " + outcome(d2), accepted(d1) and accepted(d2))
    rt = c.retire("u1", client_id="mp", client_batch=6)
    r3b = c.batch("u3", [add(1)], client_id="mp", client_batch=7)
    rec.case("a retired pool frees its slot", f"{P}:110-111", "u3 accepted after u1 retired",
             outcome(rt) + " / " + outcome(r3b), accepted(rt) and accepted(r3b))
    rd = c.retire("d1", client_id="mp", client_batch=8)
    r4 = c.batch("u4", [add(1)], client_id="mp", client_batch=9)
    rd1 = c.batch("d1", [add(1)], client_id="mp", client_batch=10)
    rec.case("retiring a declared pool: its slot stays reserved", f"{P}:147-148",
             "u4 refused UNKNOWN_POOL, d1 made again at seq 1",
             " / ".join(outcome(x) for x in (rd, r4, rd1)), accepted(rd)
             and rejected_code(r4) == Code.UNKNOWN_POOL and accepted(rd1)
             and rd1.ack.accepted.seq == 1)


def horizon(rec, c):
    """Daemon 2: [ledger] batches_per_client 4, idle_seconds 1, max_clients_per_pool 2."""
    pool = "hz"
    for b in range(1, 7):
        c.batch(pool, [add(b)], client_id="H", client_batch=b)
    r = c.batch(pool, [add(100)], client_id="H", client_batch=1)
    rec.case("batches_per_client 4: resend of batch 1 after 6", f"{P}:221", "BATCH_FORGOTTEN "
             "last_batch=6", outcome(r), refused(r, Code.BATCH_FORGOTTEN, 6))
    r = c.batch(pool, [add(100)], client_id="H", client_batch=3)
    rec.case("batches_per_client 4: resend of batch 3 (remembered: 3..6)", f"{P}:219",
             "duplicate seq 3", outcome(r), is_dup(r, 3))
    r = c.batch(pool, [add(100)], client_id="H", client_batch=2)
    rec.case("batches_per_client 4: resend of batch 2 (just forgotten)", f"{P}:221",
             "BATCH_FORGOTTEN last_batch=6", outcome(r), refused(r, Code.BATCH_FORGOTTEN, 6))
    # max_clients_per_pool 2: a third client pushes out the least recently active
    pool2 = "hz-clients"
    a = c.batch(pool2, [add(1)], client_id="A", client_batch=10)
    c.batch(pool2, [add(2)], client_id="B", client_batch=10)
    c.batch(pool2, [add(3)], client_id="C", client_batch=10)
    time.sleep(0.05)
    c.batch(pool2, [add(4)], client_id="B", client_batch=11)  # closes another window
    r = c.batch(pool2, [add(5)], client_id="A", client_batch=10)
    rec.case("max_clients_per_pool 2: resend from the least recent of 3 clients",
             f"{P}:248-249, :253-255", "a new batch: applied again (new seq, not duplicate)",
             outcome(r) + f" (original seq {a.ack.accepted.seq if accepted(a) else None})",
             accepted(r) and not r.ack.accepted.duplicate)
    # idle_seconds 1
    pool3 = "hz-idle"
    i1 = c.batch(pool3, [add(1)], client_id="I", client_batch=5)
    c.batch(pool3, [add(2)], client_id="I", client_batch=6)
    time.sleep(2.2)
    c.batch(pool3, [add(3)], client_id="other", client_batch=1)  # the pool's next window
    r = c.batch(pool3, [add(4)], client_id="I", client_batch=6, after_batch=5)
    rec.case("idle_seconds 1: resend with after_batch after 2.2 s idle", f"{P}:253-255",
             "OUT_OF_ORDER without last_batch", outcome(r), refused(r, Code.OUT_OF_ORDER, None))
    r = c.batch(pool3, [add(5)], client_id="I", client_batch=5)
    rec.case("idle_seconds 1: resend without after_batch after 2.2 s idle", f"{P}:253-254",
             "applied again: accepted, not duplicate", outcome(r) + f" (original seq "
             f"{i1.ack.accepted.seq if accepted(i1) else None})", accepted(r)
             and not r.ack.accepted.duplicate)
    # a pool that receives nothing keeps its marks
    pool4 = "hz-quiet"
    q1 = c.batch(pool4, [add(1)], client_id="Q", client_batch=1)
    time.sleep(2.2)
    r = c.batch(pool4, [add(2)], client_id="Q", client_batch=1)
    rec.case("idle 2.2 s in a pool that received nothing since: resend", f"{P}:149-153",
             "duplicate of the original seq",
             outcome(r) + f" (original seq {q1.ack.accepted.seq if accepted(q1) else None})",
             accepted(r) and accepted(q1) and r.ack.accepted.duplicate
             and r.ack.accepted.seq == q1.ack.accepted.seq)
