"""The harness of the end-to-end tests: real `yoked` processes on real sockets and real files.

Each `Daemon` lives in a temporary directory of its own: its data directory, its config file,
its log file, and ipc:// endpoints for ingest, publication and query inside that directory, so
tests running in parallel never share a socket. The metrics HTTP endpoint needs TCP: its port is
found by binding port 0 first. The daemon is ready once it answers a health query.

Also here: the `yoke` command line (`run_yoke`, `yoke_json`), raw ZeroMQ clients built on the
generated `yoke.v1` modules (`ask`, `IngestClient`, `Subscriber`), event scripts (`Script`: parse,
rebuild the final graph, the NetworkX oracle), `yoke replay` output (`replay_commits`,
`replay_final_matching`), the /metrics page, and the segment and snapshot files on disk.

Runs under Debian's /usr/bin/python3 (python3-zmq, python3-protobuf, python3-networkx). The
binaries come in as YOKE_BINARY and YOKED_BINARY; the generated modules are on PYTHONPATH
(build/proto/python). YOKE_TEST_SCALE=small (the sanitizer run) shrinks the streams. Set
YOKE_E2E_KEEP=1 to keep the temporary directories of a run (their paths are printed).
"""

import json
import os
import random
import re
import shutil
import signal
import socket
import struct
import subprocess
import tempfile
import threading
import time
import unittest
import urllib.request

import networkx as nx
import zmq

from yoke.v1 import events_pb2, ingest_pb2, protocol_pb2, publish_pb2, query_pb2

YOKE = os.environ.get("YOKE_BINARY", "")
YOKED = os.environ.get("YOKED_BINARY", "")
PROTOCOL_VERSION = protocol_pb2.PROTOCOL_VERSION_1
ErrorCode = protocol_pb2.Error


def small_scale():
    """The sanitizer run sets YOKE_TEST_SCALE=small: its binaries are about 5x slower."""
    return os.environ.get("YOKE_TEST_SCALE") == "small"


def scaled(full, small):
    return small if small_scale() else full


# Everything slow gets this much more time under the sanitizers.
SLOWDOWN = 5 if small_scale() else 1


def check_binaries():
    if not YOKE or not YOKED:
        raise unittest.SkipTest("YOKE_BINARY and YOKED_BINARY must name the built binaries")
    for path in (YOKE, YOKED):
        if not os.access(path, os.X_OK):
            raise AssertionError(f"{path} is not an executable file")


def free_tcp_port():
    """A loopback port that was free a moment ago (bind port 0, read it, close)."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


# ---------------------------------------------------------------------------------------------
# Raw ZeroMQ clients on the generated yoke.v1 modules.

_context = zmq.Context.instance()


def _dealer(endpoint):
    sock = _context.socket(zmq.DEALER)
    sock.setsockopt(zmq.LINGER, 0)
    sock.connect(endpoint)
    return sock


def ask_raw(endpoint, payload, timeout_ms=2000):
    """Sends one message on a fresh DEALER and returns the reply's bytes, or None on silence."""
    sock = _dealer(endpoint)
    try:
        sock.send(payload)
        if sock.poll(timeout_ms, zmq.POLLIN):
            return sock.recv()
        return None
    finally:
        sock.close()


_request_ids = iter(range(1, 1 << 62))


def query_request(kind, pool="", **fields):
    request = query_pb2.QueryRequest(version=PROTOCOL_VERSION, request_id=next(_request_ids),
                                     pool=pool)
    getattr(request, kind).SetInParent()
    for name, value in fields.items():
        setattr(getattr(request, kind), name, value)
    return request


def ask(endpoint, kind, pool="", timeout_ms=2000, **fields):
    """One query on the query socket; the QueryReply, or None when nothing came back in time."""
    request = query_request(kind, pool, **fields)
    raw = ask_raw(endpoint, request.SerializeToString(), timeout_ms)
    if raw is None:
        return None
    reply = query_pb2.QueryReply()
    reply.ParseFromString(raw)
    if reply.request_id != request.request_id:
        raise AssertionError(f"reply to request {reply.request_id}, expected {request.request_id}")
    return reply


def make_event(kind, u, v=0, w=0):
    kinds = {"add": events_pb2.Event.ADD_VERTEX, "set": events_pb2.Event.SET_EDGE,
             "unset": events_pb2.Event.UNSET_EDGE, "remove": events_pb2.Event.REMOVE_VERTEX,
             "hold": events_pb2.Event.HOLD_PAIR, "release": events_pb2.Event.RELEASE_PAIR}
    return events_pb2.Event(kind=kinds[kind], u=u, v=v, w=w)


def make_batch_request(events, pool="", client_id="", client_batch=0, after_batch=0,
                       version=PROTOCOL_VERSION):
    """An IngestRequest carrying one EventBatch; events are Event messages or tuples
    ("set", u, v, w), ("add", u), ..."""
    request = ingest_pb2.IngestRequest(version=version)
    batch = request.batch
    batch.client_id = client_id
    batch.client_batch = client_batch
    batch.pool = pool
    batch.after_batch = after_batch
    for event in events:
        if isinstance(event, tuple):
            event = make_event(*event)
        batch.events.append(event)
    return request


class IngestClient:
    """A DEALER on the ingest socket; one request, one IngestReply at a time."""

    def __init__(self, endpoint):
        self.sock = _dealer(endpoint)

    def send_bytes(self, payload, timeout_ms=5000):
        self.sock.send(payload)
        if not self.sock.poll(timeout_ms * SLOWDOWN, zmq.POLLIN):
            return None
        reply = ingest_pb2.IngestReply()
        reply.ParseFromString(self.sock.recv())
        return reply

    def send(self, request, timeout_ms=5000):
        """Sends an IngestRequest; returns the Ack (AssertionError on silence)."""
        reply = self.send_bytes(request.SerializeToString(), timeout_ms)
        if reply is None:
            raise AssertionError("no IngestReply within the timeout")
        if reply.version != PROTOCOL_VERSION or not reply.HasField("ack"):
            raise AssertionError(f"unexpected IngestReply {reply}")
        return reply.ack

    def close(self):
        self.sock.close()


class Subscriber:
    """A SUB socket drained by a thread into `messages`: (topic bytes, Publication, monotonic
    time). ZeroMQ reconnects it by itself when the daemon restarts on the same endpoint."""

    def __init__(self, endpoint, topics):
        self.sock = _context.socket(zmq.SUB)
        self.sock.setsockopt(zmq.LINGER, 0)
        self.sock.setsockopt(zmq.RCVHWM, 0)
        self.sock.setsockopt(zmq.RECONNECT_IVL, 20)
        self.sock.setsockopt(zmq.RECONNECT_IVL_MAX, 100)
        for topic in topics:
            self.sock.setsockopt(zmq.SUBSCRIBE, topic.encode() if isinstance(topic, str) else topic)
        self.sock.connect(endpoint)
        self.messages = []
        self.errors = []
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._drain, daemon=True)
        self._thread.start()

    def _drain(self):
        try:
            while not self._stop.is_set():
                if not self.sock.poll(50, zmq.POLLIN):
                    continue
                frames = self.sock.recv_multipart()
                if len(frames) != 2:
                    self.errors.append(f"a publication of {len(frames)} frames")
                    continue
                publication = publish_pb2.Publication()
                publication.ParseFromString(frames[1])
                self.messages.append((frames[0], publication, time.monotonic()))
        except Exception as error:  # reported by the test through `errors`
            self.errors.append(repr(error))

    def diffs(self, topic=None):
        """The Diffs received so far, of the exact topic when given."""
        if isinstance(topic, str):
            topic = topic.encode()
        return [pub.diff for t, pub, _ in list(self.messages)
                if (topic is None or t == topic) and pub.HasField("diff")]

    def wait_for_seq(self, topic, seq, timeout_s):
        deadline = time.monotonic() + timeout_s * SLOWDOWN
        while time.monotonic() < deadline:
            got = self.diffs(topic)
            if got and got[-1].seq >= seq:
                return True
            time.sleep(0.02)
        return False

    def close(self):
        self._stop.set()
        self._thread.join(5)
        self.sock.close()


# ---------------------------------------------------------------------------------------------
# The daemon.

class Daemon:
    """One yoked in a temporary directory of its own. `config` is extra TOML (tables other than
    [endpoints] and [logging], which the harness writes)."""

    def __init__(self, test_case=None, config="", log_level="info", name="yoked"):
        self.dir = tempfile.mkdtemp(prefix="yoke-e2e-")
        self.data_dir = os.path.join(self.dir, "data")
        self.log_path = os.path.join(self.dir, "yoked.log")
        self.stderr_path = os.path.join(self.dir, "yoked.stderr")
        self.config_path = os.path.join(self.dir, "yoked.toml")
        self.ingest = "ipc://" + os.path.join(self.dir, "ingest.sock")
        self.publish = "ipc://" + os.path.join(self.dir, "publish.sock")
        self.query = "ipc://" + os.path.join(self.dir, "query.sock")
        self.extra_config = config
        self.log_level = log_level
        self.name = name
        self.metrics_port = free_tcp_port()
        self.proc = None
        self.env = None  # the process's environment when set (else the test's)
        self.starts = 0
        self.children = []  # `yoke` processes started by popen_yoke, ended at cleanup
        self._write_config()
        if test_case is not None:
            test_case.addCleanup(self.cleanup)

    def _write_config(self):
        with open(self.config_path, "w") as out:
            out.write("[endpoints]\n"
                      f'ingest = "{self.ingest}"\n'
                      f'publish = "{self.publish}"\n'
                      f'query = "{self.query}"\n'
                      f'metrics = "127.0.0.1:{self.metrics_port}"\n'
                      "[logging]\n"
                      f'level = "{self.log_level}"\n'
                      f'file = "{self.log_path}"\n')
            out.write(self.extra_config)

    @property
    def metrics_url(self):
        return f"http://127.0.0.1:{self.metrics_port}/metrics"

    def spawn(self):
        """Starts the process without waiting for it to be ready."""
        assert self.proc is None or self.proc.poll() is not None, "already running"
        self.starts += 1
        with open(self.stderr_path, "ab") as err:
            err.write(f"--- start {self.starts}\n".encode())
            err.flush()
            self.proc = subprocess.Popen(
                [YOKED, "--data-dir", self.data_dir, "--config", self.config_path],
                stdin=subprocess.DEVNULL, stdout=err, stderr=err, env=self.env)
        return self.proc

    def start(self, timeout_s=20):
        """Starts the daemon and waits until it answers a health query. A metrics port taken in
        the meantime by someone else is replaced once."""
        log_size = os.path.getsize(self.log_path) if os.path.exists(self.log_path) else 0
        for attempt in range(2):
            self.spawn()
            try:
                self.wait_ready(timeout_s)
                return self
            except DaemonExited:
                new_log = self.log_text()[log_size:]
                if attempt == 0 and "in use" in new_log:
                    self.metrics_port = free_tcp_port()
                    self._write_config()
                    continue
                raise

    def wait_ready(self, timeout_s=20):
        deadline = time.monotonic() + timeout_s * SLOWDOWN
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise DaemonExited(f"yoked exited with status {self.proc.returncode} before it "
                                   f"was ready\n{self.diagnostics()}")
            reply = ask(self.query, "health", timeout_ms=200)
            if reply is not None and reply.HasField("health") and reply.health.ok:
                return
        raise AssertionError(f"yoked not ready within {timeout_s * SLOWDOWN} s\n"
                             f"{self.diagnostics()}")

    def running(self):
        return self.proc is not None and self.proc.poll() is None

    def kill(self):
        """SIGKILL, and wait for the process to be gone."""
        if self.running():
            self.proc.send_signal(signal.SIGKILL)
        if self.proc is not None:
            self.proc.wait(30)

    def terminate(self, timeout_s=30):
        """SIGTERM; returns the exit status."""
        self.proc.send_signal(signal.SIGTERM)
        return self.proc.wait(timeout_s * SLOWDOWN)

    def restart(self):
        self.kill()
        return self.start()

    def log_text(self):
        try:
            with open(self.log_path, errors="replace") as log:
                return log.read()
        except FileNotFoundError:
            return ""

    def log_lines(self, event):
        """The log lines of one event name (text format: `... info yoked EVENT key=value`)."""
        pattern = re.compile(r"\byoked " + re.escape(event) + r"(?: |$)")
        return [line for line in self.log_text().splitlines() if pattern.search(line)]

    def stderr_text(self):
        try:
            with open(self.stderr_path, errors="replace") as err:
                return err.read()
        except FileNotFoundError:
            return ""

    def diagnostics(self):
        log = self.log_text().splitlines()[-30:]
        err = self.stderr_text().splitlines()[-30:]
        return ("log (last lines):\n  " + "\n  ".join(log) +
                "\nstderr (last lines):\n  " + "\n  ".join(err) + f"\ndirectory: {self.dir}")

    def cleanup(self):
        for child in self.children:
            if child.poll() is None:
                child.kill()
            child.wait(30)
            for stream in (child.stdout, child.stderr):
                if stream is not None:
                    stream.close()
        if self.proc is not None and self.proc.poll() is None:
            self.proc.kill()
            self.proc.wait(30)
        if os.environ.get("YOKE_E2E_KEEP"):
            print(f"\nkept {self.dir}")
        else:
            shutil.rmtree(self.dir, ignore_errors=True)

    # --- asking it ---

    def ask(self, kind, pool="", timeout_ms=3000, **fields):
        reply = ask(self.query, kind, pool, timeout_ms * SLOWDOWN, **fields)
        if reply is None:
            raise AssertionError(f"no reply to a {kind} query\n{self.diagnostics()}")
        return reply

    def summary(self, pool="default"):
        """The Summary as a dict (seq, weight, pairs, vertices, edges, mode, npm), or None for a
        pool the daemon does not hold."""
        reply = self.ask("summary", pool)
        if reply.HasField("error"):
            if reply.error.code == ErrorCode.UNKNOWN_POOL:
                return None
            raise AssertionError(f"summary of {pool}: {reply.error}")
        s = reply.summary
        return {"seq": s.seq, "weight": s.weight, "pairs": s.pairs, "vertices": s.vertices,
                "edges": s.edges, "mode": s.mode, "no_perfect_matching": s.no_perfect_matching}

    def matching(self, pool="default"):
        """(seq, weight, set of (a, b)) from a raw Matching query."""
        reply = self.ask("matching", pool)
        if reply.HasField("error"):
            raise AssertionError(f"matching of {pool}: {reply.error}")
        m = reply.matching
        return m.seq, m.weight, {(p.a, p.b) for p in m.matching}

    def metrics_text(self):
        with urllib.request.urlopen(self.metrics_url, timeout=10 * SLOWDOWN) as response:
            return response.read().decode()

    def yoke(self, *args, **kwargs):
        """`yoke` with this daemon's endpoints filled in for the commands that take them."""
        args = list(args)
        endpoint_flags = {"send": ["--ingest", self.ingest],
                          "retire": ["--ingest", self.ingest],
                          "watch": ["--publish", self.publish, "--query", self.query],
                          "query": ["--query", self.query]}
        return run_yoke(*(args + endpoint_flags.get(args[0], [])), **kwargs)

    def yoke_json(self, *args, **kwargs):
        return json.loads(self.yoke(*args, **kwargs).stdout)

    def popen_yoke(self, *args, **kwargs):
        args = list(args)
        endpoint_flags = {"send": ["--ingest", self.ingest],
                          "watch": ["--publish", self.publish, "--query", self.query]}
        child = subprocess.Popen([YOKE] + args + endpoint_flags.get(args[0], []),
                                 stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                                 **kwargs)
        self.children.append(child)
        return child

    # --- files on disk ---

    def journal_segments(self):
        directory = os.path.join(self.data_dir, "journal")
        return sorted(os.path.join(directory, name) for name in os.listdir(directory)
                      if name.endswith(".seg"))

    def snapshot_files(self):
        directory = os.path.join(self.data_dir, "snapshots")
        if not os.path.isdir(directory):
            return []
        return sorted(os.path.join(directory, name) for name in os.listdir(directory)
                      if name.endswith(".yks"))


class DaemonExited(AssertionError):
    pass


# ---------------------------------------------------------------------------------------------
# The yoke command line.

class YokeFailed(AssertionError):
    pass


def run_yoke(*args, expect=0, timeout=120, input_text=None):
    """Runs `yoke ARGS`; checks its exit status when `expect` is not None."""
    result = subprocess.run([YOKE] + [str(a) for a in args], capture_output=True, text=True,
                            timeout=timeout * SLOWDOWN, input=input_text)
    if expect is not None and result.returncode != expect:
        raise YokeFailed(f"yoke {' '.join(map(str, args))}: exit {result.returncode}, expected "
                         f"{expect}\nstdout: {result.stdout[-2000:]}\nstderr: "
                         f"{result.stderr[-2000:]}")
    return result


def gen_stream(path, family="city", vertices=200, events=2000, batch=20, seed=1, extra=()):
    run_yoke("gen", "stream", family, "--vertices", vertices, "--events", events, "--batch", batch,
             "--seed", seed, "-o", path, *extra)
    return Script.load(path)


_COMMIT = re.compile(r"^commit (\d+) weight (-?\d+) pairs (\d+) repair_us \d+(?: seq (\d+))?$")


def replay_commits(source, *extra):
    """`yoke replay SOURCE`: a list of {commit, weight, pairs, seq (journal only)}."""
    out = run_yoke("replay", source, *extra).stdout
    commits = []
    for line in out.splitlines():
        match = _COMMIT.match(line)
        if match:
            commits.append({"commit": int(match[1]), "weight": int(match[2]),
                            "pairs": int(match[3]),
                            "seq": int(match[4]) if match[4] is not None else None})
    return commits


def replay_final_matching(source, *extra):
    """The matching after the last commit of `yoke replay SOURCE --diffs`, accumulated from its
    `- A B` and `+ A B` lines, and the commit lines."""
    out = run_yoke("replay", source, "--diffs", *extra).stdout
    pairs = set()
    commits = []
    for line in out.splitlines():
        fields = line.split()
        if not fields:
            continue
        if fields[0] in "+-" and len(fields) == 3:
            pair = (int(fields[1]), int(fields[2]))
            if fields[0] == "+":
                if pair in pairs:
                    raise AssertionError(f"replay adds {pair}, which is already matched")
                pairs.add(pair)
            else:
                if pair not in pairs:
                    raise AssertionError(f"replay removes {pair}, which is not matched")
                pairs.remove(pair)
        elif _COMMIT.match(line):
            match = _COMMIT.match(line)
            commits.append({"commit": int(match[1]), "weight": int(match[2]),
                            "pairs": int(match[3]),
                            "seq": int(match[4]) if match[4] is not None else None})
    return pairs, commits


# ---------------------------------------------------------------------------------------------
# Event scripts.

class Script:
    """An event script split in batches the way `yoke send` sends it: one batch per `commit`, and
    the events after the last commit as one more. Each event keeps its line number:
    (line, kind, u, v, w)."""

    def __init__(self, batches, path=None):
        self.batches = batches
        self.path = path

    @classmethod
    def load(cls, path):
        with open(path) as source:
            return cls.parse(source.read().splitlines(), path)

    @classmethod
    def parse(cls, lines, path=None):
        batches, current = [], []
        for number, line in enumerate(lines, start=1):
            fields = line.split("#", 1)[0].split()
            if not fields:
                continue
            kind = fields[0]
            if kind == "commit":
                batches.append(current)
                current = []
                continue
            numbers = [int(x) for x in fields[1:]]
            u = numbers[0]
            v = numbers[1] if len(numbers) > 1 else 0
            w = numbers[2] if len(numbers) > 2 else 0
            current.append((number, kind, u, v, w))
        if current:
            batches.append(current)
        return cls(batches, path)

    def write(self, path):
        with open(path, "w") as out:
            out.write(self.text())
        self.path = path
        return self

    def text(self):
        lines = []
        for batch in self.batches:
            for _, kind, u, v, w in batch:
                lines.append({"add": f"add {u}", "remove": f"remove {u}", "unset": f"unset {u} {v}",
                              "set": f"set {u} {v} {w}", "hold": f"hold {u} {v}",
                              "release": f"release {u} {v}"}[kind])
            lines.append("commit")
        return "\n".join(lines) + "\n"

    def shifted(self, offset):
        """The same stream on vertex ids + offset."""
        pairs = ("set", "unset", "hold", "release")
        return Script([[(n, k, u + offset, v + offset if k in pairs else 0, w)
                        for n, k, u, v, w in batch] for batch in self.batches])

    def prefix(self, count):
        return Script(self.batches[:count])

    def suffix(self, start):
        return Script(self.batches[start:])

    @property
    def event_count(self):
        return sum(len(batch) for batch in self.batches)

    def graph(self, upto=None, into=None):
        """The graph after the first `upto` batches (all by default), rebuilt in Python from the
        event semantics of docs/contracts.md §2."""
        graph = nx.Graph() if into is None else into
        for batch in self.batches[:upto]:
            for _, kind, u, v, w in batch:
                if kind == "add":
                    graph.add_node(u)
                elif kind == "set":
                    graph.add_edge(u, v, weight=w)
                elif kind == "unset":
                    graph.remove_edge(u, v)
                elif kind == "remove":
                    graph.remove_node(u)
                elif kind in ("hold", "release"):
                    pass  # the graph stays; a held pair is the matching's business
                else:
                    raise AssertionError(f"unknown event kind {kind}")
        return graph


def networkx_weight(graph):
    """Oracle: NetworkX max_weight_matching (maximum weight, any cardinality) on `graph`."""
    matching = nx.max_weight_matching(graph, maxcardinality=False, weight="weight")
    return sum(graph[u][v]["weight"] for u, v in matching)


def check_matching_in_graph(test_case, pairs, graph, weight):
    """Common knowledge: a matching is a set of edges of the graph, no two sharing an end; its
    weight is the sum of theirs."""
    seen = set()
    total = 0
    for a, b in pairs:
        test_case.assertTrue(graph.has_edge(a, b), f"pair {a}-{b} is not an edge")
        test_case.assertNotIn(a, seen)
        test_case.assertNotIn(b, seen)
        seen.update((a, b))
        total += graph[a][b]["weight"]
    test_case.assertEqual(total, weight)


def apply_diffs(test_case, diffs, start=None, start_seq=0):
    """Applies diffs in order to a matching (a set of (a, b)); every diff's prev_seq must be the
    seq held, every removed pair matched, every added pair new (publish.proto)."""
    pairs = set(start or ())
    seq = start_seq
    for diff in diffs:
        test_case.assertEqual(diff.prev_seq, seq, f"diff {diff.seq} does not follow seq {seq}")
        test_case.assertGreater(diff.seq, diff.prev_seq)
        for pair in diff.removed:
            test_case.assertIn((pair.a, pair.b), pairs)
            pairs.remove((pair.a, pair.b))
        for pair in diff.added:
            test_case.assertLess(pair.a, pair.b)
            test_case.assertNotIn((pair.a, pair.b), pairs)
            pairs.add((pair.a, pair.b))
        test_case.assertEqual(len(pairs), diff.pairs)
        seq = diff.seq
    return pairs, seq


# ---------------------------------------------------------------------------------------------
# The /metrics page (Prometheus text format).

_SAMPLE = re.compile(r"^([a-zA-Z_:][a-zA-Z0-9_:]*)(\{[^}]*\})?\s+(\S+)$")
_LABEL = re.compile(r'([a-zA-Z_][a-zA-Z0-9_]*)="((?:[^"\\]|\\.)*)"')


def metric_value(text, name, **labels):
    """The sample of `name` whose labels include `labels`; 0 when there is none."""
    total = None
    for line in text.splitlines():
        if line.startswith("#"):
            continue
        match = _SAMPLE.match(line.strip())
        if not match or match[1] != name:
            continue
        got = dict(_LABEL.findall(match[2] or ""))
        if all(got.get(k) == v for k, v in labels.items()):
            total = (total or 0) + float(match[3])
    return total or 0


# ---------------------------------------------------------------------------------------------
# Files on disk (daemon/journal/FORMAT.md, daemon/snapshots/FORMAT.md).

SEGMENT_HEADER_BYTES = 24
RECORD_HEADER_BYTES = 16


def segment_records(path):
    """(offset, payload length, journal position) of each whole record of a segment file; the parse stops at
    the first record that does not fit in the file."""
    with open(path, "rb") as segment:
        data = segment.read()
    records = []
    offset = SEGMENT_HEADER_BYTES
    while offset + RECORD_HEADER_BYTES <= len(data):
        length, _crc, position = struct.unpack_from("<IIQ", data, offset)
        if offset + RECORD_HEADER_BYTES + length > len(data):
            break
        records.append((offset, length, position))
        offset += RECORD_HEADER_BYTES + length
    return records, len(data)


def log_fields(line):
    """key=value fields of a text log line (values may be quoted)."""
    fields = {}
    for match in re.finditer(r'(\w+)=("(?:[^"\\]|\\.)*"|\S*)', line):
        value = match[2]
        if value.startswith('"'):
            value = value[1:-1]
        fields[match[1]] = value
    return fields


def rng(seed):
    return random.Random(seed)
