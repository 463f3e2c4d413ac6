"""A local NATS cluster for the Python end-to-end tests and the cluster demo (the C++ twin is
tools/nats_cluster/local_nats_cluster.h).

`NatsCluster(nodes=3)` writes one config per node with client, route and monitoring ports picked
free on 127.0.0.1, keeps JetStream data in a temporary directory, starts `nats-server` children
(each in a session of its own: a Ctrl-C at the terminal does not reach them) and waits until
the cluster is ready: every node's /healthz answers 200 and an R<nodes> stream
can be created (over the NATS protocol itself: no Python NATS client is packaged in Debian).
Nodes are killed, paused, resumed and restarted by PID; `stop()` (also on `with` exit, at
interpreter exit, and through PR_SET_PDEATHSIG if the test process dies) ends every node by its
PID. Nothing else is ever signalled. Standard library only.
"""

import atexit
import ctypes
import json
import os
import random
import shutil
import signal
import socket
import subprocess
import tempfile
import time
import urllib.error
import urllib.request

_PR_SET_PDEATHSIG = 1
_LIVE = set()  # clusters not yet stopped, stopped at interpreter exit


def free_ports(count):
    """`count` distinct loopback ports that could be bound just now, drawn at random from
    20000-32767: below Linux's ephemeral range, so outgoing connections of running servers
    cannot take one before the server binds it (held until all are picked)."""
    sockets, ports = [], []
    try:
        for _ in range(10000):
            if len(ports) == count:
                return ports
            port = random.randint(20000, 32767)
            if port in ports:
                continue
            s = socket.socket()
            try:
                s.bind(("127.0.0.1", port))
            except OSError:
                s.close()
                continue
            sockets.append(s)
            ports.append(port)
        raise RuntimeError(f"cannot find {count} free loopback ports")
    finally:
        for s in sockets:
            s.close()


class PortTaken(RuntimeError):
    """A node lost a port to another process: the cluster starts again on fresh ports."""


def _die_with_parent():
    libc = ctypes.CDLL(None, use_errno=True)
    libc.prctl(_PR_SET_PDEATHSIG, signal.SIGKILL)


def node_config(cluster_name, ports, index, store_dir):
    """nats-server config of node `index` (server_name n<index+1>); ports: (client, route, http)."""
    client, route, http = ports[index]
    routes = ", ".join(f"nats-route://127.0.0.1:{p[1]}" for p in ports)
    text = (f"server_name: n{index + 1}\nlisten: 127.0.0.1:{client}\nhttp: 127.0.0.1:{http}\n"
            f'jetstream {{\n  store_dir: "{store_dir}"\n  max_memory_store: 256MB\n'
            # 2GB: a stream of yoked's default cap (1 GiB) fits beside what the readiness probe
            # may still reserve for a moment after its deletion (with 1GB, a stream made just
            # after readiness was sometimes refused: "insufficient storage").
            f"  max_file_store: 2GB\n}}\n")
    if len(ports) > 1:
        text += (f"cluster {{\n  name: {cluster_name}\n  listen: 127.0.0.1:{route}\n"
                 f"  routes: [ {routes} ]\n}}\n")
    return text


class NatsCluster:
    def __init__(self, nodes=3, server="nats-server", start_limit=30.0, name="yoke-test",
                 directory=None):
        """directory: where configs, logs and JetStream data go (made if missing); default a
        fresh temporary directory."""
        if not 1 <= nodes <= 9:
            raise ValueError("a local NATS cluster has 1 to 9 nodes")
        self.server = server
        self.cluster_name = name
        self.nodes = nodes
        if directory is None:
            self.directory = tempfile.mkdtemp(prefix="yoke-nats-")
        else:
            os.makedirs(directory, exist_ok=True)
            self.directory = directory
        self.processes = [None] * nodes
        self.paused = [False] * nodes
        _LIVE.add(self)
        for attempt in range(3):
            try:
                self._start_on_fresh_ports()
                self._wait_ready(start_limit)
                return
            except PortTaken:
                self._stop_processes()
                if attempt == 2:
                    self.stop()
                    raise
            except BaseException:
                self.stop()
                raise

    def _start_on_fresh_ports(self):
        free = free_ports(3 * self.nodes)
        self.ports = [tuple(free[3 * k:3 * k + 3]) for k in range(self.nodes)]
        for k in range(self.nodes):
            data = os.path.join(self.directory, f"data-n{k + 1}")
            shutil.rmtree(data, ignore_errors=True)
            with open(self._config(k), "w") as f:
                f.write(node_config(self.cluster_name, self.ports, k, data))
        for k in range(self.nodes):
            self._start(k)

    # --- names and addresses
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.stop()

    @property
    def size(self):
        return self.nodes

    def client_url(self, node):
        return f"nats://127.0.0.1:{self.ports[node][0]}"

    def client_urls(self):
        return [self.client_url(k) for k in range(self.size)]

    def server_name(self, node):
        return f"n{node + 1}"

    def node_named(self, name):
        return next((k for k in range(self.size) if self.server_name(k) == name), -1)

    def pid(self, node):
        p = self.processes[node]
        return p.pid if p is not None and p.poll() is None else None

    def _config(self, node):
        return os.path.join(self.directory, f"n{node + 1}.conf")

    def log_path(self, node):
        return os.path.join(self.directory, f"n{node + 1}.log")

    def log_tail(self, node, size=2000):
        try:
            with open(self.log_path(node), "rb") as f:
                return f.read()[-size:].decode(errors="replace")
        except OSError:
            return ""

    # --- processes, by PID only
    def _start(self, node):
        with open(self.log_path(node), "ab") as log:
            self.processes[node] = subprocess.Popen(
                [self.server, "-c", self._config(node)], stdout=log, stderr=log,
                stdin=subprocess.DEVNULL, preexec_fn=_die_with_parent, start_new_session=True)
        self.paused[node] = False

    def kill(self, node):
        """SIGKILL and reap; the node's data stays for restart()."""
        p = self.processes[node]
        if p is not None and p.poll() is None:
            os.kill(p.pid, signal.SIGKILL)
            os.kill(p.pid, signal.SIGCONT)
            p.wait()
        self.paused[node] = False

    def pause(self, node):
        os.kill(self.processes[node].pid, signal.SIGSTOP)
        self.paused[node] = True

    def resume(self, node):
        os.kill(self.processes[node].pid, signal.SIGCONT)
        self.paused[node] = False

    def restart(self, node, limit=30.0):
        if self.pid(node) is not None:
            raise RuntimeError(f"{self.server_name(node)} is still running")
        self._start(node)
        if not self.wait_healthy(node, limit):
            raise RuntimeError(f"{self.server_name(node)} did not become healthy:\n"
                               + self.log_tail(node))

    def restart_all(self, limit=60.0):
        """Starts every stopped node at once (a node alone cannot become healthy while its
        streams have no quorum), then waits until each is healthy."""
        stopped = [node for node in range(self.size) if self.pid(node) is None]
        for node in stopped:
            self._start(node)
        for node in stopped:
            if not self.wait_healthy(node, limit):
                raise RuntimeError(f"{self.server_name(node)} did not become healthy:\n"
                                   + self.log_tail(node))

    def _stop_processes(self):
        for p in self.processes:
            if p is not None and p.poll() is None:
                os.kill(p.pid, signal.SIGCONT)
                os.kill(p.pid, signal.SIGTERM)
        for p in self.processes:
            if p is None:
                continue
            try:
                p.wait(timeout=3)
            except subprocess.TimeoutExpired:
                os.kill(p.pid, signal.SIGKILL)
                p.wait()
        self.paused = [False] * self.nodes

    def stop(self, keep_directory=None):
        """SIGTERM every node still running, SIGKILL after 3 s; removes the directory unless
        keep_directory (default: YOKE_KEEP_NATS_DIR=1)."""
        self._stop_processes()
        _LIVE.discard(self)
        if keep_directory is None:
            keep_directory = os.environ.get("YOKE_KEEP_NATS_DIR") == "1"
        if not keep_directory:
            shutil.rmtree(self.directory, ignore_errors=True)

    # --- monitoring
    def monitor(self, node, path, timeout=1.0):
        """(status, body) of GET on the node's monitoring port; (0, '') when nothing answers."""
        url = f"http://127.0.0.1:{self.ports[node][2]}{path}"
        try:
            with urllib.request.urlopen(url, timeout=timeout) as reply:
                return reply.status, reply.read().decode()
        except urllib.error.HTTPError as error:
            return error.code, error.read().decode(errors="replace")
        except OSError:
            return 0, ""

    def wait_healthy(self, node, limit):
        deadline = time.monotonic() + limit
        while True:
            if self.monitor(node, "/healthz")[0] == 200:
                return True
            if time.monotonic() > deadline:
                return False
            time.sleep(0.05)

    def stream_view(self, node, stream):
        """This node's /jsz view of `stream`: {messages, first_seq, last_seq, leader}, or None."""
        status, body = self.monitor(node, "/jsz?accounts=true&streams=true")
        if status != 200:
            return None
        for account in json.loads(body).get("account_details", []):
            for detail in account.get("stream_detail", []) or []:
                if detail.get("name") == stream:
                    state = detail.get("state", {})
                    return {"messages": state.get("messages", 0),
                            "first_seq": state.get("first_seq", 0),
                            "last_seq": state.get("last_seq", 0),
                            "leader": (detail.get("cluster") or {}).get("leader", "")}
        return None

    def stream_leader(self, stream, limit=10.0):
        """The node every running, unpaused host of `stream` names as its leader."""
        deadline = time.monotonic() + limit
        while time.monotonic() < deadline:
            named, hosts = set(), set()
            for k in range(self.size):
                if self.pid(k) is None or self.paused[k]:
                    continue
                view = self.stream_view(k, stream)
                if view is not None:
                    hosts.add(k)
                    named.add(view["leader"])
            if len(named) == 1:
                leader = self.node_named(named.pop())
                if leader in hosts:
                    return leader
            time.sleep(0.05)
        raise RuntimeError(f"no agreed leader for stream {stream!r} in time")

    # --- the NATS protocol, just enough for JetStream API requests
    def request(self, subject, payload, node=0, timeout=2.0):
        """One request/reply over a fresh connection to `node`; returns the reply's bytes."""
        with socket.create_connection(("127.0.0.1", self.ports[node][0]), timeout=timeout) as s:
            reader = s.makefile("rb")
            if not reader.readline().startswith(b"INFO "):
                raise RuntimeError("not a NATS server")
            data = payload if isinstance(payload, bytes) else json.dumps(payload).encode()
            s.sendall(b'CONNECT {"verbose":false,"pedantic":false}\r\n'
                      b"SUB _INBOX.yoke.probe 1\r\n"
                      + f"PUB {subject} _INBOX.yoke.probe {len(data)}\r\n".encode()
                      + data + b"\r\n")
            while True:
                line = reader.readline()
                if not line:
                    raise RuntimeError(f"connection closed waiting for a reply to {subject}")
                if line.startswith(b"PING"):
                    s.sendall(b"PONG\r\n")
                elif line.startswith(b"-ERR"):
                    raise RuntimeError(line.decode().strip())
                elif line.startswith(b"MSG "):
                    size = int(line.split()[-1])
                    body = reader.read(size + 2)[:size]
                    return body

    def js_api(self, what, body=None, node=0, timeout=2.0):
        """A JetStream API call ($JS.API.<what>) as a dict; raises on an error answer."""
        reply = json.loads(self.request(f"$JS.API.{what}", body or {}, node, timeout))
        if "error" in reply:
            raise RuntimeError(f"$JS.API.{what}: {reply['error']}")
        return reply

    def _wait_ready(self, limit):
        deadline = time.monotonic() + limit
        for k in range(self.size):
            while self.monitor(k, "/healthz")[0] != 200:
                if self.processes[k].poll() is not None:
                    raise PortTaken(f"n{k + 1} exited at start:\n" + self.log_tail(k))
                if time.monotonic() > deadline:
                    raise RuntimeError(self._failure("did not answer /healthz in time"))
                time.sleep(0.05)
            status, body = self.monitor(k, "/varz")
            try:
                port = json.loads(body).get("port") if status == 200 else None
            except ValueError:
                port = None
            if port != self.ports[k][0]:
                raise PortTaken(f"another server answers on the monitoring port of n{k + 1}")
        probe = {"name": "yoke_cluster_probe", "subjects": ["yoke.cluster.probe"],
                 "num_replicas": self.size, "storage": "file", "max_bytes": 1 << 20}
        last = ""
        while time.monotonic() < deadline:
            try:
                self.js_api("STREAM.CREATE.yoke_cluster_probe", probe)
                self.js_api("STREAM.DELETE.yoke_cluster_probe")
                return
            except (RuntimeError, OSError, ValueError) as error:
                last = str(error)
            time.sleep(0.05)
        raise RuntimeError(self._failure("never accepted a replicated stream: " + last))

    def _failure(self, why):
        text = f"the local NATS cluster in {self.directory} {why}"
        for k in range(self.size):
            text += f"\n--- n{k + 1}.log (end) ---\n" + self.log_tail(k)
        return text


@atexit.register
def _stop_leftovers():
    for cluster in list(_LIVE):
        cluster.stop()
