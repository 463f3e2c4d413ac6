"""The cluster demo: the Quillory evening (city_sim.py) through two yoked daemons that share a
three-node NATS JetStream cluster on loopback, with one daemon and later one NATS node SIGKILLed.

    PYTHONPATH=build/proto/python:tools/python:tools/nats_cluster /usr/bin/python3 \\
        tools/demo/cluster_demo.py --yoke build/tools/cli/yoke --yoked build/daemon/server/yoked \\
        --dir build/demo-cluster [--seconds 45] [evening options of city_sim.py]

`east` owns `quillory` and stands by for `quillory-plain`; `west` owns `quillory-plain` and
stands by for `quillory`. Every tick's batch goes to both pools through clients that know both
daemons and follow their NOT_OWNER refusals. At --kill-yoked-at (a fraction of --seconds, 0.5)
`east` is SIGKILLed: `west` claims `quillory` once east's heartbeats stay silent, and the live
view shows per pool who serves it, its seq and weight, and the takeover's gap (from the kill to
the first acknowledgement from the new server, as the sender saw it). At --kill-nats-at (0.75)
the node leading the stream is SIGKILLed; the other two elect a new leader and the stream goes
on. At the end (or at Ctrl-C) each pool's matching is asked of the daemon serving it, the killed
node is restarted and catches up, and each pool's log is replayed from the cluster with every commit's certificate checked (`yoke replay
--cluster URLS --stream S --pool P --verify --diffs`; the daemons take no snapshot during the
run, so the log holds each pool's whole evening); its last commit and final matching must be
the daemon's. Then the daemons are stopped with SIGTERM (exit 0 expected). Exit 0 when every
batch was accepted, each exactly once (every pool's seq is the tick count), and the replays
certified and equal.

Every process started here (three nats-server, two yoked) runs in a session of its own (a Ctrl-C
at the terminal reaches only this script), dies with this script (PR_SET_PDEATHSIG), and is
stopped by its PID on every way out. Files: --dir/{east,west}/ (config, log, data),
--dir/nats/ (node configs, logs, JetStream data), --dir/replay-POOL.txt, --dir/result.json.
"""

import argparse
import ctypes
import json
import os
import signal
import subprocess
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import city_sim  # noqa: E402
from live_view import LiveView  # noqa: E402

STREAM = "quillory-demo"
INSTANCES = ("east", "west")  # name order: the order standbys take over in
_PR_SET_PDEATHSIG = 1
REPLAY_ATTEMPTS = 5


def parse_args(argv):
    p = argparse.ArgumentParser(
        prog="cluster_demo.py",
        description="Stream a Quillory evening through two yoked on a three-node NATS cluster, "
                    "kill one daemon and one NATS node, replay each pool from the cluster.")
    city_sim.add_evening_options(p)
    p.set_defaults(churn_bonus=60, client_id="quillory-cluster")
    p.add_argument("--yoke", required=True, help="the yoke binary")
    p.add_argument("--yoked", required=True, help="the yoked binary")
    p.add_argument("--nats-server", default="nats-server")
    p.add_argument("--dir", required=True, help="where the run's files go (made if missing)")
    p.add_argument("--kill-yoked-at", type=float, default=0.5,
                   help="SIGKILL east at this fraction of --seconds (default 0.5; 0: never)")
    p.add_argument("--kill-nats-at", type=float, default=0.75,
                   help="SIGKILL the stream's leader node at this fraction (default 0.75; 0: never)")
    p.add_argument("--heartbeat-ms", type=int, default=250)
    p.add_argument("--takeover-ms", type=int, default=1500)
    p.add_argument("--publish-timeout-ms", type=int, default=15000,
                   help="[cluster] publish_timeout_ms of the daemons (default 15000)")
    p.add_argument("--ack-timeout-s", type=float, default=0.5,
                   help="silence after which a batch goes to the other daemon (default 0.5)")
    return p.parse_args(argv)


def _die_with_parent():
    ctypes.CDLL(None, use_errno=True).prctl(_PR_SET_PDEATHSIG, signal.SIGKILL)


class Daemon:
    """One yoked of the demo, started and signalled by its PID only."""

    def __init__(self, name, directory, ports):
        self.name = name
        self.dir = os.path.join(directory, name)
        os.makedirs(self.dir, exist_ok=True)
        ingest, publish, query, metrics = ports
        self.ingest = f"tcp://127.0.0.1:{ingest}"
        self.publish = f"tcp://127.0.0.1:{publish}"
        self.query = f"tcp://127.0.0.1:{query}"
        self.metrics = f"127.0.0.1:{metrics}"
        self.config_path = os.path.join(self.dir, "yoked.toml")
        self.log_path = os.path.join(self.dir, "yoked.log")
        self.proc = None
        self.killed_at = None  # monotonic time of the SIGKILL
        self.exit_code = None

    def write_config(self, pools_text, cluster_text):
        with open(self.config_path, "w") as out:
            out.write(f'[endpoints]\ningest = "{self.ingest}"\npublish = "{self.publish}"\n'
                      f'query = "{self.query}"\nmetrics = "{self.metrics}"\n\n'
                      f'[logging]\nfile = "{self.log_path}"\n\n'
                      # No snapshot during the run: a snapshot lets the daemon drop the pool's
                      # log below it, and the demo replays each pool's whole history.
                      "[snapshots]\ninterval_seconds = 3600\nafter_events = 0\n\n")
            out.write(pools_text + "\n" + cluster_text)

    def start(self, yoked):
        with open(os.path.join(self.dir, "yoked.stderr"), "ab") as err:
            self.proc = subprocess.Popen(
                [yoked, "--data-dir", os.path.join(self.dir, "data"), "--config",
                 self.config_path], stdin=subprocess.DEVNULL, stdout=err, stderr=err,
                start_new_session=True, preexec_fn=_die_with_parent)

    def running(self):
        return self.proc is not None and self.proc.poll() is None

    def kill(self):
        if self.running():
            os.kill(self.proc.pid, signal.SIGKILL)
            self.killed_at = time.monotonic()
            self.proc.wait()

    def terminate(self, limit_s=15.0):
        """SIGTERM, then SIGKILL after limit_s; the exit code (None if it was not running)."""
        if not self.running():
            return None
        os.kill(self.proc.pid, signal.SIGTERM)
        try:
            self.exit_code = self.proc.wait(timeout=limit_s)
        except subprocess.TimeoutExpired:
            os.kill(self.proc.pid, signal.SIGKILL)
            self.proc.wait()
            self.exit_code = "killed after SIGTERM"
        return self.exit_code

    def log_lines(self, event):
        """The lines of the daemon's log about `event` (e.g. pool_taken)."""
        try:
            with open(self.log_path, errors="replace") as f:
                return [line.rstrip("\n") for line in f if f" {event} " in line]
        except OSError:
            return []

    def tail(self, size=3000):
        text = ""
        for name in ("yoked.stderr", "yoked.log"):
            try:
                with open(os.path.join(self.dir, name), "rb") as f:
                    text += f"--- {self.name}/{name} (end)\n" + f.read()[-size:].decode(
                        errors="replace")
            except OSError:
                pass
        return text


def cluster_toml(nats, daemons, me, roles, args):
    """The [cluster] section of daemon `me`; roles: name -> (owned pools, stood-by pools)."""
    from cluster_toml import cluster_section
    # publish_timeout_ms: a write waits out the election of a new stream leader after the old
    # one's SIGKILL (about 5 s on a busy two-core machine).
    return cluster_section(me, nats.client_urls(), daemons, roles, stream=STREAM,
                           subject_prefix="quillory", replicas=3,
                           heartbeat_ms=args.heartbeat_ms, takeover_ms=args.takeover_ms,
                           publish_timeout_ms=args.publish_timeout_ms)


def ask_one(endpoint, kind, pool, timeout_s=0.5):
    """One query to one daemon only (no NOT_OWNER followed): the QueryReply, or None on
    silence."""
    import zmq
    from yoke.v1 import protocol_pb2, query_pb2
    request = query_pb2.QueryRequest(version=protocol_pb2.PROTOCOL_VERSION_1, request_id=1,
                                     pool=pool)
    getattr(request, kind).SetInParent()
    sock = zmq.Context.instance().socket(zmq.DEALER)
    sock.setsockopt(zmq.LINGER, 0)
    try:
        sock.connect(endpoint)
        sock.send(request.SerializeToString())
        if not sock.poll(int(timeout_s * 1000), zmq.POLLIN):
            return None
        reply = query_pb2.QueryReply()
        reply.ParseFromString(sock.recv())
        return reply
    finally:
        sock.close()


def serves(daemon, pool, kind="summary"):
    """The daemon's reply to a `kind` query of `pool` when it serves the pool (no error, or
    UNKNOWN_POOL: served, no batch yet); None otherwise."""
    from yoke.v1 import protocol_pb2
    reply = ask_one(daemon.query, kind, pool)
    if reply is None:
        return None
    if reply.HasField("error") and reply.error.code != protocol_pb2.Error.UNKNOWN_POOL:
        return None
    return reply


def wait_stream(nats, daemon, limit_s=60.0):
    """Until the installation's stream exists (the daemon made it)."""
    deadline = time.monotonic() + limit_s
    while time.monotonic() < deadline:
        if not daemon.running():
            raise RuntimeError(f"yoked {daemon.name} exited at start\n{daemon.tail()}")
        try:
            nats.js_api(f"STREAM.INFO.{STREAM}", timeout=1.0)
            return
        except (RuntimeError, OSError, ValueError):
            time.sleep(0.02)
    raise RuntimeError(f"yoked {daemon.name} made no stream {STREAM} in {limit_s} s\n"
                       f"{daemon.tail()}")


def wait_serving(daemon, pool, limit_s=60.0):
    """Until `daemon` answers a summary of `pool` itself (it claimed the pool)."""
    deadline = time.monotonic() + limit_s
    while time.monotonic() < deadline:
        if not daemon.running():
            raise RuntimeError(f"yoked {daemon.name} exited at start\n{daemon.tail()}")
        if serves(daemon, pool) is not None:
            return
        time.sleep(0.05)
    raise RuntimeError(f"yoked {daemon.name} does not serve {pool} after {limit_s} s\n"
                       f"{daemon.tail()}")


class Disruptions:
    """The demo's faults at their times, and what the senders saw of them: per pool, who
    acknowledged its batches (the serving daemon), each change of server with its gap, and the
    longest wait for an acknowledgement after the NATS node's kill."""

    def __init__(self, args, nats, daemons):
        self.args = args
        self.nats = nats
        self.daemons = daemons
        self.instance_of = {d.ingest: name for name, d in daemons.items()}
        self.started = None
        self.serving = {}   # pool -> instance
        self.moves = {}     # pool -> [{"from","to","at_s","gap_s"}]
        self.events = []    # (wall s, text)
        self.nats_killed = None  # (node, monotonic time)
        self.waits_after_nats_kill = {}  # pool -> longest send-to-ack after it (s)

    def wall(self, t=None):
        return (time.monotonic() if t is None else t) - self.started

    def before_tick(self, run):
        self.observe(run)
        wall = self.wall()
        seconds = self.args.seconds
        east = self.daemons["east"]
        if (self.args.kill_yoked_at > 0 and wall >= seconds * self.args.kill_yoked_at
                and east.killed_at is None):
            east.kill()
            self.events.append((self.wall(east.killed_at), "SIGKILL yoked east"))
        if (self.args.kill_nats_at > 0 and wall >= seconds * self.args.kill_nats_at
                and self.nats_killed is None):
            try:
                node = self.nats.stream_leader(STREAM, limit=2.0)
                why = "the stream's leader"
            except RuntimeError:
                node, why = 0, "no agreed leader found"
            self.nats.kill(node)
            self.nats_killed = (node, time.monotonic())
            self.events.append((self.wall(), f"SIGKILL NATS {self.nats.server_name(node)} "
                                             f"({why})"))

    def observe(self, run):
        """After a tick: who acknowledged each pool's batch, and how long it took."""
        if self.started is None:
            self.started = run.started
        for track in run.pools.tracks:
            if track.acked_by is None:
                continue
            now_serving = self.instance_of.get(track.acked_by, track.acked_by)
            before = self.serving.get(track.name)
            if before is not None and now_serving != before:
                killed_at = self.daemons[before].killed_at if before in self.daemons else None
                since = killed_at if killed_at is not None and killed_at <= track.acked_at \
                    else track.sent_at
                move = {"from": before, "to": now_serving, "at_s": self.wall(since),
                        "gap_s": track.acked_at - since}
                self.moves.setdefault(track.name, []).append(move)
                after = f"the kill of {before}" if since == killed_at else "the batch was sent"
                self.events.append((self.wall(track.acked_at),
                                    f"{track.name}: {now_serving} acknowledges (was {before}), "
                                    f"{move['gap_s']:.2f} s after {after}"))
            self.serving[track.name] = now_serving
            if self.nats_killed is not None and track.sent_at >= self.nats_killed[1]:
                wait = track.acked_at - track.sent_at
                if wait > self.waits_after_nats_kill.get(track.name, 0.0):
                    self.waits_after_nats_kill[track.name] = wait

    def frame(self, run):
        self.observe(run)
        f = run.frame()
        nats = []
        for k in range(self.nats.size):
            if self.nats_killed is not None and self.nats_killed[0] == k:
                state = f"killed at {self.wall(self.nats_killed[1]):.1f} s"
            else:
                state = "up"
            nats.append({"name": self.nats.server_name(k), "state": state})
        instances = []
        for name, d in self.daemons.items():
            state = "up" if d.killed_at is None else f"killed at {self.wall(d.killed_at):.1f} s"
            instances.append({"name": name, "state": state})
        pools = [{"name": t.name, "served_by": self.serving.get(t.name), "seq": t.seq,
                  "weight": t.weight, "takeovers": self.moves.get(t.name, [])}
                 for t in run.pools.tracks]
        f["cluster"] = {"stream": STREAM, "nats": nats, "instances": instances, "pools": pools}
        return f


def final_state(daemons, pools, limit_s=15.0):
    """Each pool's matching as the daemon serving it answers: {pool: {served_by, seq, weight,
    pairs, matching: sorted [a, b]}}. Asks each running daemon until one serves the pool."""
    from yoke_client import dicts
    out = {}
    for pool in pools:
        deadline = time.monotonic() + limit_s
        while pool not in out:
            for name, d in daemons.items():
                reply = serves(d, pool, "matching") if d.running() else None
                if reply is not None and not reply.HasField("error"):
                    whole = dicts.reply(reply)
                    out[pool] = {"served_by": name, "seq": whole["seq"],
                                 "weight": whole["weight"], "pairs": whole["pairs"],
                                 "matching": sorted([min(a, b), max(a, b)]
                                                    for a, b, _ in whole["matching"])}
                    break
            else:
                if time.monotonic() > deadline:
                    raise RuntimeError(f"no daemon answers for pool {pool}")
                time.sleep(0.1)
    return out


def wait_caught_up(nats, node, limit_s=60.0):
    """Until `node`'s copy of the stream ends where the leader's does; that last sequence."""
    deadline = time.monotonic() + limit_s
    while time.monotonic() < deadline:
        leader = nats.stream_leader(STREAM, limit=limit_s)
        want = (nats.stream_view(leader, STREAM) or {}).get("last_seq")
        have = (nats.stream_view(node, STREAM) or {}).get("last_seq")
        if want is not None and have == want:
            return have
        time.sleep(0.1)
    raise RuntimeError(f"NATS {nats.server_name(node)} did not catch up in {limit_s} s")


def wait_meta_leader(nats, limit_s=30.0):
    """Until the running nodes name one JetStream meta leader among them: a reader's consumer
    is created through it (after its node's SIGKILL, the others elect a new one)."""
    deadline = time.monotonic() + limit_s
    while time.monotonic() < deadline:
        named = set()
        for k in range(nats.size):
            if nats.pid(k) is None:
                continue
            status, body = nats.monitor(k, "/jsz")
            named.add(json.loads(body).get("meta_cluster", {}).get("leader", "")
                      if status == 200 else "")
        if len(named) == 1:
            leader = nats.node_named(named.pop())
            if leader != -1 and nats.pid(leader) is not None:
                return
        time.sleep(0.1)
    raise RuntimeError("the NATS nodes agree on no JetStream meta leader")


def replay_from_cluster(yoke, urls, pool, path):
    """`yoke replay --cluster URLS --stream S --pool P --verify --diffs`, its output kept in
    `path`: {commits, seq, weight, pairs, matching} of the last commit, or {"error": text}."""
    command = [yoke, "replay", "--cluster", ",".join(urls), "--stream", STREAM,
               "--subject-prefix", "quillory", "--pool", pool, "--verify", "--diffs"]
    done = subprocess.run(command, capture_output=True, text=True, timeout=300)
    with open(path, "w") as out:
        out.write(done.stdout)
    if done.returncode != 0:
        return {"error": f"exit {done.returncode}: {done.stderr.strip()[-2000:]}",
                "command": command}
    pairs, last = set(), None
    commits = 0
    for line in done.stdout.splitlines():
        fields = line.split()
        if fields[:1] == ["commit"]:
            commits += 1
            last = fields
        elif len(fields) == 3 and fields[0] in "+-":
            pair = (int(fields[1]), int(fields[2]))
            (pairs.add if fields[0] == "+" else pairs.discard)(pair)
    if last is None:
        return {"error": "the replay printed no commit", "command": command}
    return {"commits": commits, "seq": int(last[last.index("seq") + 1]),
            "weight": int(last[3]), "pairs": int(last[5]),
            "matching": sorted(list(p) for p in pairs), "command": command}


def main(argv=None):
    args = parse_args(sys.argv[1:] if argv is None else argv)
    from nats_cluster import NatsCluster, free_ports
    from yoke_client import YokeError

    stop = {"signal": None}

    def on_signal(signum, _frame):
        stop["signal"] = signal.Signals(signum).name
        signal.signal(signum, signal.SIG_DFL)  # a second one ends this script at once

    signal.signal(signal.SIGINT, on_signal)
    signal.signal(signal.SIGTERM, on_signal)
    os.makedirs(args.dir, exist_ok=True)
    pools = (args.pool, args.shadow_pool)
    roles = {"east": ([args.pool], [args.shadow_pool]),
             "west": ([args.shadow_pool], [args.pool])}
    nats = None
    daemons = {}
    result = {"ok": False, "problems": []}
    try:
        print("demo: starting three nats-server nodes on loopback ...", flush=True)
        nats = NatsCluster(3, server=args.nats_server, name="quillory",
                           directory=os.path.join(args.dir, "nats"))
        ports = free_ports(4 * len(INSTANCES))
        daemons = {name: Daemon(name, args.dir, ports[4 * k:4 * k + 4])
                   for k, name in enumerate(INSTANCES)}
        pools_text = city_sim.pools_toml(args.pool, args.shadow_pool, args.churn_bonus or None)
        for name, d in daemons.items():
            d.write_config(pools_text, cluster_toml(nats, daemons, name, roles, args))
        # east makes the stream, west starts once it is there (two daemons creating it at once
        # on a fresh cluster can time out), soon enough to claim its own pool before east, its
        # standby, would (takeover_ms after east's start).
        daemons["east"].start(args.yoked)
        wait_stream(nats, daemons["east"])
        daemons["west"].start(args.yoked)
        for name, d in daemons.items():
            wait_serving(d, roles[name][0][0])
        result["pids"] = {**{nats.server_name(k): nats.pid(k) for k in range(nats.size)},
                          **{name: d.proc.pid for name, d in daemons.items()}}
        print(f"demo: NATS {', '.join(nats.client_urls())} (stream {STREAM}, 3 replicas); "
              f"yoked east serves {args.pool}, west serves {args.shadow_pool}, each stands by "
              f"for the other's; files in {args.dir}", flush=True)
        if stop["signal"] is None:
            run, status = simulate(args, nats, daemons, stop, result)
        else:
            run, status = None, 1
        if run is not None:
            check(args, nats, daemons, pools, run, result)
        if status:
            result["problems"].append("the evening did not run to its end (see above)")
    except (RuntimeError, OSError, YokeError) as error:
        result["problems"].append(str(error))
    finally:
        for d in daemons.values():
            code = d.terminate()
            if code is not None:
                result.setdefault("exit_codes", {})[d.name] = code
        if nats is not None:
            nats.stop(keep_directory=True)
    result["ok"] = not result["problems"]
    result["stopped_by"] = stop["signal"] or "end of run"
    with open(os.path.join(args.result or os.path.join(args.dir, "result.json")), "w") as out:
        json.dump(result, out, indent=1, sort_keys=True)
        out.write("\n")
    for problem in result["problems"]:
        print(f"demo: FAILED: {problem}", file=sys.stderr)
    if result["ok"]:
        print(f"demo: every batch accepted once, the takeover seen, both logs certified and "
              f"equal to the daemons' answers; every process stopped. Files: {args.dir}/ "
              "(east/ and west/: config, log; nats/: node logs; replay-*.txt; result.json)")
    else:
        for d in daemons.values():
            print(d.tail(), file=sys.stderr)
    return 0 if result["ok"] else 1


def simulate(args, nats, daemons, stop, result):
    """The evening through the cluster; (run, 0) or (run or None, 1) after a failure."""
    from pool_pair import PoolPair
    from yoke_client import Rejected, YokeError

    view = LiveView(ansi=True if args.ansi else False if args.plain else None)
    disruptions = Disruptions(args, nats, daemons)
    pools = PoolPair([d.ingest for d in daemons.values()],
                     [d.publish for d in daemons.values()],
                     [d.query for d in daemons.values()], args.pool, args.shadow_pool,
                     args.client_id, timeout_s=10.0, ack_timeout_s=args.ack_timeout_s,
                     retries=200)
    run, status = None, 0
    print(f"demo: streaming the Quillory evening for {args.seconds:.0f} s (Ctrl-C ends it early)",
          flush=True)
    try:
        pools.start()
        run = city_sim.Run(args, pools)
        city_sim.stream(run, view, stop, before_tick=disruptions.before_tick,
                        frame=disruptions.frame)
    except Rejected as error:
        result["problems"].append(f"a batch was refused: {error}")
        status = 1
    except (YokeError, TimeoutError) as error:
        result["problems"].append(f"the cluster did not answer: {error}")
        status = 1
    finally:
        pools.close()
    if run is None:
        return None, 1
    final = disruptions.frame(run)
    view.finish(final)
    for wall, text in disruptions.events:
        print(f"  {wall:6.2f} s  {text}")
    for d in daemons.values():  # the daemons' own word on each takeover
        for line in d.log_lines("pool_taken"):
            if "reason=takeover" in line:
                print(f"  {d.name}'s log: {line.split(' ', 3)[-1]}")
    for pool, wait in sorted(disruptions.waits_after_nats_kill.items()):
        print(f"  {pool}: the longest wait for an acknowledgement after the NATS kill: "
              f"{wait:.2f} s (a new stream leader is elected meanwhile)")
    result["evening"] = final
    result["events"] = disruptions.events
    result["takeovers"] = disruptions.moves
    result["longest_ack_wait_after_nats_kill_s"] = disruptions.waits_after_nats_kill
    return run, status


def check(args, nats, daemons, pools, run, result):
    """The daemons' final answers against the simulator's and against a replay of each pool's
    log from the cluster (nothing is sent any more: the log alone speaks); then the daemons are
    stopped with SIGTERM (exit 0 expected)."""
    problems = result["problems"]
    said = final_state(daemons, pools)
    result["daemons_said"] = {p: {k: v for k, v in s.items() if k != "matching"}
                              for p, s in said.items()}
    for track in run.pools.tracks:
        mine = said[track.name]
        if (mine["seq"], mine["weight"], mine["pairs"]) != (track.seq, track.weight, track.pairs):
            problems.append(f"{track.name}: the simulator saw seq {track.seq} weight "
                            f"{track.weight} pairs {track.pairs}, {mine['served_by']} says {mine}")
        if track.seq != run.evening.tick:
            problems.append(f"{track.name}: seq {track.seq} after {run.evening.tick} batches "
                            "(each batch must be applied exactly once)")
        if track.hold_violations:
            problems.append(f"{track.name}: {track.hold_violations} held pairs broken")
    for k in range(nats.size):
        if nats.pid(k) is None:
            # With a node down, creating a reader's consumer times out now and then on
            # nats-server 2.9 (the replay below retries); the node comes back and catches up.
            started = time.monotonic()
            nats.restart(k)
            last = wait_caught_up(nats, k)
            print(f"demo: NATS {nats.server_name(k)} restarted; its copy of the stream caught "
                  f"up to sequence {last} in {time.monotonic() - started:.1f} s")
            result["nats_restarted"] = {"node": nats.server_name(k), "last_seq": last,
                                        "seconds": time.monotonic() - started}
    urls = nats.client_urls()
    leader = nats.stream_leader(STREAM, limit=30.0)
    wait_meta_leader(nats)
    print(f"demo: replaying each pool's log from the cluster ({', '.join(urls)}; stream leader "
          f"{nats.server_name(leader)}), every commit's certificate checked:")
    result["replays"] = {}
    for pool in pools:
        path = os.path.join(args.dir, f"replay-{pool}.txt")
        for attempt in range(1, REPLAY_ATTEMPTS + 1):
            replay = replay_from_cluster(args.yoke, urls, pool, path)
            if "Timeout" not in replay.get("error", "") or attempt == REPLAY_ATTEMPTS:
                break
            # A read can time out for a while after an election, as the new leader settles.
            print(f"  (attempt {attempt} timed out: {replay['error'][-160:]}; again in 2 s)")
            time.sleep(2.0)
        print(f"  {' '.join(replay['command'])}")
        result["replays"][pool] = {k: v for k, v in replay.items() if k != "matching"}
        if "error" in replay:
            problems.append(f"the replay of {pool} failed: {replay['error']}")
            continue
        mine = said[pool]
        equal = all(replay[k] == mine[k] for k in ("seq", "weight", "pairs", "matching"))
        result["replays"][pool]["equal"] = equal
        if equal:
            print(f"  {pool}: {replay['commits']} commits, each certificate held; the last one, "
                  f"seq {replay['seq']} weight {replay['weight']} pairs {replay['pairs']}, and "
                  f"the matching pair for pair are what {mine['served_by']} answered")
        else:
            problems.append(f"{pool}: the replay ends at seq {replay['seq']} weight "
                            f"{replay['weight']} pairs {replay['pairs']} (matching equal: "
                            f"{replay['matching'] == mine['matching']}); {mine['served_by']} "
                            f"said seq {mine['seq']} weight {mine['weight']} pairs "
                            f"{mine['pairs']}")
    for d in daemons.values():
        code = d.terminate()
        if code is not None:
            result.setdefault("exit_codes", {})[d.name] = code
            if code != 0:
                problems.append(f"yoked {d.name} exited {code} after SIGTERM")


if __name__ == "__main__":
    sys.exit(main())
