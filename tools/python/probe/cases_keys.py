"""Probe cases about what more of yoked's keys and signals do, seen from outside: snapshots by
timer, by events and their count kept, small journal segments replayed, SIGINT, ipc endpoints
for every client command, Health's pool count, and totals past 2^53 kept exact in JSON."""

import json
import os
import signal
import subprocess
import tempfile
import time

from harness import Client, Daemon, accepted, add, outcome, set_
from outside import run, spec
from yoke.v1 import query_pb2

X = "daemon/yoked.example.toml"
R = "README.md"


def snapshot(c, pool):
    return c.query(query_pb2.QueryRequest(snapshot=query_pb2.SnapshotRequest()), pool=pool,
                   timeout=20)


def snapshot_seq_reaching(c, pool, want, seconds):
    """The pool's Stats.last_snapshot_seq once it is `want`, or when `seconds` have passed."""
    deadline, got = time.time() + seconds, c.stats(pool).stats.last_snapshot_seq
    while time.time() < deadline and got < want:
        time.sleep(0.1)
        got = c.stats(pool).stats.last_snapshot_seq
    return got


def snapshots(rec, yoked):
    d = Daemon(yoked, "[snapshots]\nkeep = 1\nafter_events = 10\ninterval_seconds = 604800\n",
               tag="snapkeep")
    d.start()
    try:
        with Client(d) as c:
            paths = []
            for b in range(1, 4):
                c.batch("k", [add(b)], client_id="K", client_batch=b)
                r = snapshot(c, "k")
                paths.append(r.snapshot.path if r.WhichOneof("kind") == "snapshot" else None)
            left = [os.path.exists(p) for p in paths if p]
            rec.case("snapshots.keep = 1: three requested snapshots", spec(X, "keep = 2 # "
                     "snapshots kept"), "only the last file is still there",
                     f"paths exist {left}", left == [False, False, True])
            seq0 = c.stats("k").stats.last_snapshot_seq
            c.batch("k", [add(b) for b in range(10, 16)], client_id="K", client_batch=4)
            c.batch("k", [add(b) for b in range(20, 26)], client_id="K", client_batch=5)
            got = snapshot_seq_reaching(c, "k", 5, 5)
            rec.case("snapshots.after_events = 10: 12 events journalled after the last snapshot",
                     spec(X, "also once this many events were journalled since the last"),
                     "a snapshot of seq 5 without a request (Stats.last_snapshot_seq)",
                     f"last_snapshot_seq {seq0} -> {got}", got == 5)
    finally:
        d.stop()
        d.remove_files()


def snapshot_timer(rec, yoked):
    """Slow (a timer of a second)."""
    d = Daemon(yoked, "[snapshots]\ninterval_seconds = 1\nafter_events = 0\n", tag="snaptimer")
    d.start()
    try:
        with Client(d) as c:
            c.batch("t", [add(1)], client_id="T", client_batch=1)
            got = snapshot_seq_reaching(c, "t", 1, 4)
            rec.case("snapshots.interval_seconds = 1", spec(X, "Snapshots of every pool's full "
                     "state, taken on a timer"), "a snapshot of seq 1 within a few seconds",
                     f"last_snapshot_seq {got}", got == 1)
    finally:
        d.stop()
        d.remove_files()


def segments(rec, yoked, yoke):
    d = Daemon(yoked, "[journal]\nsegment_bytes = 1048576\n", tag="seg")
    d.start()
    try:
        with Client(d) as c:
            for b in range(1, 31):  # ~3 MB of journal
                evs = [set_(b * 5000 + i, b * 5000 + i + 1, i % 97 + 1) for i in range(0, 4000, 2)]
                c.batch("seg", evs, client_id="G", client_batch=b, timeout=20)
            s = c.summary("seg").summary
        d.stop()
        files = [f for _, _, fs in os.walk(d.data_dir) for f in fs]
        out = run([yoke, "replay", d.data_dir, "--pool", "seg", "--verify"], timeout=120)
        last = [ln for ln in out.out.splitlines() if ln.startswith("commit ")][-1:]
        want = f"weight {s.weight} pairs {s.pairs}"
        rec.case("journal.segment_bytes = 1 MiB, ~3 MB journalled: yoke replay DATA_DIR --verify",
                 spec(X, "a new segment file starts past this size") + "; " +
                 spec("docs/contracts.md", "The same command replays a daemon's journal"),
                 f"exit 0, the last commit {want} seq {s.seq}",
                 f"{len(files)} files in the data directory; exit {out.code}, last {last}",
                 out.code == 0 and bool(last) and want in last[0] and
                 last[0].endswith(f"seq {s.seq}"))
    finally:
        d.stop()
        d.remove_files()


def sigint(rec, yoked):
    d = Daemon(yoked, "", tag="int")
    d.start()
    try:
        with Client(d) as c:
            c.batch("i", [add(1)], client_id="I", client_batch=1)
        d.signal(signal.SIGINT)
        code = d.wait_exit(20)
        d.start()
        with Client(d) as c:
            st = c.stats("i")
        got = st.stats.last_snapshot_seq if st.WhichOneof("kind") == "stats" else None
        rec.case("SIGINT", spec(R, "SIGTERM or SIGINT: the daemon finishes the window, writes a "
                 "snapshot and exits 0"), "exit 0; after the restart last_snapshot_seq 1",
                 f"exit {code}; last_snapshot_seq {got}", code == 0 and got == 1)
    finally:
        d.stop()
        d.remove_files()


def ipc(rec, yoked, yoke):
    where = tempfile.mkdtemp(prefix="yoke-probe3-ipc-")
    ends = {k: f"ipc://{where}/{k}" for k in ("ingest", "publish", "query")}
    d = Daemon(yoked, "", tag="ipc")
    d.start(wait=False)
    d.proc.kill()
    d.proc.wait()
    argv = [yoked, "--data-dir", d.data_dir, "--config", d.config_path, "--ingest",
            ends["ingest"], "--publish", ends["publish"], "--query", ends["query"],
            "--metrics", f"127.0.0.1:{d.ports[3]}"]
    d.proc = subprocess.Popen(argv, stdout=open(d.log_path, "a"), stderr=subprocess.STDOUT)
    try:
        deadline, h = time.time() + 10, None
        while time.time() < deadline and (h is None or h.code != 0):
            h = run([yoke, "query", "health", "--query", ends["query"], "--timeout-ms", "300"])
        w = subprocess.Popen([yoke, "watch", "--pool", "ipc", "--publish", ends["publish"],
                              "--count", "1", "--timeout-ms", "8000"], stdout=subprocess.PIPE,
                             stderr=subprocess.PIPE, text=True)
        time.sleep(0.6)
        s = run([yoke, "send", "-", "--pool", "ipc", "--ingest", ends["ingest"]],
                stdin="set 1 2 7\ncommit\n")
        try:
            wout, _ = w.communicate(timeout=15)
        except subprocess.TimeoutExpired:
            w.kill()
            wout, _ = w.communicate()
        q = run([yoke, "query", "summary", "--pool", "ipc", "--query", ends["query"]])
        r = run([yoke, "retire", "ipc", "--ingest", ends["ingest"]])
        ok = h.code == 0 and s.code == 0 and w.returncode == 0 and q.code == 0 and r.code == 0 \
            and json.loads(q.out).get("weight") == 7
        rec.case("every client command over ipc:// endpoints",
                 spec("docs/protocol.md", "Endpoints are `tcp://HOST:PORT` or `ipc://PATH`"),
                 "health, send, watch, query and retire all exit 0; summary weight 7",
                 f"health {h.code}, send {s.code}, watch {w.returncode} ({wout.strip()[:60]!r}), "
                 f"query {q.short(60)}, retire {r.code}", ok)
    finally:
        d.stop()
        d.remove_files()
        subprocess.run(["rm", "-rf", where])


def health_and_exact(rec, c):
    """On the main daemon (declared pool `exact3`: max_vertices 6, so 2^52 per pair)."""
    before = c.query(query_pb2.QueryRequest(health=query_pb2.HealthRequest())).health.pools
    c.batch("hp-1", [add(1)], client_id="H", client_batch=1)
    c.batch("hp-2", [add(1)], client_id="H", client_batch=1)
    mid = c.query(query_pb2.QueryRequest(health=query_pb2.HealthRequest())).health.pools
    c.retire("hp-1", client_id="H", client_batch=2)
    after = c.query(query_pb2.QueryRequest(health=query_pb2.HealthRequest())).health.pools
    rec.case("Health.pools counts pools made and retired", spec(
        "proto/yoke/v1/query.proto", "// Pools held."), f"{before} -> {before + 2} -> "
        f"{before + 1}", f"{before} -> {mid} -> {after}",
        (mid, after) == (before + 2, before + 1))
    big = 2**52
    r = c.batch("exact3", [set_(1, 2, big), set_(3, 4, big), set_(5, 6, 1)], client_id="E",
                client_batch=1)
    s = c.summary("exact3")
    m = c.matching("exact3")
    want = 2 * big + 1  # 2^53 + 1: not a float64
    rec.case("a pool's weight of 2^53 + 1 (three pairs, each within the bound)",
             spec("docs/protocol.md", "max-weight: min(2^52, 2^61 / P)"),
             f"accepted; Summary and Matching weight {want}",
             f"{outcome(r)}; summary {s.summary.weight}, matching {m.matching.weight}",
             accepted(r) and s.summary.weight == want and m.matching.weight == want)


def exact_in_json(rec, yoke, d):
    want = 2**53 + 1
    q = run([yoke, "query", "summary", "--pool", "exact3", "--query", d.query])
    m = run([yoke, "query", "matching", "--pool", "exact3", "--query", d.query])
    got = [json.loads(x.out).get("weight") if x.code == 0 else x.short(80) for x in (q, m)]
    rec.case("yoke query summary and matching print the weight 2^53 + 1 exactly",
             spec("docs/formats.md", "All numbers are JSON integers that fit in int64") +
             " (said of certificates; JSON readers in float64 lose such a number)",
             f"{want} in both", f"{got}", got == [want, want])


def explain_equals_replay(rec, yoked, yoke):
    """The daemon's explanation of a vertex against a replay of its live journal, in every
    mode and with a churn bonus: one shape, and the same values at the same seq."""
    import random
    d = Daemon(yoked, '[pools.card]\nmode = "max-cardinality"\n[pools.perf]\nmode = "perfect"\n'
               "[pools.bonus]\nchurn_bonus = 7\n", tag="explain")
    d.start()
    try:
        rnd, pools = random.Random(3), ("weight", "card", "perf", "bonus")
        with Client(d) as c:
            for pool in pools:
                for b in range(1, 30):
                    evs = []
                    for _ in range(4):
                        u = rnd.randrange(30)
                        evs.append(set_(u, (u + 1 + rnd.randrange(29)) % 30, rnd.randrange(-5, 40)))
                    c.batch(pool, evs, client_id="X", client_batch=b)
        compared, differ = 0, []
        for pool in pools:
            for v in range(0, 30, 5):
                q = run([yoke, "query", "explain", "--vertex", str(v), "--pool", pool, "--query",
                         d.query, "--alternatives", "50"])
                r = run([yoke, "replay", d.data_dir, "--pool", pool, "--explain", str(v), "--json",
                         "--alternatives", "50"])
                if q.code != 0 or r.code != 0:
                    differ.append((pool, v, q.short(60), r.short(60)))
                    continue
                daemon = json.loads(q.out)
                replayed = [json.loads(ln) for ln in r.out.splitlines() if ln.strip()][-1]
                compared += 1
                same = {k: x for k, x in daemon.items() if k not in ("pool", "seq")} == {
                    k: x for k, x in replayed.items() if k not in ("kind", "pool", "unit", "at")}
                if not same or daemon["seq"] != replayed.get("at"):
                    differ.append((pool, v, daemon, replayed))
        rec.case("yoke query explain equals yoke replay DATA_DIR --explain --json of the live "
                 "journal (four pools: each mode, a churn bonus)",
                 spec("docs/formats.md", "The keys after `at` are the one shape of an "
                      "explanation, also printed by `yoke query explain`") + "; " +
                 spec("docs/contracts.md", "so ties break the same way and the replay equals "
                      "the daemon"), "the same keys and values, at the daemon's seq",
                 f"{compared} compared; differing {str(differ[:1])[:200]}",
                 compared == 24 and not differ)
    finally:
        d.stop()
        d.remove_files()


def all_cases(rec, yoked, yoke):
    for group in (snapshots, sigint):
        print(f"== keys.{group.__name__}", flush=True)
        group(rec, yoked)
    if yoke:
        for group in (ipc, explain_equals_replay):  # segments: in the slow group
            print(f"== keys.{group.__name__}", flush=True)
            group(rec, yoked, yoke)
