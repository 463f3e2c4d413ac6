"""Probe cases about the Prometheus endpoint: the page is the text format, every metric the
README names is there, counters only grow, and the counts move by what this client sent."""

import time

from harness import Client, add, accepted, outcome, raw_ingest_batch, set_
from outside import Page, http_get, spec
from yoke.v1 import query_pb2

R = "README.md"
NAMED = ["yoke_batches_total", "yoke_batches_rejected_total",
         "yoke_ingest_messages_rejected_total", "yoke_snapshot_last_duration_seconds"]


def scrape(d):
    status, text = http_get(f"http://127.0.0.1:{d.ports[3]}/metrics")
    return status, text, Page(text if status == 200 else "")


def deltas(before, after, name, **labels):
    a, b = after.get(name, **labels), before.get(name, **labels)
    return (a or 0) - (b or 0)


def all_cases(rec, yoke, d):
    base = f"http://127.0.0.1:{d.ports[3]}"
    status, text, p0 = scrape(d)
    rec.case("/metrics: every line is the Prometheus text format, no series twice",
             spec(R, "`http://127.0.0.1:7413/metrics` (Prometheus text)"),
             "200; no unreadable line; no duplicate series",
             f"{status}; unreadable {p0.bad[:2]}; twice {p0.dupes[:2]}",
             status == 200 and not p0.bad and not p0.dupes)
    untyped = sorted({n for (n, _) in p0.samples if p0.family_of(n) is None})
    rec.case("/metrics: every sample's family has a # TYPE line", "Prometheus text format "
             "(README: 'Prometheus text')", "none without", f"without: {untyped[:5]}",
             not untyped)
    counters = [n for n, t in p0.types.items() if t == "counter"]
    odd = [n for n in counters if not n.endswith("_total")]
    rec.case("/metrics: counter families are named ..._total", "Prometheus naming (the README's "
             "counters are yoke_..._total)", "all", f"not so: {odd}", True if not odd else None)

    with Client(d) as c:
        _, _, p1 = scrape(d)
        pool = "mx"
        got = [c.batch(pool, [set_(1, 2, 5)], client_id="M", client_batch=1),
               c.batch(pool, [set_(2, 3, 9)], client_id="M", client_batch=2),
               c.batch(pool, [add(7)], client_id="M", client_batch=3),
               c.batch(pool, [add(7)], client_id="M", client_batch=3),     # a duplicate
               c.batch(pool, [set_(4, 4, 1)], client_id="M", client_batch=4),  # SELF_LOOP
               c.batch(pool, [remove_(99)], client_id="M", client_batch=5)]    # UNKNOWN_VERTEX
        c.send_raw(b"\xff\xfe not protobuf")
        c.recv_ack(3)
        c.send_raw(raw_ingest_batch(b"", version=7))
        c.recv_ack(3)
        summary = c.summary(pool).summary
        for _ in range(3):
            c.summary(pool)
        time.sleep(0.2)
        _, _, p2 = scrape(d)

    by_outcome = {dict(ls).get("outcome"): v for ls, v in p2.series("yoke_batches_total").items()
                  if dict(ls).get("pool") == pool}
    acc = sum(v for k, v in by_outcome.items() if k and "accept" in k and "dup" not in k)
    rej = sum(v for k, v in by_outcome.items() if k and "reject" in k)
    dup = sum(v for k, v in by_outcome.items() if k and "dup" in k)
    rec.case("yoke_batches_total{pool=mx}: 3 applied, 1 duplicate, 2 refused",
             spec(R, "counts batches by outcome (`yoke_batches_total{pool,outcome}`, refusals in"),
             "accepted 3, duplicate 1 (outcome names as the page has them); the refusals there "
             "as 2 or only in yoke_batches_rejected_total", f"{by_outcome}; "
             f"{[outcome(r)[-40:] for r in got]}", (acc, dup) == (3, 1) and rej in (0, 2))
    sl = deltas(p1, p2, "yoke_batches_rejected_total", code="SELF_LOOP")
    uv = deltas(p1, p2, "yoke_batches_rejected_total", code="UNKNOWN_VERTEX")
    rec.case("yoke_batches_rejected_total{code}: +1 SELF_LOOP, +1 UNKNOWN_VERTEX",
             spec(R, "refusals in `yoke_batches_rejected_total{code}`"), "+1 and +1",
             f"+{sl}, +{uv}", (sl, uv) == (1, 1))
    mal = deltas(p1, p2, "yoke_ingest_messages_rejected_total", code="MALFORMED_MESSAGE")
    ver = deltas(p1, p2, "yoke_ingest_messages_rejected_total", code="UNSUPPORTED_VERSION")
    moved = deltas(p1, p2, "yoke_batches_total") + deltas(p1, p2, "yoke_batches_rejected_total") \
        - 6
    rec.case("yoke_ingest_messages_rejected_total{code}: garbage and a version 7 envelope",
             spec(R, "apart from them the ingest messages refused unread"),
             "+1 MALFORMED_MESSAGE, +1 UNSUPPORTED_VERSION; the batch counters moved by the 6 "
             "batches only", f"+{mal}, +{ver}; the batch counters moved by 6 + {moved}",
             (mal, ver, moved) == (1, 1, 0))

    q = deltas(p1, p2, "yoke_queries_total", kind="summary")
    ev = deltas(p1, p2, "yoke_events_applied_total", pool=pool)
    rec.case("queries and events counted: 4 summaries asked, 3 events applied in mx",
             spec(R, "acknowledged and refused batches, events and queries per second"),
             "a queries family by kind +4 summary; events applied +3",
             f"yoke_queries_total{{kind=summary}} +{q}; yoke_events_applied_total{{pool=mx}} +{ev}",
             (q, ev) == (4, 3))
    shrank = []
    for (name, ls), v in p1.samples.items():
        fam = p1.family_of(name)
        if fam and p1.types.get(fam) in ("counter", "histogram", "summary") and \
                not name.endswith("_bucket") or name.endswith("_total"):
            v2 = p2.samples.get((name, ls))
            if v2 is None or v2 < v:
                shrank.append((name, dict(ls), v, v2))
    rec.case("/metrics: no counter shrinks or vanishes between two scrapes",
             "Prometheus: a counter only grows", "none", f"{shrank[:3]}", not shrank)

    gauges = {}
    for (name, ls), v in p2.samples.items():
        if dict(ls).get("pool") == pool and p2.types.get(p2.family_of(name) or "") == "gauge":
            gauges[name] = v
    want = {"seq": summary.seq, "vertices": summary.vertices, "edges": summary.edges,
            "pairs": summary.pairs, "weight": summary.weight}
    found, wrong = {}, {}
    for key, value in want.items():
        names = [n for n in gauges if key in n.split("_")]
        if names:
            found[key] = {n: gauges[n] for n in names}
            if not any(gauges[n] == value for n in names):
                wrong[key] = (value, found[key])
    rec.case("per-pool gauges equal the pool's Summary (seq, vertices, edges, pairs, weight)",
             spec(R, "and per-pool gauges") + "; packaging dashboard: 'each pool's size, pairs, "
             "weight and seq'", f"{want}", f"gauges {found}; differing {wrong}",
             not wrong and len(found) == 5)

    with Client(d) as c:
        c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest()), pool=pool,
                timeout=20)
    _, _, p3 = scrape(d)
    dur = p3.get("yoke_snapshot_last_duration_seconds")
    rec.case("yoke_snapshot_last_duration_seconds after a requested snapshot",
             spec(R, "snapshots (`yoke_snapshot_last_duration_seconds`)"), "present, >= 0",
             f"{dur}", dur is not None and dur >= 0)
    missing = [n for n in NAMED if not any(k[0] == n for k in p3.samples)]
    rec.case("/metrics: every metric the README names has a sample", spec(R, "`/metrics` counts "
             "batches by outcome"), "all four", f"missing {missing}", not missing)

    with Client(d) as c:
        r = c.retire(pool, client_id="M", client_batch=9)
    _, _, p4 = scrape(d)
    left = sorted({n for (n, ls) in p4.samples if dict(ls).get("pool") == pool and
                   p4.types.get(p4.family_of(n) or "") == "gauge"})
    gone = not any(dict(ls).get("pool") == pool for (_, ls) in p4.samples)
    rec.case("a retired pool's series", spec(R, "a retired pool's series, its counters too, leave"
             " the page"), "no series with pool=mx", f"{outcome(r)}; gauges still there: {left}, "
             f"all gone {gone}", accepted(r) and gone)

    st, body = http_get(base + "/healthz")
    rec.case("GET /healthz body", spec("docs/protocol.md", "`GET /metrics` (Prometheus text), "
             "`GET /healthz`"), "200 and a short body", f"{st} {body[:80]!r}", st == 200)
    st, body = http_get(base + "/nowhere")
    rec.case("GET of a path the endpoint does not serve", spec(R, "Other paths are answered 404"),
             "404", f"{st} {body[:80]!r}", st == 404)
    st, body = http_get(base + "/metrics", method="POST")
    rec.case("POST /metrics", spec(R, "other methods 405"), "405", f"{st} {body[:60]!r}",
             st == 405)


def remove_(u):
    from harness import remove
    return remove(u)
