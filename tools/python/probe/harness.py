"""What the probe needs to talk to a real yoked: start and stop it, send raw or built messages,
match replies, read diffs, and record each case as spec-says / daemon-did / agree.

Written from docs/protocol.md, docs/contracts.md, README.md and proto/yoke/v1/ only."""

import glob
import os
import shutil
import signal
import socket
import subprocess
import tempfile
import time

import zmq

from yoke.v1 import events_pb2, ingest_pb2, protocol_pb2, publish_pb2, query_pb2

V1 = protocol_pb2.PROTOCOL_VERSION_1
Code = protocol_pb2.Error
K = events_pb2.Event


def code_name(code):
    try:
        return protocol_pb2.Error.Code.Name(code)
    except ValueError:
        return str(code)


# --- the record of cases -------------------------------------------------------------------

class Record:
    """Each case: what the spec says (with its line), what yoked did, and the verdict:
    'agree', 'DISAGREE' or 'GAP' (the spec is silent or ambiguous; observed only)."""

    def __init__(self):
        self.cases = []

    def case(self, name, spec, expected, observed, ok):
        verdict = "GAP" if ok is None else ("agree" if ok else "DISAGREE")
        self.cases.append((verdict, name, spec, expected, observed))
        print(f"[{verdict:8}] {name}\n           spec: {spec}\n           expected: {expected}"
              f"\n           observed: {observed}", flush=True)

    def summary(self):
        counts = {}
        for verdict, *_ in self.cases:
            counts[verdict] = counts.get(verdict, 0) + 1
        return counts


# --- raw Protobuf encoding, for bytes the generated classes will not write ------------------

def varint(n):
    n &= (1 << 64) - 1
    out = bytearray()
    while True:
        byte = n & 0x7F
        n >>= 7
        if n:
            out.append(byte | 0x80)
        else:
            out.append(byte)
            return bytes(out)


def field_varint(number, value):
    return varint(number << 3) + varint(value)


def field_bytes(number, data):
    return varint(number << 3 | 2) + varint(len(data)) + data


def raw_ingest_batch(batch_bytes, version=1):
    return field_varint(1, version) + field_bytes(2, batch_bytes)


# --- the daemon ----------------------------------------------------------------------------

def free_ports(count):
    socks, ports = [], []
    for _ in range(count):
        s = socket.socket()
        s.bind(("127.0.0.1", 0))
        socks.append(s)
        ports.append(s.getsockname()[1])
    for s in socks:
        s.close()
    return ports


class Daemon:
    def __init__(self, yoked, config_text="", data_dir=None, ports=None, tag="a"):
        self.yoked = yoked
        self.data_dir = data_dir or tempfile.mkdtemp(prefix="yoke-probe-")
        self.ports = ports or free_ports(4)
        self.config_path = f"{self.data_dir}.{tag}.toml"
        with open(self.config_path, "w") as f:
            f.write(config_text)
        self.proc = None
        self.log_path = f"{self.data_dir}.{tag}.log"

    @property
    def ingest(self):
        return f"tcp://127.0.0.1:{self.ports[0]}"

    @property
    def publish(self):
        return f"tcp://127.0.0.1:{self.ports[1]}"

    @property
    def query(self):
        return f"tcp://127.0.0.1:{self.ports[2]}"

    def argv(self):
        return [self.yoked, "--data-dir", self.data_dir, "--config", self.config_path,
                "--ingest", self.ingest, "--publish", self.publish, "--query", self.query,
                "--metrics", f"127.0.0.1:{self.ports[3]}"]

    def start(self, wait=True, timeout=15.0):
        log = open(self.log_path, "a")
        self.proc = subprocess.Popen(self.argv(), stdout=log, stderr=log)
        if wait:
            self.wait_healthy(timeout)
        return self.proc

    def wait_healthy(self, timeout=15.0):
        deadline = time.time() + timeout
        with Client(self) as c:
            while time.time() < deadline:
                if self.proc.poll() is not None:
                    raise RuntimeError(f"yoked exited {self.proc.returncode}; see {self.log_path}")
                reply = c.query(query_pb2.QueryRequest(health=query_pb2.HealthRequest()),
                                timeout=0.3)
                if reply is not None and reply.WhichOneof("kind") == "health":
                    return reply
        raise RuntimeError("yoked did not answer health in time")

    def signal(self, sig):
        self.proc.send_signal(sig)

    def wait_exit(self, timeout=30.0):
        try:
            return self.proc.wait(timeout)
        except subprocess.TimeoutExpired:
            return None

    def remove_files(self):
        """The data directory and the config and log files beside it."""
        shutil.rmtree(self.data_dir, ignore_errors=True)
        for path in glob.glob(self.data_dir + ".*"):
            os.remove(path)

    def stop(self):
        if self.proc and self.proc.poll() is None:
            self.proc.send_signal(signal.SIGTERM)
            if self.wait_exit(20) is None:
                self.proc.kill()
                self.proc.wait()


# --- a client ------------------------------------------------------------------------------

class Client:
    """One DEALER on ingest, one DEALER on query; replies are matched by (client id, batch) and
    by request id, never by order (docs/protocol.md, "Replies are matched ...")."""

    def __init__(self, daemon):
        self.ctx = zmq.Context.instance()
        self.daemon_query = daemon.query
        self.ing = self.ctx.socket(zmq.DEALER)
        self.ing.setsockopt(zmq.LINGER, 0)
        self.ing.connect(daemon.ingest)
        self.qry = self.ctx.socket(zmq.DEALER)
        self.qry.setsockopt(zmq.LINGER, 0)
        self.qry.connect(daemon.query)
        self.pending_acks = []
        self.pending_queries = {}
        self.next_request = 1

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def close(self):
        self.ing.close(0)
        self.qry.close(0)

    # ingest
    def send_raw(self, data):
        self.ing.send(data)

    def send_request(self, request):
        self.ing.send(request.SerializeToString())

    def recv_ack(self, timeout):
        if not self.ing.poll(int(timeout * 1000)):
            return None
        reply = ingest_pb2.IngestReply()
        reply.ParseFromString(self.ing.recv())
        return reply

    def wait_ack(self, client_id, client_batch, timeout=5.0):
        """The ack for (client_id, client_batch); others are kept for later."""
        for i, reply in enumerate(self.pending_acks):
            if reply.ack.client_id == client_id and reply.ack.client_batch == client_batch:
                return self.pending_acks.pop(i)
        deadline = time.time() + timeout
        while time.time() < deadline:
            reply = self.recv_ack(max(0.0, deadline - time.time()))
            if reply is None:
                break
            if reply.ack.client_id == client_id and reply.ack.client_batch == client_batch:
                return reply
            self.pending_acks.append(reply)
        return None

    def batch(self, pool, events, client_id="", client_batch=0, after_batch=0, timeout=5.0):
        request = ingest_pb2.IngestRequest(version=V1)
        b = request.batch
        b.pool, b.client_id, b.client_batch, b.after_batch = pool, client_id, client_batch, \
            after_batch
        for e in events:
            b.events.append(e)
        self.send_request(request)
        return self.wait_ack(client_id, client_batch, timeout)

    def retire(self, pool, client_id="", client_batch=0, at_seq=0, timeout=5.0):
        request = ingest_pb2.IngestRequest(version=V1)
        r = request.retire
        r.pool, r.client_id, r.client_batch, r.at_seq = pool, client_id, client_batch, at_seq
        self.send_request(request)
        return self.wait_ack(client_id, client_batch, timeout)

    # queries
    def query(self, request, timeout=5.0, pool=None, keep_version=False):
        if pool is not None:
            request.pool = pool
        if not request.version and not keep_version:
            request.version = V1
        request.request_id = self.next_request
        self.next_request += 1
        return self.query_raw(request.SerializeToString(), request.request_id, timeout)

    def query_raw(self, data, request_id, timeout=5.0):
        self.qry.send(data)
        if request_id in self.pending_queries:
            return self.pending_queries.pop(request_id)
        deadline = time.time() + timeout
        while time.time() < deadline:
            if not self.qry.poll(int(max(0.0, deadline - time.time()) * 1000)):
                break
            reply = query_pb2.QueryReply()
            reply.ParseFromString(self.qry.recv())
            if reply.request_id == request_id:
                return reply
            self.pending_queries[reply.request_id] = reply
        return None

    def summary(self, pool):
        return self.query(query_pb2.QueryRequest(summary=query_pb2.SummaryRequest()), pool=pool)

    def stats(self, pool):
        return self.query(query_pb2.QueryRequest(stats=query_pb2.StatsRequest()), pool=pool)

    def mate(self, pool, vertex):
        return self.query(query_pb2.QueryRequest(mate=query_pb2.MateRequest(vertex=vertex)),
                          pool=pool)

    def matching(self, pool):
        return self.query(query_pb2.QueryRequest(matching=query_pb2.MatchingRequest()),
                          pool=pool)


class Subscriber:
    def __init__(self, daemon, topic):
        self.topic = topic
        self.sub = zmq.Context.instance().socket(zmq.SUB)
        self.sub.setsockopt(zmq.LINGER, 0)
        self.sub.connect(daemon.publish)
        self.sub.setsockopt(zmq.SUBSCRIBE, topic.encode())

    def diffs(self, timeout=1.0, count=None):
        """(topic, Publication) pairs received within timeout (or once count arrived)."""
        out = []
        deadline = time.time() + timeout
        while time.time() < deadline and (count is None or len(out) < count):
            if not self.sub.poll(int(max(0.0, deadline - time.time()) * 1000)):
                break
            frames = self.sub.recv_multipart()
            pub = publish_pb2.Publication()
            pub.ParseFromString(frames[-1])
            out.append((frames[0].decode(errors="replace"), pub, len(frames)))
        return out

    def close(self):
        self.sub.close(0)


# --- events --------------------------------------------------------------------------------

def add(u):
    return K(kind=K.ADD_VERTEX, u=u)


def set_(u, v, w):
    return K(kind=K.SET_EDGE, u=u, v=v, w=w)


def unset(u, v):
    return K(kind=K.UNSET_EDGE, u=u, v=v)


def remove(u):
    return K(kind=K.REMOVE_VERTEX, u=u)


def hold(u, v):
    return K(kind=K.HOLD_PAIR, u=u, v=v)


def release(u, v):
    return K(kind=K.RELEASE_PAIR, u=u, v=v)


def apply_diff(held, diff):
    """A subscriber's matching, as (a, b) pairs, after one diff."""
    for p in diff.removed:
        held.discard((p.a, p.b))
    for p in diff.added:
        held.add((p.a, p.b))


def outcome(reply):
    """A short text of an IngestReply, for the record."""
    if reply is None:
        return "no reply"
    a = reply.ack
    head = f"ack(id={a.client_id[:20]!r}{'...' if len(a.client_id) > 20 else ''}, " \
           f"batch={a.client_batch}, pool={a.pool[:24]!r})"
    kind = a.WhichOneof("outcome")
    if kind == "accepted":
        return head + f" accepted seq={a.accepted.seq} dup={a.accepted.duplicate}"
    if kind == "rejected":
        errs = []
        for e in a.rejected.errors:
            s = code_name(e.code)
            if e.HasField("event_index"):
                s += f"@{e.event_index}"
            if e.HasField("last_batch"):
                s += f" last_batch={e.last_batch}"
            s += f" {e.message!r}"
            errs.append(s)
        return head + " rejected " + "; ".join(errs)
    return head + " (no outcome)"


def accepted(reply):
    return reply is not None and reply.ack.WhichOneof("outcome") == "accepted"


def rejected_code(reply):
    if reply is None or reply.ack.WhichOneof("outcome") != "rejected":
        return None
    return reply.ack.rejected.errors[0].code if reply.ack.rejected.errors else None


def first_error(reply):
    return reply.ack.rejected.errors[0]


def qoutcome(reply):
    if reply is None:
        return "no reply"
    kind = reply.WhichOneof("kind")
    if kind == "error":
        return f"reply(id={reply.request_id}, pool={reply.pool!r}) error " \
               f"{code_name(reply.error.code)} {reply.error.message!r}"
    body = str(getattr(reply, kind)).replace("\n", " ")[:160] if kind else ""
    return f"reply(id={reply.request_id}, pool={reply.pool!r}) {kind} {body}"
