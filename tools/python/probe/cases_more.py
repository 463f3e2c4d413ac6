"""Second-round probe cases: diffs of commits that change no pair, bounds that depend on a
pool's settings, declared pools before their first batch, counters, metrics."""

import time
import urllib.request

from harness import (Code, Subscriber, accepted, add, apply_diff, first_error, hold, outcome,
                     qoutcome, rejected_code, remove, set_)
from yoke.v1 import query_pb2

P = "docs/protocol.md"
PU = "proto/yoke/v1/publish.proto"
QU = "proto/yoke/v1/query.proto"
IN = "proto/yoke/v1/ingest.proto"


def diffs(rec, c, daemon):
    pool = "diffs"
    sub = Subscriber(daemon, pool)
    time.sleep(0.3)
    c.batch(pool, [set_(1, 2, 5)], client_id="D", client_batch=1)
    got = sub.diffs(0.5)
    pub = got[0][1] if got else None
    rec.case("Publication envelope carries version 1 and Diff.pool = topic", f"{PU}:17-18, :28",
             "version 1, pool 'diffs'", f"version={pub.version if pub else None} pool="
             f"{pub.diff.pool if pub else None}", pub is not None and pub.version == 1
             and pub.diff.pool == pool)
    c.batch(pool, [set_(1, 2, 9)], client_id="D", client_batch=2)
    got = sub.diffs(0.5)
    d = got[0][1].diff if got else None
    rec.case("weight change of a standing pair: in neither list, weight updated", f"{PU}:36-37",
             "removed=[] added=[] weight 9 seq 2 prev 1",
             f"removed={len(d.removed)} added={len(d.added)} weight={d.weight} seq={d.seq} "
             f"prev={d.prev_seq}" if d else "no diff",
             d is not None and not d.removed and not d.added and d.weight == 9 and d.seq == 2)
    c.batch(pool, [add(50)], client_id="D", client_batch=3)
    got = sub.diffs(0.5)
    d = got[0][1].diff if got else None
    rec.case("a commit that changes no pair still publishes a diff", f"{PU}:6-8 (prev_seq chain),"
             " yoked.example.toml 'one diff per committed batch'", "a diff seq 3 prev 2, empty "
             "lists", f"seq={d.seq} prev={d.prev_seq} removed={len(d.removed)} added="
             f"{len(d.added)}" if d else "no diff", d is not None and d.seq == 3
             and d.prev_seq == 2)
    r = c.batch(pool, [], client_id="D", client_batch=4)
    got = sub.diffs(0.5)
    d = got[0][1].diff if got else None
    rec.case("an empty batch in an existing pool: seq and diff", f"{P}:136-139",
             "seq 4 and a diff, to keep prev_seq chained", outcome(r) + "; diff " + (
                 f"seq={d.seq} prev={d.prev_seq} events={d.stats.events}" if d else "none"),
             accepted(r) and r.ack.accepted.seq == 4 and d is not None and d.seq == 4
             and d.prev_seq == 3 and not d.removed and not d.added)
    # a refused batch publishes nothing
    c.batch(pool, [set_(3, 3, 1)], client_id="D", client_batch=5)
    got = sub.diffs(0.4)
    rec.case("a refused batch publishes no diff", f"{PR_}Error: 'left every pool untouched'",
             "no diff", f"{len(got)} diffs", not got)
    # matching and summary agree with the last diff
    m = c.matching(pool)
    s = c.summary(pool)
    ok = m.matching.seq == s.summary.seq and m.matching.weight == s.summary.weight and \
        sum(p.weight for p in m.matching.matching) == m.matching.weight and \
        all(p.a < p.b for p in m.matching.matching)
    rec.case("Matching: seq and weight as Summary's; weight = sum of pairs; a < b", f"{QU}:92-100;"
             " pool.proto Pair", "consistent", qoutcome(m)[:200], ok)
    sub.close()


PR_ = "proto/yoke/v1/protocol.proto "


def bounds(rec, c):
    # tiny: max_vertices 4 -> P = 2 -> max-weight bound min(2^52, 2^61 / 2) = 2^52
    b = 2 ** 52
    st = c.stats("tiny")
    rec.case("resolved bound of a max-weight pool with max_vertices 4", f"{P}:82-86",
             f"{b} (min(2^52, 2^61/2))", f"{st.stats.config.limits.max_abs_weight}",
             st.stats.config.limits.max_abs_weight == b)
    # cardtiny: max-cardinality, max_vertices 4 -> (2^52 - 1) // 6
    bc = (2 ** 52 - 1) // 6
    r1 = c.batch("cardtiny", [set_(1, 2, bc)], client_id="B", client_batch=1)
    r2 = c.batch("cardtiny", [set_(1, 2, bc + 1)], client_id="B", client_batch=2)
    rec.case("max-cardinality pool with max_vertices 4: weight (2^52-1)/(2P+2) and one more",
             f"{P}:87", f"{bc} accepted, {bc + 1} WEIGHT_OUT_OF_RANGE", outcome(r1) + " / " +
             outcome(r2), accepted(r1) and rejected_code(r2) == Code.WEIGHT_OUT_OF_RANGE)
    # churn: churn_bonus 1000 takes room from the default bound 2^40
    st = c.stats("churn")
    r0 = c.batch("churn", [set_(1, 2, 2 ** 40 - 1000)], client_id="B", client_batch=1)
    st = c.stats("churn")
    r1 = c.batch("churn", [set_(1, 2, 2 ** 40 - 999)], client_id="B", client_batch=2)
    r2 = c.batch("churn", [set_(1, 2, 2 ** 40)], client_id="B", client_batch=3)
    lim = st.stats.config.limits.max_abs_weight if st.WhichOneof("kind") == "stats" else None
    rec.case("churn_bonus 1000 on a default max-weight pool: the bound", f"{P}:88-89 ('takes "
             "its room from the same bound'); pool.proto PoolConfig.churn_bonus "
             "(max_abs_weight + churn_bonus stays within the mode's)",
             "resolved max_abs_weight 2^40 - 1000; 2^40-999 and 2^40 refused (reading of the "
             "two lines)", f"max_abs_weight={lim}; 2^40-1000: {outcome(r0)[-40:]}; 2^40-999: "
             f"{outcome(r1)[-90:]}; 2^40: {outcome(r2)[-90:]}",
             lim == 2 ** 40 - 1000 and accepted(r0) and
             rejected_code(r1) == Code.WEIGHT_OUT_OF_RANGE and
             rejected_code(r2) == Code.WEIGHT_OUT_OF_RANGE)


def declared(rec, c):
    q = c.summary("perf")
    rec.case("query of a declared pool before its first batch", f"{P}:94-101",
             "Error UNKNOWN_POOL 'there is no pool perf'", qoutcome(q),
             q.WhichOneof("kind") == "error" and q.error.code == Code.UNKNOWN_POOL)
    r = c.retire("perf", client_id="X", client_batch=1)
    rec.case("retire of a declared pool before its first batch", f"{IN}:32", "UNKNOWN_POOL",
             outcome(r), rejected_code(r) == Code.UNKNOWN_POOL)
    r = c.batch("perf", [add(1), set_(2, 3, 4)], client_id="X", client_batch=2)
    s = c.summary("perf")
    ok = accepted(r) and r.ack.accepted.seq == 1 and s.summary.mode == 3 and \
        s.summary.no_perfect_matching
    rec.case("declared perfect pool: 3 vertices", f"{P}:97-98; pool.proto Mode", "seq 1, mode "
             "PERFECT, no_perfect_matching", outcome(r) + "; " + qoutcome(s), ok)
    r = c.batch("perf", [remove(1)], client_id="X", client_batch=3)
    s = c.summary("perf")
    rec.case("perfect pool made perfect again", "pool.proto Mode PERFECT",
             "no_perfect_matching false, pairs 1", qoutcome(s),
             accepted(r) and not s.summary.no_perfect_matching and s.summary.pairs == 1)


def counters(rec, c):
    pool = "counters"
    c.batch(pool, [add(1)], client_id="S", client_batch=1)
    c.batch(pool, [add(2)], client_id="S", client_batch=3)
    c.batch(pool, [add(2)], client_id="S", client_batch=3)          # duplicate
    c.batch(pool, [set_(4, 4, 1)], client_id="S", client_batch=4)   # SELF_LOOP
    c.batch(pool, [add(5)], client_id="S", client_batch=2)          # BATCH_SKIPPED
    c.batch(pool, [add(6)], client_id="S", client_batch=5, after_batch=4)  # OUT_OF_ORDER
    st = c.stats(pool)
    s = st.stats
    rec.case("Stats counters: 2 applied, 1 duplicate, 1 SELF_LOOP, 1 SKIPPED, 1 OUT_OF_ORDER",
             f"{QU}:159-164 (rejected = 'Batches refused with errors')",
             "accepted 2, duplicate 1, rejected 3", f"accepted {s.batches_accepted}, duplicate "
             f"{s.batches_duplicate}, rejected {s.batches_rejected}, events_applied "
             f"{s.events_applied}", s.batches_accepted == 2 and s.batches_duplicate == 1
             and s.batches_rejected == 3 and s.events_applied == 2)
    # at_seq counts the open window's batches
    c.send_request(_req(pool, [add(7)], "S", 6))
    r = c.retire(pool, client_id="S", client_batch=7, at_seq=3)
    a = c.wait_ack("S", 6)
    rec.case("retire at_seq = seq of a batch still in the open window", f"{IN}:48-49 ('those of"
             " the open window included')", "batch seq 3 accepted, retirement accepted seq 4",
             outcome(a) + " / " + outcome(r), accepted(a) and accepted(r)
             and r.ack.accepted.seq == 4)


def _req(pool, events, cid, number):
    from cases_state import _batch_request
    return _batch_request(pool, events, cid, number)


def idle_twice(rec, c):
    """Daemon with idle_seconds 1: a resend answered duplicate, then the same resend again."""
    pool = "twice"
    r0 = c.batch(pool, [add(1)], client_id="T", client_batch=1)
    time.sleep(2.2)
    r1 = c.batch(pool, [add(2)], client_id="T", client_batch=1)
    time.sleep(0.1)
    r2 = c.batch(pool, [add(3)], client_id="T", client_batch=1)
    rec.case("idle past idle_seconds, then the same resend twice", f"{P}:149-153",
             "both resends duplicates of seq 1 (a duplicate commits nothing, so the mark stays)",
             " / ".join(outcome(x) for x in (r0, r1, r2)),
             all(accepted(x) and x.ack.accepted.duplicate and x.ack.accepted.seq == 1
                 for x in (r1, r2)))


def metrics(rec, daemon):
    base = f"http://127.0.0.1:{daemon.ports[3]}"
    try:
        h = urllib.request.urlopen(base + "/healthz", timeout=3)
        hs = (h.status, h.read(200))
    except Exception as e:  # an HTTP error is an observation, not a crash of the probe
        hs = (None, repr(e))
    rec.case("GET /healthz", f"{P}:15", "200", str(hs)[:120], hs[0] == 200)
    try:
        text = urllib.request.urlopen(base + "/metrics", timeout=3).read().decode()
    except Exception as e:
        text = repr(e)
    names = ["yoke_batches_total", "yoke_batches_rejected_total",
             "yoke_ingest_messages_rejected_total", "yoke_snapshot_last_duration_seconds"]
    missing = [n for n in names if n not in text]
    rec.case("/metrics names the README's metrics", "README.md:158-162", "all present",
             f"missing {missing}", not missing)
    unknown_pool = 'code="UNKNOWN_POOL"' in text
    rec.case("/metrics: refusals by code include UNKNOWN_POOL (probed above)", "README.md:158-160",
             "a yoke_batches_rejected_total or ingest series with code UNKNOWN_POOL",
             f"present={unknown_pool}", None if not unknown_pool else True)


def limit_points(rec, c):
    """Declared pool 'lim': max_vertices 3, max_edges 1."""
    r = c.batch("lim", [add(1), add(2), add(3)], client_id="M", client_batch=1)
    rec.case("lim pool: fill to 3 vertices", "pool.proto PoolLimits", "accepted", outcome(r),
             accepted(r))
    r = c.batch("lim", [add(4), remove(4), add(5), remove(1), add(6)], client_id="M",
                client_batch=2)
    ok = rejected_code(r) == Code.POOL_LIMIT_EXCEEDED and first_error(r).event_index == 4
    rec.case("vertex count 4,3,4,3,4 over a limit of 3: the event it stayed above from",
             f"{PR_}:45-49", "POOL_LIMIT_EXCEEDED at event_index 4", outcome(r), ok)
    r = c.batch("lim", [set_(1, 2, 1), add(7), set_(2, 3, 1)], client_id="M", client_batch=3)
    ok = rejected_code(r) == Code.POOL_LIMIT_EXCEEDED and first_error(r).event_index == 1
    rec.case("both limits crossed (vertices from event 1, edges from event 2)",
             f"{PR_}:47-49 ('the earlier of the two')", "POOL_LIMIT_EXCEEDED at event_index 1",
             outcome(r), ok)
    r = c.batch("lim", [remove(1), add(9)], client_id="M", client_batch=4)
    rec.case("at the vertex limit: REMOVE then ADD of another vertex in one batch",
             f"{PR_}:49-50 (only a removed vertex's edges keep their places)", "accepted",
             outcome(r), accepted(r))
    c.batch("lim", [set_(2, 3, 1)], client_id="M", client_batch=5)
    # REMOVE_VERTEX's edge places, across two batches of one window
    c.send_request(_req("lim", [remove(3)], "M", 6))
    c.send_request(_req("lim", [set_(2, 9, 1)], "M", 7))
    a6, a7 = c.wait_ack("M", 6), c.wait_ack("M", 7)
    rec.case("REMOVE of a vertex with the pool's one edge, then SET in the next batch sent at "
             "once (same window, likely)", f"{PR_}:49-50 ('keep their places until the batching"
             " window is committed')", "(GAP: timing) second refused POOL_LIMIT_EXCEEDED if in "
             "the same window", outcome(a6) + " / " + outcome(a7), None)


def pipelined(rec, c):
    pool = "pipe"
    for b, after in ((1, 0), (2, 1), (3, 2)):
        c.send_request(_req_after(pool, [add(b)], "P", b, after))
    acks = [c.wait_ack("P", b) for b in (1, 2, 3)]
    rec.case("three batches chained by after_batch, sent back to back (one window)",
             f"{P}:233-235 (the ledger records a batch when it enters the window); events.proto"
             " after_batch", "all accepted, seqs 1 2 3", " / ".join(outcome(a) for a in acks),
             all(accepted(a) for a in acks) and [a.ack.accepted.seq for a in acks] == [1, 2, 3])
    c.send_request(_req_after(pool, [set_(9, 9, 1)], "P", 4, 3))
    c.send_request(_req_after(pool, [add(10)], "P", 5, 4))
    a4, a5 = c.wait_ack("P", 4), c.wait_ack("P", 5)
    rec.case("a chained batch whose predecessor is refused, sent back to back",
             "events.proto after_batch ('a batch lost or refused')", "4 SELF_LOOP, 5 OUT_OF_ORDER"
             " last_batch=3", outcome(a4) + " / " + outcome(a5),
             rejected_code(a4) == Code.SELF_LOOP and rejected_code(a5) == Code.OUT_OF_ORDER
             and first_error(a5).last_batch == 3)
    r = c.batch(pool, [add(11)], client_id="", client_batch=0, after_batch=3)
    rec.case("after_batch with no client id", f"{P}:143-144", "after_batch ignored: accepted",
             outcome(r), accepted(r))


def _req_after(pool, events, cid, number, after):
    from cases_state import _batch_request
    return _batch_request(pool, events, cid, number, after)


def removed_weights(rec, c, daemon):
    pool = "rmw"
    sub = Subscriber(daemon, pool)
    time.sleep(0.3)
    c.batch(pool, [set_(1, 2, 5)], client_id="W", client_batch=1)
    c.batch(pool, [set_(1, 2, 1), set_(1, 3, 10)], client_id="W", client_batch=2)
    got = [p.diff for _, p, _ in sub.diffs(0.6)]
    d = got[-1] if got else None
    rem = [(p.a, p.b, p.weight) for p in d.removed] if d else None
    addl = [(p.a, p.b, p.weight) for p in d.added] if d else None
    rec.case("re-weighted pair lost in the same commit: removed carries the weight before",
             "publish.proto Diff.removed, pool.proto Pair.weight", "removed [(1,2,5)], added "
             "[(1,3,10)]", f"removed {rem} added {addl}", rem == [(1, 2, 5)]
             and addl == [(1, 3, 10)])
    c.batch(pool, [set_(2, 4, 3), remove(1), add(1), set_(1, 4, 1)], client_id="W",
            client_batch=3)
    got = [p.diff for _, p, _ in sub.diffs(0.6)]
    d = got[-1] if got else None
    rem = [(p.a, p.b, p.weight) for p in d.removed] if d else None
    addl = [(p.a, p.b, p.weight) for p in d.added] if d else None
    rec.case("matched vertex leaves and rejoins in one batch", "publish.proto Diff",
             "removed [(1,3,10)], added [(2,4,3)]", f"removed {rem} added {addl}",
             rem == [(1, 3, 10)] and addl == [(2, 4, 3)])
    sub.close()


def odd_envelopes(rec, c):
    from harness import field_bytes, field_varint
    from yoke.v1 import events_pb2, ingest_pb2
    b = events_pb2.EventBatch(client_id="both", client_batch=1, pool="both-kinds")
    b.events.append(add(1))
    rt = ingest_pb2.RetirePool(client_id="both", client_batch=2, pool="both-kinds")
    c.send_raw(field_varint(1, 1) + field_bytes(2, b.SerializeToString()) +
               field_bytes(3, rt.SerializeToString()))
    r = c.recv_ack(3.0)
    rec.case("an envelope with both batch and retire set (raw bytes; Protobuf: the last wins)",
             f"{P}:145-146", "the retire (last) of a pool that does not exist: UNKNOWN_POOL, "
             "batch 2", outcome(r), rejected_code(r) == Code.UNKNOWN_POOL
             and r.ack.client_batch == 2)
    limit = 4 * 1024 * 1024
    q = field_varint(1, 1) + field_varint(2, 5) + field_bytes(10, b"")
    q += field_bytes(100, b"\0" * (limit + 1 - len(q) - 2 - 4))
    assert len(q) == limit + 1, len(q)
    reply = c.query_raw(q, 0, 5.0)
    rec.case("query message of max_message_bytes + 1", f"{P}:27-29 (said of 'both sockets')",
             "Error OVERSIZED_MESSAGE, request_id 0", qoutcome(reply),
             reply is not None and reply.WhichOneof("kind") == "error"
             and reply.error.code == Code.OVERSIZED_MESSAGE)
    r = c.query(query_pb2.QueryRequest(summary=query_pb2.SummaryRequest()), pool="lim")
    rec.case("query socket still serves after the oversized query", "-", "summary", qoutcome(r),
             r is not None and r.WhichOneof("kind") == "summary")


def retire_long_id(rec, c):
    c.batch("longid", [add(1)], client_id="L", client_batch=1)
    r = c.retire("longid", client_id="r" * 129, client_batch=1)
    q = c.summary("longid")
    rec.case("RetirePool with a 129-byte client id, of an existing pool",
             "ingest.proto RetirePool client_id ('As in EventBatch'); events.proto:47-49",
             "MALFORMED_MESSAGE, pool kept (if 'as in EventBatch' includes the limit)",
             outcome(r) + " ; then " + qoutcome(q)[:80],
             rejected_code(r) == Code.MALFORMED_MESSAGE)
    c.batch("longid", [add(1)], client_id="L", client_batch=2)
    r = c.retire("longid", client_id="r" * (1 << 20), client_batch=1, timeout=10)
    rec.case("RetirePool with a 1 MiB client id", f"{P}:76-78 ('A client id is at most 128 "
             "bytes')", "MALFORMED_MESSAGE", outcome(r) + f" (echoed {len(r.ack.client_id)} "
             "bytes)" if r else "no reply", rejected_code(r) == Code.MALFORMED_MESSAGE)


class _CatchUp:
    """A subscriber's state by the catch-up rule of protocol.md step 3, incarnations included."""

    def __init__(self, c, pool):
        self.c, self.pool, self.restarts, self.resets = c, pool, 0, 0
        self.fetch()

    def fetch(self):
        m = self.c.matching(self.pool).matching
        self.seq, self.inc = m.seq, m.incarnation
        self.held = {(p.a, p.b) for p in m.matching}

    def take(self, d):
        if d.incarnation < self.inc:
            return  # an earlier pool of the name
        if d.incarnation > self.inc:
            if d.prev_seq != 0:
                self.restarts += 1
                self.fetch()  # start again from step 2
                return
            self.held, self.seq, self.inc = set(), 0, d.incarnation
            self.resets += 1
        if d.seq <= self.seq:
            return
        if d.prev_seq != self.seq:
            self.restarts += 1
            self.fetch()
            return
        apply_diff(self.held, d)
        self.seq = d.seq
        if d.retired:
            self.held, self.seq = set(), 0


def missed_retirement(rec, c, daemon):
    """The catch-up rule of protocol.md step 3 when the diff the PUB socket drops is a
    retirement (the drop is simulated: the subscriber skips the diffs it received), with and
    without the new pool's first diffs dropped too."""
    for label, new_dropped in (("the retired diff", 0),
                               ("the retired diff and the new pool's seqs 1-3", 3)):
        pool = f"missed-{new_dropped}"
        for b in (1, 2, 3):
            c.batch(pool, [set_(10 * b, 10 * b + 1, b)], client_id="M", client_batch=b)
        sub = Subscriber(daemon, pool)
        time.sleep(0.3)
        state = _CatchUp(c, pool)
        s, old_inc = state.seq, state.inc
        c.retire(pool, client_id="M", client_batch=4)
        for b in range(5, 10):
            c.batch(pool, [set_(100 + b, 200 + b, 1)], client_id="M", client_batch=b)
        for _, p, _ in sub.diffs(0.8):
            d = p.diff
            if d.retired or (d.incarnation != old_inc and d.seq <= new_dropped):
                continue  # dropped by the PUB socket (simulated)
            state.take(d)
        want = {(p.a, p.b) for p in c.matching(pool).matching.matching}
        rec.case(f"catch-up whose PUB socket dropped {label} (simulated); the new pool's "
                 "seqs pass the old s", f"{P}:179-189 (step 3, incarnations); {PU} "
                 "Diff.incarnation", "the subscriber ends at the daemon's matching (reset or "
                 "started again)", f"s={s}; incarnation {old_inc}; resets={state.resets} "
                 f"restarts={state.restarts}; state held {sorted(state.held)} vs daemon "
                 f"{sorted(want)}", state.held == want and state.resets + state.restarts > 0)
        sub.close()


def explanations(rec, c):
    """Complementary slackness read off Explanation, on a path 1-2 (5), 2-3 (4), 3-4 (5)."""
    for pool, mode in (("explain-mw", "max-weight"), ("card", "max-cardinality")):
        c.batch(pool, [set_(101, 102, 5), set_(102, 103, 4), set_(103, 104, 5)],
                client_id="E", client_batch=1)
        ex = {}
        for v in (101, 102, 103, 104):
            r = c.query(query_pb2.QueryRequest(explain=query_pb2.ExplainRequest(vertex=v)),
                        pool=pool)
            ex[v] = r.explain if r.WhichOneof("kind") == "explain" else None
        if any(e is None for e in ex.values()):
            rec.case(f"explain on a {mode} path", "query.proto Explanation", "explanations",
                     "an error", False)
            continue
        off = ex[101].weight_offset
        pair_ok = ex[101].dual_x2 + ex[102].dual_x2 == 2 * (5 + off) and \
            ex[103].dual_x2 + ex[104].dual_x2 == 2 * (5 + off)
        alt = ex[102].alternatives
        slack_ok = len(alt) == 1 and alt[0].other == 103 and alt[0].weight == 4 and \
            alt[0].slack_x2 == ex[102].dual_x2 + ex[103].dual_x2 - 2 * (4 + off) and \
            alt[0].slack_x2 >= 0 and alt[0].other_mate == 104
        rec.case(f"explain on a {mode} path: matched pairs tight, alternative's slack",
                 "query.proto Explanation dual_x2 ('offset included'), Alternative.slack_x2 "
                 "(u(i) + u(j) - w - offset, doubled)", "dual_x2 sums = 2(w + offset); slack_x2 "
                 "= dual_x2(102) + dual_x2(103) - 2(4 + offset)",
                 f"offset {off}; duals {[ex[v].dual_x2 for v in (101, 102, 103, 104)]}; alt "
                 f"{[(a.other, a.weight, a.slack_x2, a.other_mate) for a in alt]}",
                 pair_ok and slack_ok)
    r = c.query(query_pb2.QueryRequest(explain=query_pb2.ExplainRequest(vertex=102,
                                                                        max_alternatives=1)),
                pool="explain-mw")
    rec.case("explain with max_alternatives 1", "query.proto ExplainRequest", "at most one",
             qoutcome(r)[:150], r.WhichOneof("kind") == "explain"
             and len(r.explain.alternatives) <= 1)


def retire_held(rec, c, daemon):
    pool = "retire-held"
    c.batch(pool, [set_(1, 2, 1), set_(1, 3, 50), set_(4, 5, 7), hold(1, 2)], client_id="H",
            client_batch=1)
    sub = Subscriber(daemon, pool)
    time.sleep(0.3)
    r = c.retire(pool, client_id="H", client_batch=2)
    got = [p.diff for _, p, _ in sub.diffs(0.6)]
    d = got[-1] if got else None
    rem = sorted((p.a, p.b, p.weight) for p in d.removed) if d else None
    rec.case("retired diff of a pool with a held pair", f"{PU}:49-52 ('removed lists every pair"
             " it held at prev_seq')", "removed [(1,2,1), (4,5,7)]", outcome(r) + f"; removed "
             f"{rem}", rem == [(1, 2, 1), (4, 5, 7)])
    sub.close()


def req_ingest(rec, daemon):
    import zmq
    from cases_state import _batch_request
    from yoke.v1 import ingest_pb2
    s = zmq.Context.instance().socket(zmq.REQ)
    s.setsockopt(zmq.LINGER, 0)
    s.connect(daemon.ingest)
    s.send(_batch_request("req-ingest", [add(1)], "REQ", 1).SerializeToString())
    got = None
    if s.poll(3000):
        got = ingest_pb2.IngestReply()
        got.ParseFromString(s.recv())
    s.close(0)
    rec.case("a batch from a REQ socket", f"{P}:12, :26", "accepted", outcome(got),
             accepted(got))


def whole_batch_errors(rec, c):
    checks = []
    r = c.batch("wbe", [add(1)], client_id="w" * 129, client_batch=1)
    checks.append(("client id too long", r))
    r = c.batch("bad name", [add(1)], client_id="W", client_batch=1)
    checks.append(("bad pool name", r))
    c.batch("wbe", [add(1)], client_id="W", client_batch=5)
    r = c.batch("wbe", [add(2)], client_id="W", client_batch=3)
    checks.append(("BATCH_SKIPPED", r))
    r = c.batch("wbe", [add(2)], client_id="W", client_batch=6, after_batch=4)
    checks.append(("OUT_OF_ORDER", r))
    bad = [(n, outcome(r)) for n, r in checks
           if r is None or not r.ack.rejected.errors or
           r.ack.rejected.errors[0].HasField("event_index")]
    rec.case("errors about the whole batch carry no event_index", f"{PR_}:97-98",
             "event_index absent", f"with event_index: {bad}" if bad else "all absent", not bad)
    r = c.batch("bad name", [add(1)], client_id="W", client_batch=2)
    rec.case("Ack.pool of a batch refused for its pool name", f"{P}:70-71; ingest.proto:69-70",
             "empty", repr(r.ack.pool), r is not None and r.ack.pool == "")


def live_catch_up(rec, c, daemon):
    """A late subscriber catching up while another client streams batches, several in flight
    (so windows hold several seqs)."""
    import random
    import threading

    from harness import Client
    pool = "live"
    rnd = random.Random(7)
    done = threading.Event()

    def produce():
        with Client(daemon) as p:
            for b in range(1, 601):
                u, v = rnd.randrange(60), rnd.randrange(60)
                if u == v:
                    v = (v + 1) % 60
                from cases_state import _batch_request
                p.send_request(_batch_request(pool, [set_(u, v, rnd.randrange(1, 100))], "LV", b))
                if b % 8 == 0:
                    for x in range(b - 7, b + 1):
                        p.wait_ack("LV", x)
        done.set()

    c.batch(pool, [set_(0, 1, 1)], client_id="LV0", client_batch=1)
    t = threading.Thread(target=produce)
    t.start()
    time.sleep(0.1)
    sub = Subscriber(daemon, pool)
    time.sleep(0.2)
    restarts, s_not_end = 0, 0
    m = c.matching(pool)
    seq = m.matching.seq
    held = {(p.a, p.b) for p in m.matching.matching}
    first_after = True
    while True:
        got = sub.diffs(0.3)
        if not got and done.is_set():
            break
        for _, pub, _ in got:
            d = pub.diff
            if d.seq <= seq:
                continue
            if first_after and d.prev_seq != seq and d.prev_seq < seq:
                s_not_end += 1  # the Matching's seq fell inside a diff
            first_after = False
            if d.prev_seq != seq:
                restarts += 1
                m = c.matching(pool)
                seq = m.matching.seq
                held = {(p.a, p.b) for p in m.matching.matching}
                first_after = True
                continue
            apply_diff(held, d)
            seq = d.seq
    t.join()
    final = c.matching(pool)
    want = {(p.a, p.b) for p in final.matching.matching}
    rec.case("late catch-up while 600 batches stream in (8 in flight)", f"{P}:173-206",
             "Matching's s is always a diff's end; the state applied equals the daemon's",
             f"final seq {final.matching.seq}, held seq {seq}, restarts {restarts}, s inside a "
             f"diff {s_not_end}, equal {held == want}",
             s_not_end == 0 and held == want and seq == final.matching.seq)
    sub.close()


def client_id_bytes(rec, c):
    """Client ids are compared as whole byte strings: NUL bytes and a common prefix."""
    r1 = c.batch("id-bytes", [add(1)], client_id="a\0b", client_batch=1)
    r2 = c.batch("id-bytes", [add(2)], client_id="a\0c", client_batch=1)
    r3 = c.batch("id-bytes", [add(3)], client_id="a", client_batch=1)
    r4 = c.batch("id-bytes", [add(4)], client_id="a\0b", client_batch=1)
    ok = all(accepted(r) for r in (r1, r2, r3, r4)) and \
        [r.ack.accepted.duplicate for r in (r1, r2, r3, r4)] == [False, False, False, True] and \
        r1.ack.client_id == "a\0b" and r4.ack.accepted.seq == r1.ack.accepted.seq
    rec.case("client ids 'a\\0b', 'a\\0c', 'a' are three clients; 'a\\0b' resent is a duplicate",
             "events.proto:47-50 (any string of at most 128 bytes)", "new, new, new, duplicate "
             "of the first; ids echoed whole", " / ".join(outcome(r) for r in (r1, r2, r3, r4)),
             ok)
