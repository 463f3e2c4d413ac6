#!/usr/bin/python3
"""The generated Python modules of yoke.v1: import them, round-trip one event batch, check its
bytes against the ones the C++ test fixes (so both languages agree on the wire form), and check
that garbage raises DecodeError. PYTHONPATH must hold the generated directory
(YOKE_PROTO_PYTHON_DIR); CTest sets it."""
import sys

from google.protobuf.message import DecodeError

from yoke.v1 import events_pb2, ingest_pb2, protocol_pb2

# The same bytes as kGoldenRequestHex in proto_roundtrip_test.cpp.
GOLDEN_HEX = ("080112360a02633110071a07686172626f7572220408011001220808021001180220092206080310011802"
              "220d080410ffffffffffffffffff01")
MAX_KEY = 2**64 - 1


def golden_request():
    req = ingest_pb2.IngestRequest(version=protocol_pb2.PROTOCOL_VERSION_1)
    batch = req.batch
    batch.client_id = "c1"
    batch.client_batch = 7
    batch.pool = "harbour"
    batch.events.add(kind=events_pb2.Event.ADD_VERTEX, u=1)
    batch.events.add(kind=events_pb2.Event.SET_EDGE, u=1, v=2, w=-5)
    batch.events.add(kind=events_pb2.Event.UNSET_EDGE, u=1, v=2)
    batch.events.add(kind=events_pb2.Event.REMOVE_VERTEX, u=MAX_KEY)
    return req


def main():
    req = golden_request()
    data = req.SerializeToString()
    back = ingest_pb2.IngestRequest()
    back.ParseFromString(data)
    assert back == req, f"round trip changed the batch:\n{back}"
    assert back.WhichOneof("kind") == "batch"
    kinds = [events_pb2.Event.Kind.Name(e.kind) for e in back.batch.events]
    assert kinds == ["ADD_VERTEX", "SET_EDGE", "UNSET_EDGE", "REMOVE_VERTEX"], kinds
    assert back.batch.events[1].w == -5
    assert back.batch.events[3].u == MAX_KEY
    assert data.hex() == GOLDEN_HEX, f"wire bytes differ from the C++ ones:\n{data.hex()}"

    for garbage in (b"\x0a\x10short", b"\x08\xff\xff\xff", b"\x0f\x01"):
        try:
            ingest_pb2.IngestRequest().ParseFromString(garbage)
        except DecodeError:
            continue
        raise AssertionError(f"garbage parsed: {garbage.hex()}")

    unknown = ingest_pb2.IngestRequest()
    unknown.ParseFromString(b"\x08\x01\x9a\x06\x00")  # field 99: a kind from a later version
    assert unknown.WhichOneof("kind") is None

    print(f"proto_python: batch of {len(back.batch.events)} events, {len(data)} bytes, round trip ok")
    return 0


if __name__ == "__main__":
    sys.exit(main())
