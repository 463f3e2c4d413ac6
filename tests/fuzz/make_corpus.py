#!/usr/bin/python3
"""Writes the seed corpus of ingest_fuzz (tests/fuzz/corpus/ingest/): short scripts in its
framing (ingest_fuzz.cpp: a tag byte, a length byte, the message), one per corner of the ingest
path, so the fuzzer starts from valid batches of every event kind, every pool mode, the retry
rules, the pool cap, each refusal and each query. Run with Debian's python3 and the generated
modules (tools/fuzz.sh builds only the targets: build yoke_proto_python first):

    cmake --build build-fuzz --target yoke_proto_python
    PYTHONPATH=build-fuzz/proto/python /usr/bin/python3 tests/fuzz/make_corpus.py \
        tests/fuzz/corpus/ingest
"""
import pathlib
import sys

from yoke.v1 import events_pb2, ingest_pb2, protocol_pb2, query_pb2

E = events_pb2.Event
V1 = protocol_pb2.PROTOCOL_VERSION_1
INGEST, QUERY, COMMIT = 0, 2, 3


def frame(tag, message=b""):
    if tag == COMMIT:
        return bytes([COMMIT])
    assert len(message) <= 200, "above the target's max_message_bytes"
    return bytes([tag, len(message)]) + message


def batch(events, pool="", client="", number=0, after=0, version=V1):
    request = ingest_pb2.IngestRequest(version=version)
    request.batch.pool = pool
    request.batch.client_id = client
    request.batch.client_batch = number
    request.batch.after_batch = after
    for event in events:
        request.batch.events.add(**event)
    return frame(INGEST, request.SerializeToString())


def retire(pool="", at_seq=0, client="", number=0):
    request = ingest_pb2.IngestRequest(version=V1)
    request.retire.pool = pool
    request.retire.at_seq = at_seq
    request.retire.client_id = client
    request.retire.client_batch = number
    return frame(INGEST, request.SerializeToString())


def add(u):
    return {"kind": E.ADD_VERTEX, "u": u}


def set_edge(u, v, w):
    return {"kind": E.SET_EDGE, "u": u, "v": v, "w": w}


def unset(u, v):
    return {"kind": E.UNSET_EDGE, "u": u, "v": v}


def remove(u):
    return {"kind": E.REMOVE_VERTEX, "u": u}


def hold(u, v):
    return {"kind": E.HOLD_PAIR, "u": u, "v": v}


def release(u, v):
    return {"kind": E.RELEASE_PAIR, "u": u, "v": v}


def query(pool="", **kind):
    request = query_pb2.QueryRequest(version=V1, request_id=9, pool=pool, **kind)
    return frame(QUERY, request.SerializeToString())


def all_queries(pool="", vertex=1):
    return b"".join([
        query(pool, summary=query_pb2.SummaryRequest()),
        query(pool, mate=query_pb2.MateRequest(vertex=vertex)),
        query(pool, matching=query_pb2.MatchingRequest()),
        query(pool, explain=query_pb2.ExplainRequest(vertex=vertex, max_alternatives=3)),
        query(pool, stats=query_pb2.StatsRequest()),
        query(pool, health=query_pb2.HealthRequest()),
        query(pool, snapshot=query_pb2.SnapshotRequest(all_pools=False)),
    ])


# Two odd cycles joined by an edge: blossoms form, and the later events break them.
CYCLES = [set_edge(1, 2, 6), set_edge(2, 3, 6), set_edge(3, 1, 6), set_edge(3, 4, 5),
          set_edge(4, 5, 6), set_edge(5, 6, 6), set_edge(6, 4, 6)]


def seeds():
    yield "event_kinds", b"".join([
        batch([add(1), set_edge(1, 2, 5), set_edge(2, 3, 7), set_edge(3, 4, 5)]),
        frame(COMMIT),
        batch([unset(2, 3), remove(4), set_edge(1, 3, 9), add(4)]),
        frame(COMMIT),
        all_queries(),
    ])
    for pool in ("c", "p", ""):  # max-cardinality, perfect, max-weight
        yield f"cycles_{pool or 'default'}", b"".join([
            batch(CYCLES, pool=pool),
            frame(COMMIT),
            batch([set_edge(3, 4, 40), unset(1, 2), set_edge(2, 5, -3)], pool=pool),
            batch([remove(6), add(7), set_edge(7, 1, 2)], pool=pool),
            frame(COMMIT),
            all_queries(pool, vertex=3),
        ])
    for pool in ("c", ""):  # holds against the optimum, and every way a hold ends
        yield f"holds_{pool or 'default'}", b"".join([
            batch(CYCLES + [hold(3, 4)], pool=pool),  # the bridge is not in the optimum
            frame(COMMIT),
            batch([set_edge(3, 4, 1), hold(1, 2)], pool=pool),
            batch([release(4, 3), hold(5, 6)], pool=pool),
            frame(COMMIT),
            batch([unset(1, 2), remove(6), hold(2, 3), hold(4, 5)], pool=pool),
            frame(COMMIT),
            all_queries(pool, vertex=3),
        ])
    yield "big_weights", b"".join([
        batch([set_edge(1, 2, 2**52), set_edge(2, 3, -(2**52)), set_edge(3, 1, 2**52 - 1)]),
        batch([set_edge(1, 2, 2**52 + 1)]),  # one above the default pool's bound
        frame(COMMIT),
        all_queries(vertex=2),
    ])
    yield "retries", b"".join([
        batch([add(1), add(2)], client="a", number=1),
        batch([set_edge(1, 2, 3)], client="a", number=2, after=1),
        batch([set_edge(1, 2, 3)], client="a", number=2),  # duplicate inside the window
        frame(COMMIT),
        batch([add(1)], client="a", number=1),  # older: applied long ago
        batch([add(3)], client="a", number=5, after=4),  # out of order
        batch([add(3)], client="b", number=0),
    ])
    yield "edge_limit", b"".join([  # pool w: at most 6 vertices, 5 edges, |w| <= 50
        batch([set_edge(1, 2, 9), set_edge(2, 3, 9), set_edge(3, 4, 9), set_edge(4, 5, 9),
               set_edge(5, 1, 9)], pool="w"),
        frame(COMMIT),
        # Refused: the limit counts the window's insertions, and the unset frees no place yet.
        batch([unset(1, 2), set_edge(1, 3, 4)], pool="w"),
        batch([remove(5), add(6)], pool="w"),
        frame(COMMIT),
        batch([set_edge(1, 3, 4), set_edge(6, 2, 50)], pool="w"),
        batch([add(7), add(8)], pool="w"),  # refused: vertex 8 would be the seventh
        all_queries("w", vertex=1),
    ])
    yield "pool_cap", b"".join([  # 4 pools: c, p and w declared (reserved), one other
        batch([add(1)], pool="p"),
        batch([remove(1)], pool="y"),  # refused: pool y is not created
        query("y", summary=query_pb2.SummaryRequest()),
        batch([add(1)]), batch([add(1)], pool="c"), batch([add(1)], pool="w"),
        batch([add(1)], pool="x"),  # a fifth pool: refused
        frame(COMMIT),
        query("x", summary=query_pb2.SummaryRequest()),
    ])
    yield "retire", b"".join([  # retirements free the one undeclared slot and reset a pool
        batch(CYCLES, pool="c", client="a", number=1),
        batch([add(1)], pool="x"),  # the one slot for pools not declared
        batch([add(1)], pool="y"),  # refused: no slot left
        frame(COMMIT),
        retire("x", at_seq=2),  # refused: x is at seq 1
        retire("z"),  # refused: no pool z
        batch([set_edge(3, 4, 40)], pool="c", client="a", number=2, after=1),
        retire("c", at_seq=2, client="r", number=1),
        batch([add(9)], pool="c"),  # refused: c is retired in the open window
        retire("x"),
        frame(COMMIT),
        query("c", summary=query_pb2.SummaryRequest()),
        batch([add(1)], pool="y"),  # x's slot is free again
        batch([add(1)], pool="c", client="a", number=3, after=2),  # out of order: marks gone
        batch([add(1)], pool="c", client="a", number=3),  # c afresh, at seq 1
        frame(COMMIT),
        all_queries("c", vertex=1),
    ])
    yield "refusals", b"".join([
        batch([set_edge(1, 1, 2)]),  # self loop
        batch([add(1), unset(1, 1)]),  # self loop too
        batch([remove(8)]),  # unknown vertex
        batch([add(1), add(2), unset(1, 2)]),  # unknown edge
        batch([add(1), add(1)]),  # vertex exists
        batch([set_edge(1, 2, 3), hold(2, 2)]),  # self loop
        batch([set_edge(1, 2, 3), hold(1, 9)]),  # unknown vertex
        batch([add(1), add(2), hold(1, 2)]),  # unknown edge
        batch([set_edge(1, 2, 3), set_edge(2, 3, 3), hold(1, 2), hold(3, 2)]),  # already held
        batch([set_edge(1, 2, 3), set_edge(2, 3, 3), hold(1, 2), release(2, 3)]),  # not held
        batch([set_edge(1, 2, 3), hold(1, 2), unset(1, 2), release(1, 2)]),  # the unset ended it
        batch([{"kind": E.HOLD_PAIR, "u": 1, "v": 2, "w": 4}]),  # w on a pair event
        batch([add(u) for u in range(10, 27)]),  # 17 vertices: above the limit of 16
        batch([add(u) for u in range(30, 55)]),  # 25 events: above 24 per batch
        batch([add(1)], pool="no spaces"),  # bad pool name
        batch([add(1)], version=0),  # unsupported version
        batch([{"kind": E.ADD_VERTEX, "u": 1, "v": 2}]),  # v on a vertex event
        frame(INGEST, b"\x08\x01"),  # no kind
        frame(INGEST, b"\xff\xff"),  # not protobuf
    ])


def main():
    out = pathlib.Path(sys.argv[1])
    out.mkdir(parents=True, exist_ok=True)
    for name, data in seeds():
        (out / name).write_bytes(data)
    # The whole input is also decoded as one message: one raw IngestRequest and QueryRequest.
    (out / "raw_ingest").write_bytes(batch(CYCLES, pool="p", client="x", number=3)[2:])
    (out / "raw_query").write_bytes(query(summary=query_pb2.SummaryRequest())[2:])


if __name__ == "__main__":
    main()
