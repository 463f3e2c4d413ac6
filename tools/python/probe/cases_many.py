"""Probe cases with many clients at once and daemons coming and going: clients interleaving on
one pool (checked against `yoke solve` of the final graph), SIGTERM with many clients in flight,
a pool retired while `yoke watch --catch-up` is catching up, a start waiting for the journal's
lock, and (slow) queries and other pools' batches during a long repair."""

import json
import random
import signal
import subprocess
import threading
import time

from harness import (Client, Code, Daemon, Subscriber, V1, accepted, add, apply_diff, outcome,
                     qoutcome, rejected_code, set_)
from outside import run, scratch_file, spec
from yoke.v1 import ingest_pb2

P = "docs/protocol.md"
R = "README.md"
X = "daemon/yoked.example.toml"


def batch_bytes(pool, events, cid, number, after=0):
    req = ingest_pb2.IngestRequest(version=V1)
    b = req.batch
    b.pool, b.client_id, b.client_batch, b.after_batch = pool, cid, number, after
    b.events.extend(events)
    return req.SerializeToString()


def pipeline(c, pool, cid, batches, in_flight, chain=True, quiet_s=3.0):
    """Sends batches [(number, events)] with at most in_flight unanswered (after_batch chained
    when `chain`); returns {number: reply} for the replies that came (and the unmatched ones
    under None, as a list)."""
    replies, unmatched, todo, out = {}, [], list(batches), 0
    prev = 0
    while todo or out:
        while todo and out < in_flight:
            number, events = todo.pop(0)
            c.send_raw(batch_bytes(pool, events, cid, number, prev if chain else 0))
            prev = number
            out += 1
        r = c.recv_ack(quiet_s)
        if r is None:
            break
        out -= 1
        if r.ack.client_id == cid:
            replies[r.ack.client_batch] = r
        else:
            unmatched.append(r)
    replies[None] = unmatched
    return replies


def interleaving(rec, yoke, d):
    pool, clients, per = "crowd", 12, 40
    sub = Subscriber(d, pool)
    time.sleep(0.3)
    sent, results = {}, {}

    def one(k):
        rnd = random.Random(k)
        batches = []
        for b in range(1, per + 1):
            evs = []
            for _ in range(3):
                u = rnd.randrange(80)
                v = (u + 1 + rnd.randrange(79)) % 80
                evs.append(set_(u, v, rnd.randrange(1, 1000)))
            batches.append((b * 10 + k, evs))  # numbers rise with gaps, as the rule allows
        sent[k] = batches
        with Client(d) as c:
            results[k] = pipeline(c, pool, f"crowd-{k}", batches, in_flight=4)

    threads = [threading.Thread(target=one, args=(k,)) for k in range(clients)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    seqs, per_client_rising, refused = [], True, []
    for k in range(clients):
        got = [results[k].get(n) for n, _ in sent[k]]
        s = [r.ack.accepted.seq if accepted(r) else None for r in got]
        refused += [outcome(r) for r in got if not accepted(r)]
        seqs += [x for x in s if x is not None]
        if any(a is None or b is None or a >= b for a, b in zip(s, s[1:])):
            per_client_rising = False
    n = clients * per
    rec.case(f"{clients} clients x {per} chained batches (4 in flight each) on one pool",
             spec(P, "Match replies to requests by `(client_id, client_batch)`"),
             f"all {n} accepted; the seqs are 1..{n}, each once; each client's seqs rise",
             f"{len(seqs)} accepted, refused {refused[:2]}, seqs 1..n each once "
             f"{sorted(seqs) == list(range(1, n + 1))}, rising per client {per_client_rising}",
             len(seqs) == n and sorted(seqs) == list(range(1, n + 1)) and per_client_rising)

    diffs = [pub.diff for _, pub, _ in sub.diffs(1.0)]
    sub.close()
    chain_ok = all(a.seq == b.prev_seq for a, b in zip(diffs, diffs[1:])) and bool(diffs) and \
        diffs[0].prev_seq == 0 and diffs[-1].seq == n
    held = set()
    for df in diffs:
        apply_diff(held, df)
    with Client(d) as c:
        m = c.matching(pool).matching
        s = c.summary(pool).summary
    want = {(p.a, p.b) for p in m.matching}
    rec.case("the interleaved pool's diffs: one chain 0..n, and applied they give the Matching",
             spec("proto/yoke/v1/publish.proto", "The sequence number of the state the diff "
                  "applies to"), f"prev_seq chained from 0 to {n}; the pairs equal the query's",
             f"{len(diffs)} diffs, chained {chain_ok}, last seq "
             f"{diffs[-1].seq if diffs else None}, equal {held == want}",
             chain_ok and held == want)
    # the final graph, by seq order: the last SET of an edge wins
    by_seq = {}
    for k in range(clients):
        for number, evs in sent[k]:
            r = results[k].get(number)
            if accepted(r):
                by_seq[r.ack.accepted.seq] = evs
    edges = {}
    for q in sorted(by_seq):
        for e in by_seq[q]:
            edges[(min(e.u, e.v), max(e.u, e.v))] = e.w
    if yoke:
        path = scratch_file("".join(f"{a} {b} {w}\n" for (a, b), w in sorted(edges.items())))
        out = run([yoke, "solve", path])
        solved = json.loads(out.out) if out.code == 0 else {}
        rec.case("the interleaved pool's weight equals `yoke solve` of its final graph",
                 spec("docs/contracts.md", "In `max-weight` mode the weight of the optimum is "
                      "unique"), f"summary weight = solve's, {len(edges)} edges",
                 f"summary weight {s.weight} edges {s.edges}; solve {solved.get('weight')} "
                 f"({out.short(60) if out.code else 'exit 0'})",
                 s.weight == solved.get("weight") and s.edges == len(edges))


def sigterm_many(rec, yoked):
    d = Daemon(yoked, "", tag="termmany")
    d.start()
    clients, per = 16, 1500
    results, sent = {}, {}
    barrier = threading.Barrier(clients + 1)

    def one(k):
        batches = [(b, [add(k * 100000 + b)]) for b in range(1, per + 1)]
        sent[k] = batches
        with Client(d) as c:
            barrier.wait()
            results[k] = pipeline(c, "tm", f"tm-{k}", batches, in_flight=16, quiet_s=2.0)

    threads = [threading.Thread(target=one, args=(k,)) for k in range(clients)]
    for t in threads:
        t.start()
    barrier.wait()
    time.sleep(0.15)
    d.signal(signal.SIGTERM)
    for t in threads:
        t.join()
    code = d.wait_exit(30)
    acc = {k: [n for n, r in results[k].items() if n is not None and accepted(r)]
           for k in range(clients)}
    kinds = {}
    for k in range(clients):
        for n, r in results[k].items():
            for x in (r if n is None else [r]):
                label = "accepted" if accepted(x) else code_of(x)
                named = bool(x.ack.client_id)
                kinds[(label, named)] = kinds.get((label, named), 0) + 1
    other = {k: v for k, v in kinds.items() if k[0] not in ("accepted", "UNAVAILABLE")}
    prefix = all(sorted(a) == list(range(1, len(a) + 1)) for a in acc.values())
    rec.case(f"SIGTERM with {clients} clients, 16 chained batches in flight each",
             spec(R, "SIGTERM or SIGINT: the daemon finishes the window, writes a snapshot and "
                  "exits 0") + "; " + spec(P, "every message still queued on the ingest socket is"
                                           " answered `UNAVAILABLE` without being read"),
             "exit 0; replies only accepted or UNAVAILABLE; each client's accepted batches a "
             "prefix", f"exit {code}; replies by (kind, names a batch) {kinds}; prefixes {prefix}",
             code == 0 and not other and prefix)
    total_acc = sum(len(a) for a in acc.values())
    d.start()
    try:
        after = {}

        def resend(k):
            todo = [(n, ev) for n, ev in sent[k] if n not in acc[k]]
            with Client(d) as c:
                got = pipeline(c, "tm", f"tm-{k}", todo, in_flight=16) if todo else {None: []}
            after[k] = got  # the new chain's head names no predecessor (after_batch 0)

        threads = [threading.Thread(target=resend, args=(k,)) for k in range(clients)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        counts = {}
        for k in range(clients):
            for n, r in after[k].items():
                if n is None:
                    continue
                label = "accepted" if accepted(r) and not r.ack.accepted.duplicate else (
                    "duplicate" if accepted(r) else code_of(r))
                counts[label] = counts.get(label, 0) + 1
        with Client(d) as c:
            s = c.summary("tm")
        got_vertices = s.summary.vertices if s.WhichOneof("kind") == "summary" else None
        rec.case("after the restart, each client resends from its first unacknowledged batch",
                 spec(P, "Resend `UNAVAILABLE` batches unchanged (same client id and batch "
                      "number) once the daemon is back"),
                 f"every resend accepted (OUT_OF_ORDER only if a chain's head named a batch the "
                 f"daemon lost); {clients * per} vertices in the end",
                 f"{total_acc} accepted before; resends {counts}; vertices {got_vertices}",
                 got_vertices == clients * per and set(counts) <= {"accepted"})
    finally:
        d.stop()
        d.remove_files()


def code_of(r):
    c = rejected_code(r)
    return Code.Code.Name(c) if c is not None else "no outcome"


def retire_during_catch_up(rec, yoke, d):
    pool = "rw"
    done = threading.Event()
    stats = {}

    def produce():
        with Client(d) as c:
            pending = []
            for b in range(1, 241):
                if b == 121:
                    for x in pending:
                        c.wait_ack("RW", x)
                    pending = []
                    stats["retired"] = outcome(c.retire(pool, client_id="RW-r", client_batch=1))
                c.send_raw(batch_bytes(pool, [set_(b % 37, (b % 37) + 1 + b % 5, b)], "RW", b))
                pending.append(b)
                if len(pending) >= 4:
                    c.wait_ack("RW", pending.pop(0))
                time.sleep(0.002)
            for x in pending:
                c.wait_ack("RW", x)
        done.set()

    with Client(d) as c:
        c.batch(pool, [set_(0, 1, 1)], client_id="RW0", client_batch=1)
    t = threading.Thread(target=produce)
    t.start()
    time.sleep(0.15)
    w = subprocess.Popen([yoke, "watch", "--pool", pool, "--catch-up", "--publish", d.publish,
                          "--query", d.query, "--timeout-ms", "800"], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True)
    t.join()
    out, err = w.communicate(timeout=30)
    state, seq, problems = set(), None, []
    for ln in out.splitlines():
        o = json.loads(ln)
        if o.get("catch_up"):
            state = {(a, b) for a, b, _ in o["matching"]}
            seq = o["seq"]
            continue
        if seq is None or o["prev_seq"] != seq:
            problems.append((seq, o.get("prev_seq"), o.get("seq")))
        for a, b, _ in o["removed"]:
            state.discard((a, b))
        for a, b, _ in o["added"]:
            state.add((a, b))
        seq = 0 if o.get("retired") else o["seq"]
    with Client(d) as c:
        m = c.matching(pool).matching
    want = {(p.a, p.b) for p in m.matching}
    notes = [ln for ln in err.splitlines() if ln.startswith("note:")]
    rec.case("yoke watch --catch-up started while a pool streams, is retired, and is made again",
             helps_watch() + "; " + spec(P, "A `retired` diff, applied, leaves the empty matching "
                                          "at s = 0"),
             "exit 4 after the silence; each printed diff follows the line before; the state "
             "printed ends equal to the query's Matching",
             f"exit {w.returncode}, {len(out.splitlines())} lines, {len(notes)} notes, breaks "
             f"{problems[:3]}, end seq {seq} vs {m.seq}, equal {state == want}; retire "
             f"{stats.get('retired', '')[-40:]}",
             w.returncode == 4 and not problems and seq == m.seq and state == want)


def helps_watch():
    return ('yoke watch --help: "a missed diff is noted on stderr (note: ...) and the matching '
            'fetched again"')


def lock_wait(rec, yoked):
    a = Daemon(yoked, "", tag="locka")
    a.start()
    with Client(a) as c:
        c.batch("lk", [set_(1, 2, 3)], client_id="L", client_batch=1)
    b = Daemon(yoked, "[journal]\nlock_wait_ms = 6000\n", data_dir=a.data_dir, tag="lockb")
    c0 = Daemon(yoked, "[journal]\nlock_wait_ms = 0\n", data_dir=a.data_dir, tag="lockc")
    try:
        b.start(wait=False)
        time.sleep(0.5)
        t0 = time.time()
        c0.start(wait=False)
        code_c = c0.wait_exit(5)
        c_took = time.time() - t0
        rec.case("a start with lock_wait_ms = 0 while another yoked holds the data directory",
                 spec(X, "then it exits 1 (0 .. 3600000)"), "exit 1 at once",
                 f"exit {code_c} after {c_took:.2f} s", code_c == 1 and c_took < 3)
        still = b.proc.poll()
        a.signal(signal.SIGTERM)
        a.wait_exit(20)
        t1 = time.time()
        try:
            b.wait_healthy(8)
            served = time.time() - t1
        except RuntimeError as e:
            served = repr(e)
        with Client(b) as c:
            s = c.summary("lk")
        rec.case("a second yoked waiting for the lock (lock_wait_ms 6000) while the first "
                 "stops on SIGTERM", spec(R, "A start waits up to `[journal] lock_wait_ms` (10 s) "
                                          "for a daemon on the same data directory"),
                 "waiting after 0.5 s; serves once the first has stopped, with its pool at seq 1",
                 f"waiting {still is None}; serves after {served}; {qoutcome(s)[:100]}",
                 still is None and isinstance(served, float) and
                 s.WhichOneof("kind") == "summary" and s.summary.seq == 1)
    finally:
        for x in (c0, b, a):
            x.stop()
        a.remove_files()  # the three share the directory; their files sit beside it


# The other pools' client of long_repair, in a process of its own so that the probe's building
# and sending of the big batches (which hold Python's lock for long) cannot delay it. Prints one
# JSON object: the latencies of its acks and queries, and the answers about the big pool.
SIDE_CLIENT = r"""
import json, select, sys, threading, time
from harness import Client, Daemon, accepted, add
d = Daemon.__new__(Daemon)
d.ports = [int(p) for p in sys.argv[1].split(",")]
out = {"ack": [], "query": [], "big": [], "answers": {}}
stop = threading.Event()


def ask_big():  # a query of the big pool waits for its repair: on a socket of its own
    with Client(d) as c:
        while not stop.is_set():
            t = time.time()
            q = c.summary("big")
            out["big"].append(time.time() - t)
            kind = q.WhichOneof("kind") if q else None
            key = f"{kind} {q.summary.seq if kind == 'summary' else q.error.code if kind else ''}"
            out["answers"][key] = out["answers"].get(key, 0) + 1
            time.sleep(0.005)


asker = threading.Thread(target=ask_big)
asker.start()
with Client(d) as c:
    b = 0
    while not select.select([sys.stdin], [], [], 0)[0]:
        b += 1
        t = time.time()
        r = c.batch("side", [add(b)], client_id="S", client_batch=b, timeout=10)
        out["ack"].append([t, time.time() - t, accepted(r)])
        t = time.time()
        c.summary("side")
        out["query"].append([t, time.time() - t])
        time.sleep(0.005)
stop.set()
asker.join()
print(json.dumps(out))
"""


def long_repair(rec, yoked):
    """Slow: a 10^5-vertex base batch of 8 x 10^5 edges in a max-cardinality pool (solved in
    about a second), then one that reweights every edge, while another client (a process of
    its own) sends small batches to another pool and queries both."""
    import os
    import sys
    d = Daemon(yoked, '[limits]\nmax_events_per_batch = 1000000\nmax_message_bytes = 33554432\n'
               '[journal]\nmax_record_bytes = 67108864\n[pools.big]\nmode = "max-cardinality"\n',
               tag="long")
    d.start()
    side = None
    try:
        rnd = random.Random(5)
        n, degree = 100000, 8
        edges = {}
        for i in range(n):
            for _ in range(degree):
                j = (i + 1 + rnd.randrange(2000)) % n
                edges[(min(i, j), max(i, j))] = rnd.randrange(1, 10**6)
        base = batch_bytes("big", [set_(u, v, w) for (u, v), w in edges.items()], "B", 1)
        reweigh = batch_bytes("big", [set_(u, v, rnd.randrange(1, 10**6)) for u, v in edges],
                              "B", 2)
        with Client(d) as c:
            c.batch("side", [add(0)], client_id="S0", client_batch=1)
            env = dict(os.environ, PYTHONPATH=os.pathsep.join(sys.path))
            side = subprocess.Popen([sys.executable, "-c", SIDE_CLIENT, ",".join(
                map(str, d.ports))], stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True,
                env=env)
            time.sleep(0.5)
            phases, repairs, replies = [], [], []  # (sent, acknowledged, repaired) times
            for number, data in ((1, base), (2, reweigh)):
                t0 = time.time()
                c.send_raw(data)
                replies.append(c.wait_ack("B", number, timeout=120))
                t1 = time.time()
                # A query of the pool waits for its repair (protocol.md): its answer ends it.
                repairs.append(c.stats("big").stats.last_timings.repair_us / 1e6)
                phases.append((t0, t1, time.time()))
            time.sleep(0.3)
            side.stdin.write("stop\n")
            side.stdin.flush()
            out, _ = side.communicate(timeout=30)
        got = json.loads(out)

        def worst(ops, start, end):
            return max([op[1] for op in ops if start <= op[0] <= end] or [0.0])

        repairing = [(worst(got["ack"], t1, t2), worst(got["query"], t1, t2))
                     for _, t1, t2 in phases]
        intake = [(worst(got["ack"], t0, t1), worst(got["query"], t0, t1))
                  for t0, t1, _ in phases]
        worst_ack = max(a for a, _ in repairing)
        worst_query = max(q for _, q in repairing)
        refused = sum(1 for _, _, ok in got["ack"] if not ok)
        rec.case("a 10^5-vertex base batch and a full reweighing of a max-cardinality pool, "
                 "beside another pool's batches and queries (another process)",
                 spec(X, "so one pool's long repair delays neither another pool's "
                      "acknowledgements nor its queries"),
                 "while the big pool repairs (from its Ack to the end of its repair), the other "
                 "pool's acks and queries stay far below the repair (worst < 1/4 of it)",
                 f"repairs {repairs[0]:.2f} s and {repairs[1]:.2f} s "
                 f"({outcome(replies[0])[-25:]}, {outcome(replies[1])[-25:]}); the other pool "
                 f"meanwhile: worst ack {worst_ack * 1000:.1f} ms, worst query "
                 f"{worst_query * 1000:.1f} ms ({len(got['ack'])} batches, {refused} refused)",
                 all(map(accepted, replies)) and refused == 0 and
                 all(max(a, q) < r / 4 for (a, q), r in zip(repairing, repairs)))
        rec.case("the same, while the loop takes the big batches in (from sending to the Ack)",
                 spec(P, "for a batch that waits behind its pool's work on a repair thread (a new "
                      "pool's big first batch, or a big later batch of a pool with nothing in a "
                      "window, decoded and checked there"),
                 "both big batches are read off the loop: the other pool's worst ack and query "
                 "meanwhile stay far below the big batch's own time to its Ack (< 1/4 of it)",
                 "; ".join(f"batch {i + 1}: {t1 - t0:.2f} s to its Ack, worst ack "
                           f"{a * 1000:.0f} ms, worst query {q * 1000:.0f} ms"
                           for i, ((t0, t1, _), (a, q)) in enumerate(zip(phases, intake))),
                 all(max(a, q) < (t1 - t0) / 4 for (t0, t1, _), (a, q) in zip(phases, intake)))
        unknown = f"error {Code.UNKNOWN_POOL}"
        odd = {k: v for k, v in got["answers"].items()
               if k not in (unknown, "summary 0", "summary 1", "summary 2")}
        rec.case("queries of the big pool during its own long repairs",
                 spec(P, "A query of a pool whose repair is running** waits for that repair to "
                      "end") + "; " + spec(P, "queries see it empty at seq 0"),
                 "UNKNOWN_POOL before the first batch is in a window, then summaries at seq 0 "
                 "(in the window), 1 or 2 only", f"{got['answers']}; worst wait "
                 f"{max(got['big']) * 1000:.0f} ms", not odd)
    finally:
        if side is not None and side.poll() is None:
            side.kill()
            side.wait()
        d.stop()
        d.remove_files()


def all_cases(rec, yoke, d, yoked, slow=False):
    print("== many.interleaving", flush=True)
    interleaving(rec, yoke, d)
    if yoke:
        print("== many.retire_during_catch_up", flush=True)
        retire_during_catch_up(rec, yoke, d)
    print("== many.sigterm_many", flush=True)
    sigterm_many(rec, yoked)
    print("== many.lock_wait", flush=True)
    lock_wait(rec, yoked)
    if slow:
        print("== many.long_repair (slow)", flush=True)
        long_repair(rec, yoked)
