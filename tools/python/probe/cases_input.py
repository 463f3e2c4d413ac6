"""Probe cases about what one message may hold: envelopes, sizes, pool names, client ids,
events and weights. Each case names the line of the spec it reads."""

from harness import (V1, Code, K, accepted, add, field_bytes, field_varint, first_error,
                     hold, outcome, qoutcome, raw_ingest_batch, rejected_code, release, remove,
                     set_, unset)
from yoke.v1 import events_pb2, ingest_pb2, query_pb2

P = "docs/protocol.md"
EV = "proto/yoke/v1/events.proto"
PR = "proto/yoke/v1/protocol.proto"
IN = "proto/yoke/v1/ingest.proto"
QU = "proto/yoke/v1/query.proto"


def unreadable_ack(c, timeout=3.0):
    return c.wait_ack("", 0, timeout)


def is_unreadable_refusal(reply, code):
    return (reply is not None and reply.ack.client_id == "" and reply.ack.client_batch == 0
            and rejected_code(reply) == code)


def envelopes(rec, c):
    # version 0 and 2
    for version in (0, 2):
        req = ingest_pb2.IngestRequest(version=version)
        req.batch.client_id, req.batch.client_batch, req.batch.pool = "env", 7, "env"
        req.batch.events.append(add(1))
        c.send_request(req)
        r = unreadable_ack(c)
        rec.case(f"ingest envelope version={version}",
                 f"{P}:31-32 and :54-56 (another version: Ack with empty client_id, batch 0)",
                 "Ack{client_id='', client_batch=0} rejected UNSUPPORTED_VERSION",
                 outcome(r), is_unreadable_refusal(r, Code.UNSUPPORTED_VERSION))
    # empty oneof
    c.send_raw(field_varint(1, 1))
    r = unreadable_ack(c)
    rec.case("ingest envelope with empty oneof", f"{IN}:14-15, {PR}:24-26",
             "UNKNOWN_MESSAGE_KIND, Ack unmatched (empty id)", outcome(r),
             is_unreadable_refusal(r, Code.UNKNOWN_MESSAGE_KIND))
    # a kind from a later version (field 9 of the envelope)
    c.send_raw(field_varint(1, 1) + field_bytes(9, b"\x08\x01"))
    r = unreadable_ack(c)
    rec.case("ingest envelope with a later kind (unknown field 9)", f"{IN}:14-15",
             "UNKNOWN_MESSAGE_KIND", outcome(r),
             is_unreadable_refusal(r, Code.UNKNOWN_MESSAGE_KIND))
    # garbage bytes
    c.send_raw(b"\xff\xff\xff\xff\x0f not protobuf")
    r = unreadable_ack(c)
    rec.case("ingest garbage bytes", f"{P}:55-57; {PR}:21-22",
             "MALFORMED_MESSAGE, Ack with empty client_id and batch 0", outcome(r),
             is_unreadable_refusal(r, Code.MALFORMED_MESSAGE))
    # empty message (0 bytes): parses as an envelope with version 0
    c.send_raw(b"")
    r = unreadable_ack(c)
    rec.case("ingest zero-byte message", f"{PR}:7-9 (version 0 = forgot the field)",
             "UNSUPPORTED_VERSION (version 0), unmatched Ack", outcome(r),
             is_unreadable_refusal(r, Code.UNSUPPORTED_VERSION))
    # a batch with an unknown field inside: proto3 parsers keep or skip unknown fields
    b = events_pb2.EventBatch(client_id="unk", client_batch=1, pool="unk-field")
    b.events.append(add(1))
    c.send_raw(raw_ingest_batch(b.SerializeToString() + field_varint(99, 5)))
    r = c.wait_ack("unk", 1)
    rec.case("batch carrying an unknown field number 99", "spec silent (proto3 skips unknown "
             "fields; nothing says yoked refuses them)", "accepted (ordinary proto3 reading)",
             outcome(r), None if not accepted(r) else True)
    # multi-frame DEALER message: the last frame is the request (P:20-22)
    req = ingest_pb2.IngestRequest(version=V1)
    req.batch.client_id, req.batch.client_batch, req.batch.pool = "frames", 1, "frames"
    req.batch.events.append(add(1))
    c.ing.send_multipart([b"extra-frame", req.SerializeToString()])
    raw = c.ing.recv_multipart() if c.ing.poll(3000) else None
    ok = raw is not None and len(raw) == 2 and raw[0] == b"extra-frame"
    if ok:
        reply = ingest_pb2.IngestReply()
        reply.ParseFromString(raw[-1])
        ok = accepted(reply)
    rec.case("DEALER request with an extra frame before the request", f"{P}:21-25",
             "the extra frame is echoed in front of the reply, last frame parsed",
             f"{len(raw) if raw else 0} frames, first={raw[0] if raw else None!r}", ok)
    # query envelope errors
    for version in (0, 3):
        reply = c.query(query_pb2.QueryRequest(version=version, pool="x",
                                               summary=query_pb2.SummaryRequest()),
                        keep_version=True)
        ok = reply is not None and reply.WhichOneof("kind") == "error" and \
            reply.error.code == Code.UNSUPPORTED_VERSION
        rec.case(f"query envelope version={version}", f"{PR}:7-9", "Error UNSUPPORTED_VERSION",
                 qoutcome(reply), ok)
    reply = c.query(query_pb2.QueryRequest(pool="x"))
    rec.case("query with empty oneof", f"{QU}:20-21", "Error UNKNOWN_MESSAGE_KIND",
             qoutcome(reply), reply is not None and reply.WhichOneof("kind") == "error"
             and reply.error.code == Code.UNKNOWN_MESSAGE_KIND)
    reply = c.query_raw(field_varint(1, 1) + field_varint(2, 4242) + field_bytes(30, b""), 4242)
    rec.case("query with a later kind (unknown field 30)", f"{QU}:20-21",
             "Error UNKNOWN_MESSAGE_KIND, request_id 4242 copied", qoutcome(reply),
             reply is not None and reply.WhichOneof("kind") == "error"
             and reply.error.code == Code.UNKNOWN_MESSAGE_KIND and reply.request_id == 4242)
    reply = c.query_raw(b"\xff\xff\xff\xff\x0f garbage", 0)
    rec.case("query garbage bytes", f"{QU}:38 (request_id 0 when unreadable)",
             "Error MALFORMED_MESSAGE, request_id 0", qoutcome(reply),
             reply is not None and reply.WhichOneof("kind") == "error"
             and reply.error.code == Code.MALFORMED_MESSAGE and reply.request_id == 0)
    # health ignores the pool, even a bad name
    reply = c.query(query_pb2.QueryRequest(health=query_pb2.HealthRequest()), pool="bad name!")
    rec.case("health query naming an invalid pool", f"{QU}:18 (pool ignored by health)",
             "Health ok", qoutcome(reply),
             reply is not None and reply.WhichOneof("kind") == "health" and reply.health.ok)


def sizes(rec, c):
    # empty batch
    r = c.batch("empty-batch", [], client_id="eb", client_batch=1)
    rec.case("empty batch (no events) as a pool's first batch", f"{P}:136-139",
             "accepted with seq 1 (it creates the pool)", outcome(r),
             accepted(r) and r.ack.accepted.seq == 1)
    r2 = c.summary("empty-batch")
    rec.case("pool after an empty first batch", f"{P}:136-139", "summary at seq 1",
             qoutcome(r2), r2 is not None and r2.WhichOneof("kind") == "summary"
             and r2.summary.seq == 1)
    # exactly the limit, and one over
    big = [add(i) for i in range(100000)]
    r = c.batch("max-batch", big, client_id="mb", client_batch=1, timeout=30)
    rec.case("batch of exactly 100,000 events", f"{P}:74-75", "accepted", outcome(r),
             accepted(r))
    over = [add(i) for i in range(100001)]
    r = c.batch("max-batch-over", over, client_id="mb", client_batch=2, timeout=30)
    ok = rejected_code(r) == Code.TOO_MANY_EVENTS and r.ack.client_id == "mb"
    rec.case("batch of 100,001 events", f"{P}:74-75", "TOO_MANY_EVENTS, matched Ack",
             outcome(r), ok)
    reply = c.summary("max-batch-over")
    rec.case("refused first batch creates no pool (TOO_MANY_EVENTS)", f"{P}:98",
             "UNKNOWN_POOL", qoutcome(reply), reply is not None
             and reply.WhichOneof("kind") == "error" and reply.error.code == Code.UNKNOWN_POOL)
    # message size: exactly 4 MiB parses, 4 MiB + 1 is OVERSIZED_MESSAGE, unread
    limit = 4 * 1024 * 1024
    for size, expect in ((limit, "accepted"), (limit + 1, "OVERSIZED_MESSAGE")):
        b = events_pb2.EventBatch(client_id=f"sz{size}", client_batch=1, pool="size-probe")
        b.events.append(set_(1, 2, 3))
        body = field_varint(1, 1) + field_bytes(2, b.SerializeToString())
        pad_field = 100
        # an unknown field pads the envelope to the exact size
        need = size - len(body)
        for extra in range(1, 8):
            n = need - 2 - extra  # 2 = the key of field 100 (two bytes)
            data = body + field_bytes(pad_field, b"\0" * n)
            if len(data) == size:
                break
        assert len(data) == size, (len(data), size)
        c.send_raw(data)
        if expect == "accepted":
            r = c.wait_ack(f"sz{size}", 1, 10)
            rec.case("message of exactly max_message_bytes (4 MiB; padded by an unknown field)",
                     f"{P}:28-29 (larger than the limit is refused)", "parsed and accepted",
                     outcome(r), accepted(r) if r is not None else False)
        else:
            r = unreadable_ack(c, 10)
            rec.case("message of max_message_bytes + 1", f"{P}:28-29, :55-57",
                     "OVERSIZED_MESSAGE, unmatched Ack (not parsed)", outcome(r),
                     is_unreadable_refusal(r, Code.OVERSIZED_MESSAGE))


def pool_names(rec, c):
    good = {"128 letters": "a" * 128, "all allowed specials": "a.b_c-d:e9", "single '.'": ".",
            "'..' (path-like)": "..", "':' only": ":", "the name 'default' spelled out": None}
    for label, name in good.items():
        if name is None:
            continue
        r = c.batch(name, [add(1)], client_id="names", client_batch=0)
        rec.case(f"pool name {label}", f"{P}:64-65", "accepted", outcome(r), accepted(r))
    bad = {"129 letters": "a" * 129, "space": "a b", "slash": "a/b", "NUL byte": "a\0b",
           "UTF-8 e-acute": "caf\u00e9", "tab": "a\tb", "asterisk": "a*", "'>' (NATS wildcard)":
           "a>", "DEL 0x7f": "a\x7f"}
    for label, name in bad.items():
        r = c.batch(name, [add(1)], client_id="names-bad", client_batch=1)
        ok = rejected_code(r) == Code.UNKNOWN_POOL and bool(first_error(r).message)
        rec.case(f"pool name with {label}", f"{P}:64-71", "UNKNOWN_POOL with a message",
                 outcome(r), ok)
        reply = c.summary(name)
        ok = reply is not None and reply.WhichOneof("kind") == "error" and \
            reply.error.code == Code.UNKNOWN_POOL
        rec.case(f"query naming a pool with {label}", f"{P}:64-71", "Error UNKNOWN_POOL",
                 qoutcome(reply), ok)
        if ok and label in ("129 letters", "slash"):
            says = "not" in reply.error.message or "at most" in reply.error.message
            rec.case(f"query naming a pool with {label}: the message says what is wrong",
                     f"{P}:64-71 ('A batch or query names its pool ... refused with UNKNOWN_POOL"
                     " and a message saying what is wrong')", "a message naming the bad byte or "
                     "length, as a batch's refusal does", repr(reply.error.message[:80]), says)
    # invalid UTF-8 in the pool field (proto3 string): raw bytes
    b = field_bytes(1, b"utf8-bad") + field_varint(2, 1) + field_bytes(3, b"po\xffol") + \
        field_bytes(4, field_varint(1, 1) + field_varint(2, 1))
    c.send_raw(raw_ingest_batch(b))
    r = c.wait_ack("utf8-bad", 1, 2.0) or unreadable_ack(c, 2.0)
    rec.case("pool name with invalid UTF-8 byte 0xff (raw bytes)", f"{P}:64-71 vs {P}:55-57",
             "UNKNOWN_POOL (name rule) or MALFORMED_MESSAGE (not a valid proto3 string)",
             outcome(r), rejected_code(r) in (Code.UNKNOWN_POOL, Code.MALFORMED_MESSAGE))
    # "" and "default" are the same pool
    r1 = c.batch("", [set_(1, 2, 5)], client_id="dflt", client_batch=1)
    r2 = c.batch("default", [set_(3, 4, 5)], client_id="dflt", client_batch=2)
    ok = accepted(r1) and accepted(r2) and r1.ack.pool == "default" and \
        r2.ack.accepted.seq == r1.ack.accepted.seq + 1
    rec.case("empty pool name and 'default' are one pool; Ack.pool resolved",
             f"{P}:64; {IN}:69-70", "Ack.pool='default', seqs consecutive",
             outcome(r1) + " / " + outcome(r2), ok)
    reply = c.summary("")
    rec.case("query with empty pool: reply.pool resolved", f"{QU}:40", "pool='default'",
             qoutcome(reply), reply is not None and reply.pool == "default")


def client_ids(rec, c):
    for label, cid, ok_expected in (("128 ASCII bytes", "c" * 128, True),
                                     ("129 ASCII bytes", "c" * 129, False),
                                     ("64 x e-acute = 128 bytes", "\u00e9" * 64, True),
                                     ("43 x euro sign = 129 bytes, 43 chars", "\u20ac" * 43,
                                      False)):
        r = c.batch("client-ids", [add(len(cid) + ord(cid[0]))], client_id=cid, client_batch=1)
        if ok_expected:
            ok = accepted(r)
            exp = "accepted"
        else:
            ok = rejected_code(r) == Code.MALFORMED_MESSAGE and r.ack.client_id == cid
            exp = "MALFORMED_MESSAGE, Ack echoing the id"
        rec.case(f"client id {label}", f"{P}:76-78; {EV}:47-49", exp, outcome(r), ok)


def events(rec, c):
    pool = "events"
    n = [0]

    def send(evs, pool=pool):
        n[0] += 1
        return c.batch(pool, evs, client_id="ev", client_batch=n[0])

    def expect(label, evs, code, index, spec, pool=pool):
        r = send(evs, pool)
        if code is None:
            ok = accepted(r)
            exp = "accepted"
        else:
            ok = rejected_code(r) == code and (index is None or (
                first_error(r).HasField("event_index") and first_error(r).event_index == index))
            exp = f"{code_name_(code)}" + (f" at event_index {index}" if index is not None else "")
        rec.case(label, spec, exp, outcome(r), ok)
        return r

    send([set_(1, 2, 10), set_(3, 4, 10)])
    expect("unknown event kind 99", [K(kind=99, u=5)], Code.MALFORMED_MESSAGE, 0, f"{EV}:12")
    expect("unknown event kind 7 after a good event", [add(50), K(kind=7, u=5)],
           Code.MALFORMED_MESSAGE, 1, f"{EV}:12")
    expect("negative event kind -1", [K(kind=-1, u=5)], Code.MALFORMED_MESSAGE, 0, f"{EV}:12")
    expect("event with no kind (KIND_UNSPECIFIED)", [K(u=5)], Code.MALFORMED_MESSAGE, 0,
           f"{EV}:12")
    expect("ADD_VERTEX with v != 0", [K(kind=K.ADD_VERTEX, u=60, v=1)], Code.MALFORMED_MESSAGE,
           0, f"{EV}:36-38")
    expect("ADD_VERTEX with w != 0", [K(kind=K.ADD_VERTEX, u=60, w=1)], Code.MALFORMED_MESSAGE,
           0, f"{EV}:40")
    expect("UNSET_EDGE with w != 0", [K(kind=K.UNSET_EDGE, u=1, v=2, w=3)],
           Code.MALFORMED_MESSAGE, 0, f"{EV}:40")
    expect("HOLD_PAIR with w != 0", [K(kind=K.HOLD_PAIR, u=1, v=2, w=3)],
           Code.MALFORMED_MESSAGE, 0, f"{EV}:40")
    expect("REMOVE_VERTEX with v != 0", [K(kind=K.REMOVE_VERTEX, u=1, v=2)],
           Code.MALFORMED_MESSAGE, 0, f"{EV}:36-38")
    expect("SET_EDGE with v and w absent (edge {70,0} weight 0: both are legal values)",
           [K(kind=K.SET_EDGE, u=70)], None, None, f"{EV}:34 (any 64-bit key), proto3 defaults")
    expect("vertex key 2^64-1", [set_(2**64 - 1, 2**64 - 2, 9)], None, None, f"{EV}:34")
    expect("SET_EDGE self loop", [set_(8, 8, 1)], Code.SELF_LOOP, 0, f"{EV}:17")
    expect("UNSET_EDGE self loop", [unset(1, 1)], Code.SELF_LOOP, 0, f"{EV}:19")
    expect("HOLD_PAIR self loop", [hold(1, 1)], Code.SELF_LOOP, 0, f"{EV}:26-27")
    expect("RELEASE_PAIR self loop", [release(1, 1)], Code.SELF_LOOP, 0, f"{EV}:29")
    expect("duplicate ADD_VERTEX in one batch", [add(80), add(80)], Code.VERTEX_EXISTS, 1,
           f"{EV}:14")
    expect("ADD_VERTEX of an alive vertex", [add(1)], Code.VERTEX_EXISTS, 0, f"{EV}:14")
    r = expect("duplicate SET_EDGE in one batch (second changes the weight)",
               [set_(81, 82, 5), set_(81, 82, 7)], None, None, f"{EV}:16 (insert or change)")
    m = c.mate(pool, 81)
    rec.case("after duplicate SET_EDGE: the later weight holds", f"{EV}:45 (events apply in "
             "order)", "mate 82 pair_weight 7", qoutcome(m),
             m is not None and m.WhichOneof("kind") == "mate" and m.mate.mate == 82
             and m.mate.pair_weight == 7)
    expect("set then unset of the same edge in one batch", [set_(83, 84, 5), unset(83, 84)],
           None, None, f"{EV}:16-21")
    m = c.mate(pool, 83)
    rec.case("after set+unset: both ends alive, unpaired", f"{EV}:19 (u and v stay)",
             "Mate without mate", qoutcome(m), m is not None and m.WhichOneof("kind") == "mate"
             and not m.mate.HasField("mate"))
    expect("unset then set of an existing edge in one batch", [unset(1, 2), set_(1, 2, 11)],
           None, None, f"{EV}:16-21")
    expect("unset of the same edge twice in one batch", [unset(3, 4), unset(3, 4)],
           Code.UNKNOWN_EDGE, 1, f"{EV}:19-20")
    expect("vertex leave then rejoin in one batch (REMOVE then ADD)", [remove(1), add(1)],
           None, None, f"{EV}:14,22, :45")
    m = c.mate(pool, 1)
    rec.case("after remove+add: vertex alive with no edges (unpaired)", f"{EV}:14,22",
             "Mate without mate", qoutcome(m), m is not None and m.WhichOneof("kind") == "mate"
             and not m.mate.HasField("mate"))
    expect("REMOVE then SET_EDGE naming it (rejoins through the edge)",
           [remove(2), set_(2, 90, 4)], None, None, f"{EV}:16 (u and v arrive if new)")
    expect("REMOVE of a vertex twice in one batch", [remove(90), remove(90)],
           Code.UNKNOWN_VERTEX, 1, f"{EV}:22")
    expect("UNSET_EDGE naming a dead vertex", [unset(424242, 1)], Code.UNKNOWN_EDGE, 0,
           f"{EV}:19-20; {PR}:40-41")
    expect("HOLD_PAIR of a missing edge between alive vertices", [hold(1, 81)],
           Code.UNKNOWN_EDGE, 0, f"{EV}:24-27")
    expect("HOLD_PAIR naming a dead vertex", [hold(1, 555555)], Code.UNKNOWN_VERTEX, 0,
           f"{EV}:26-27")
    expect("hold then hold again of the same vertex", [set_(91, 92, 3), set_(91, 93, 3),
                                                      hold(91, 92), hold(91, 93)],
           Code.ALREADY_HELD, 3, f"{EV}:26-27")
    expect("release of a pair not held", [set_(94, 95, 3), release(94, 95)], Code.NOT_HELD, 1,
           f"{EV}:29-30")
    expect("hold, release and hold again in one batch", [set_(96, 97, 3), hold(96, 97),
                                                        release(96, 97), hold(96, 97)],
           None, None, f"{EV}:24-30")
    expect("hold then UNSET of the held edge, then RELEASE (pair no longer held)",
           [unset(96, 97), release(96, 97)], Code.NOT_HELD, 1, f"{EV}:24-25 (unset ends hold)")
    # the whole batch is refused: a bad last event leaves the good ones unapplied
    before = c.summary(pool)
    r = send([set_(200, 201, 5), set_(202, 202, 1)])
    after = c.summary(pool)
    ok = rejected_code(r) == Code.SELF_LOOP and before.summary == after.summary
    rec.case("batch refused whole: first event not applied", "docs/contracts.md:26-28",
             "summary unchanged", f"{outcome(r)}; seq {before.summary.seq}->{after.summary.seq}"
             f", vertices {before.summary.vertices}->{after.summary.vertices}", ok)


def code_name_(code):
    from harness import code_name
    return code_name(code)


def weights(rec, c):
    n = [0]

    def send(pool, w, u=1, v=2):
        n[0] += 1
        return c.batch(pool, [set_(u, v, w)], client_id="w", client_batch=n[0])

    b40 = 2 ** 40
    for label, w, ok_expected in (("+2^40 (the default bound)", b40, True),
                                   ("-2^40", -b40, True), ("0", 0, True),
                                   ("2^40 + 1", b40 + 1, False), ("-(2^40 + 1)", -b40 - 1,
                                                                  False),
                                   ("INT64_MAX", 2 ** 63 - 1, False),
                                   ("INT64_MIN", -2 ** 63, False)):
        r = send("weights", w)
        if ok_expected:
            rec.case(f"max-weight default pool, weight {label}", f"{P}:85-86", "accepted",
                     outcome(r), accepted(r))
        else:
            ok = rejected_code(r) == Code.WEIGHT_OUT_OF_RANGE and \
                str(b40) in first_error(r).message
            rec.case(f"max-weight default pool, weight {label}", f"{P}:85-90; {PR}:35",
                     f"WEIGHT_OUT_OF_RANGE naming the bound {b40}", outcome(r), ok)
    st = c.stats("weights")
    ok = st is not None and st.WhichOneof("kind") == "stats" and \
        st.stats.config.limits.max_abs_weight == b40
    rec.case("Stats.config.limits.max_abs_weight resolved (default max-weight pool)",
             f"{P}:89-90", f"{b40}", qoutcome(st)[:200], ok)
    # a zero and a negative weight are never taken in max-weight
    c.batch("weights-zero", [set_(1, 2, 0), set_(3, 4, -5)], client_id="w0", client_batch=1)
    s = c.summary("weights-zero")
    rec.case("max-weight pool: edges of weight 0 and -5 are never taken",
             "proto/yoke/v1/pool.proto:11",
             "pairs 0", qoutcome(s), s is not None and s.WhichOneof("kind") == "summary"
             and s.summary.pairs == 0)
    # max-cardinality (declared pool 'card')
    bc = 1073741312
    for label, w, ok_expected in (("the bound 1,073,741,312", bc, True),
                                   ("bound + 1", bc + 1, False), ("-(bound + 1)", -bc - 1, False)):
        r = send("card", w, 10 + n[0], 20 + n[0])
        if ok_expected:
            rec.case(f"max-cardinality pool, weight {label}", f"{P}:87", "accepted", outcome(r),
                     accepted(r))
        else:
            ok = rejected_code(r) == Code.WEIGHT_OUT_OF_RANGE and str(bc) in first_error(r).message
            rec.case(f"max-cardinality pool, weight {label}", f"{P}:87-90",
                     f"WEIGHT_OUT_OF_RANGE naming {bc}", outcome(r), ok)
    st = c.stats("card")
    ok = st is not None and st.WhichOneof("kind") == "stats" and \
        st.stats.config.limits.max_abs_weight == bc
    rec.case("Stats max_abs_weight of a max-cardinality pool", f"{P}:87,83-84", str(bc),
             qoutcome(st)[:200], ok)


def limits(rec, c):
    # declared pool 'tiny': max_vertices 4, max_edges 2
    r = c.batch("tiny", [set_(1, 2, 5), set_(3, 4, 5)], client_id="t", client_batch=1)
    rec.case("tiny pool: fill to the limits (4 vertices, 2 edges)", f"{P}:79-80", "accepted",
             outcome(r), accepted(r))
    r = c.batch("tiny", [set_(1, 3, 5), unset(1, 2)], client_id="t", client_batch=2)
    rec.case("at edge limit: set a new edge then unset another in one batch", f"{PR}:45-47",
             "accepted (limits hold at the end of the batch)", outcome(r), accepted(r))
    r = c.batch("tiny", [add(5), remove(5)], client_id="t", client_batch=3)
    rec.case("at vertex limit: add then remove a fifth vertex in one batch", f"{PR}:45-47",
             "accepted", outcome(r), accepted(r))
    r = c.batch("tiny", [add(5), add(6), remove(6)], client_id="t", client_batch=4)
    ok = rejected_code(r) == Code.POOL_LIMIT_EXCEEDED and first_error(r).event_index == 0
    rec.case("vertex count above the limit from event 0 to the end", f"{PR}:45-49",
             "POOL_LIMIT_EXCEEDED at event_index 0 (where the count stayed above)", outcome(r),
             ok)
    r = c.batch("tiny", [unset(3, 4), set_(1, 2, 5)], client_id="t", client_batch=5)
    rec.case("at edge limit: UNSET then SET in one batch", f"{PR}:50 (UNSET_EDGE frees its "
             "place at once)", "accepted", outcome(r), accepted(r))
    r = c.batch("tiny", [remove(2), set_(3, 4, 1)], client_id="t", client_batch=6)
    ok = rejected_code(r) == Code.POOL_LIMIT_EXCEEDED and first_error(r).event_index == 1
    rec.case("at edge limit: REMOVE_VERTEX (frees 1 edge) then SET in one batch",
             f"{PR}:49-50 (edges of a removed vertex keep their places until the window is "
             "committed)", "POOL_LIMIT_EXCEEDED at event_index 1", outcome(r), ok)
