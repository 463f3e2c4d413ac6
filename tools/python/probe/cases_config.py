"""Probe cases about yoked's config file: every documented key at and past its bounds, unknown
keys and sections, wrong types (daemon/yoked.example.toml: "read strictly ... stops the daemon
with the file, line and key"; README: a bad config is exit status 2), and what some keys do."""

import json
import os
import socket
import subprocess
import time

from harness import Client, Daemon, accepted, add, outcome, rejected_code, Code, Subscriber
from harness import free_ports
from outside import spec
from yoke.v1 import ingest_pb2

X = "daemon/yoked.example.toml"
R = "README.md"
STRICT = spec(X, "an unknown key, a value of the wrong type or out of range stops the daemon "
              "with the file, line and key")
STATUS2 = spec(R, "(not after status 2, a bad config)")

# (label, config text, the key the error must name, the line it is on)
BAD = [
    ("an unknown top-level key", "bogus = 1\n", "bogus", 1),
    ("an unknown section", "[batchin]\nmax_delay_us = 5\n", "batchin", 1),
    ("an unknown key in [batching]", "[batching]\nmax_delay = 5\n", "max_delay", 2),
    ("a string for an integer", '[batching]\nmax_delay_us = "5"\n', "max_delay_us", 2),
    ("a float for an integer", "[batching]\nmax_events = 10.5\n", "max_events", 2),
    ("batching.max_delay_us = 1000001", "[batching]\nmax_delay_us = 1000001\n", "max_delay_us", 2),
    ("batching.max_delay_us = -1", "[batching]\nmax_delay_us = -1\n", "max_delay_us", 2),
    ("batching.max_events = 0", "[batching]\nmax_events = 0\n", "max_events", 2),
    ("batching.max_events = 10000001", "\n[batching]\nmax_events = 10000001\n", "max_events", 3),
    ("service.repair_threads = 257", "[service]\nrepair_threads = 257\n", "repair_threads", 2),
    ("service.worker_nice = 20", "[service]\nworker_nice = 20\n", "worker_nice", 2),
    ("service.worker_nice = -1", "[service]\nworker_nice = -1\n", "worker_nice", 2),
    ("journal.durability = \"sometimes\"", '[journal]\ndurability = "sometimes"\n', "durability",
     2),
    ("journal.segment_bytes = 1 MiB - 1", "[journal]\nsegment_bytes = 1048575\n",
     "segment_bytes", 2),
    ("journal.segment_bytes = 1 TiB + 1", "[journal]\nsegment_bytes = 1099511627777\n",
     "segment_bytes", 2),
    ("journal.max_record_bytes = 1023", "[journal]\nmax_record_bytes = 1023\n",
     "max_record_bytes", 2),
    ("journal.lock_wait_ms = 3600001", "[journal]\nlock_wait_ms = 3600001\n", "lock_wait_ms", 2),
    ("snapshots.interval_seconds = 0", "[snapshots]\ninterval_seconds = 0\n", "interval_seconds",
     2),
    ("snapshots.interval_seconds = 604801", "[snapshots]\ninterval_seconds = 604801\n",
     "interval_seconds", 2),
    ("snapshots.keep = 0", "[snapshots]\nkeep = 0\n", "keep", 2),
    ("snapshots.keep = 1001", "[snapshots]\nkeep = 1001\n", "keep", 2),
    ("snapshots.after_events = -1", "[snapshots]\nafter_events = -1\n", "after_events", 2),
    ("limits.max_message_bytes = 1023", "[limits]\nmax_message_bytes = 1023\n",
     "max_message_bytes", 2),
    ("limits.max_message_bytes above journal.max_record_bytes",
     "[journal]\nmax_record_bytes = 1048576\n[limits]\nmax_message_bytes = 2097152\n",
     "max_message_bytes", 4),
    ("limits.max_events_per_batch = 0", "[limits]\nmax_events_per_batch = 0\n",
     "max_events_per_batch", 2),
    ("limits.max_events_per_batch = 10000001", "[limits]\nmax_events_per_batch = 10000001\n",
     "max_events_per_batch", 2),
    ("limits.max_pools = 0", "[limits]\nmax_pools = 0\n", "max_pools", 2),
    ("limits.max_pools = 1000001", "[limits]\nmax_pools = 1000001\n", "max_pools", 2),
    ("ledger.batches_per_client = 0", "[ledger]\nbatches_per_client = 0\n",
     "batches_per_client", 2),
    ("ledger.batches_per_client = 4097", "[ledger]\nbatches_per_client = 4097\n",
     "batches_per_client", 2),
    ("ledger.idle_seconds = 10^10 (past 10 years)", "[ledger]\nidle_seconds = 10000000000\n",
     "idle_seconds", 2),
    ("ledger.max_clients_per_pool = 0", "[ledger]\nmax_clients_per_pool = 0\n",
     "max_clients_per_pool", 2),
    ("pool_defaults.mode = \"min-weight\"", '[pool_defaults]\nmode = "min-weight"\n', "mode", 2),
    ("pool_defaults.max_vertices = 0", "[pool_defaults]\nmax_vertices = 0\n", "max_vertices", 2),
    ("pool_defaults.max_vertices = 1 (a pair needs two)", "[pool_defaults]\nmax_vertices = 1\n",
     "max_vertices", 2),
    ("pool_defaults.max_vertices = 2^30", "[pool_defaults]\nmax_vertices = 1073741824\n",
     "max_vertices", 2),
    ("a declared pool's max_vertices = 1", "[pools.one]\nmax_vertices = 1\n", "max_vertices", 2),
    ("pool_defaults.max_edges = 0", "[pool_defaults]\nmax_edges = 0\n", "max_edges", 2),
    ("pool_defaults.max_edges = 2^30", "[pool_defaults]\nmax_edges = 1073741824\n",
     "max_edges", 2),
    ("a declared pool whose mode cannot keep the defaults' weights exact",
     "[pool_defaults]\nmax_abs_weight = 1099511627776\n[pools.wide]\nmode = \"max-cardinality\"\n",
     "mode", 4),
    ("pool_defaults.max_abs_weight = 2^52 + 1",
     "[pool_defaults]\nmax_vertices = 2\nmax_abs_weight = 4503599627370497\n", "max_abs_weight",
     3),
    ("pool_defaults.max_abs_weight = 2^40 + 1 with the default max_vertices (bound 2^40)",
     "[pool_defaults]\nmax_abs_weight = 1099511627777\n", "max_abs_weight", 2),
    ("pool_defaults max_abs_weight + churn_bonus past the bound (2^40 + 1)",
     "[pool_defaults]\nmax_abs_weight = 1099511627776\nchurn_bonus = 1\n", "churn_bonus", 3),
    ("pool_defaults.churn_bonus = -1", "[pool_defaults]\nchurn_bonus = -1\n", "churn_bonus", 2),
    ("an unknown key in a declared pool", "[pools.harbour]\nmode = \"perfect\"\ncolour = 3\n",
     "colour", 3),
    ("a declared pool whose max_vertices is out of range",
     "[pools.harbour]\nmax_vertices = 0\n", "max_vertices", 2),
    ("logging.level = \"verbose\"", '[logging]\nlevel = "verbose"\n', "level", 2),
    ("logging.format = \"xml\"", '[logging]\nformat = "xml"\n', "format", 2),
    ("cluster.backend = \"raft\"", '[cluster]\nbackend = "raft"\n', "backend", 2),
    ("a key given twice", "[batching]\nmax_events = 5\nmax_events = 6\n", "max_events", 3),
    ("a file that is not TOML", "[batching\nmax_events = 5\n", None, 1),
]

# Configs at the ends of the documented ranges, which must start.
GOOD = [
    ("lower ends", "[batching]\nmax_delay_us = 0\nmax_events = 1\n[service]\nrepair_threads = 1\n"
     "worker_nice = 0\n[journal]\ndurability = \"every-batch\"\nsegment_bytes = 1048576\n"
     "max_record_bytes = 1024\nlock_wait_ms = 0\n[snapshots]\ninterval_seconds = 1\nkeep = 1\n"
     "after_events = 0\n[limits]\nmax_message_bytes = 1024\nmax_events_per_batch = 1\n"
     "max_pools = 1\n[ledger]\nbatches_per_client = 1\nidle_seconds = 0\n"
     "max_clients_per_pool = 1\n[pool_defaults]\nmax_vertices = 2\nmax_edges = 1\n",
     "(0..1000000; 0 = never)"),
    ("upper ends", "[batching]\nmax_delay_us = 1000000\nmax_events = 10000000\n[service]\n"
     "worker_nice = 19\n[journal]\ndurability = \"none\"\nsegment_bytes = 1099511627776\n"
     "max_record_bytes = 1073741824\nlock_wait_ms = 3600000\n[snapshots]\n"
     "interval_seconds = 604800\nkeep = 1000\n[limits]\nmax_message_bytes = 1073741824\n"
     "max_events_per_batch = 10000000\nmax_pools = 1000000\n[ledger]\n"
     "batches_per_client = 4096\nmax_clients_per_pool = 10000000\n[pool_defaults]\n"
     "mode = \"perfect\"\n[logging]\nlevel = \"off\"\n", "(1..10000000)"),
    ("pool_defaults.max_vertices = 2^30 - 1, max_edges = 2^30 - 1",
     "[pool_defaults]\nmax_vertices = 1073741823\nmax_edges = 1073741823\n",
     "max_vertices = 4194304 # alive at once (2 .. 1073741823"),
    ("max_abs_weight = 2^52 with max_vertices = 2",
     "[pool_defaults]\nmax_vertices = 2\nmax_abs_weight = 4503599627370496\n",
     "(0 .. 4503599627370496)"),
    ("max_abs_weight 2^40 - 5 + churn_bonus 5 (exactly the bound)",
     "[pool_defaults]\nmax_abs_weight = 1099511627771\nchurn_bonus = 5\n",
     "max_abs_weight + churn_bonus must stay within it"),
    ("the example file itself", None, "yoked.example.toml: every setting of yoked, each set to "
     "its default"),
]


def start(yoked, text, tag, wait_s=6.0, argv_extra=(), use_flags=True):
    """A daemon on `text`: (daemon, exit status or None when it serves, its log)."""
    d = Daemon(yoked, text, tag=tag)
    argv = d.argv() if use_flags else [yoked, "--data-dir", d.data_dir, "--config",
                                       d.config_path]
    log = open(d.log_path, "a")
    d.proc = subprocess.Popen(argv + list(argv_extra), stdout=log, stderr=log)
    return d


def settle(d, wait_s=8.0, need_health=True):
    """Exit status once it exits, or None once it answers health (or after wait_s)."""
    deadline = time.time() + wait_s
    while time.time() < deadline:
        code = d.proc.poll()
        if code is not None:
            return code
        if need_health:
            try:
                d.wait_healthy(0.3)
                return None
            except RuntimeError:
                pass
        else:
            time.sleep(0.05)
    return d.proc.poll()


def log_of(d):
    try:
        with open(d.log_path) as f:
            return f.read()
    except OSError:
        return ""


def bad_configs(rec, yoked):
    started = [(label, start(yoked, text, "cfg"), key, line) for label, text, key, line in BAD]
    try:
        for label, d, key, line in started:
            code = settle(d, need_health=False)
            log = " ".join(log_of(d).split())
            names = (key is None or key in log) and os.path.basename(d.config_path) in log and \
                str(line) in log
            rec.case(f"config: {label}", STRICT + "; " + STATUS2,
                     f"exit 2, the message names the file, line {line}" +
                     (f" and key {key}" if key else ""),
                     f"exit {code}, {log[:200]!r}", code == 2 and names)
    finally:
        for _, d, _, _ in started:
            d.stop()
            d.remove_files()


def good_configs(rec, yoked):
    for label, text, cite in GOOD:
        if text is None:
            with open(os.path.join(os.path.dirname(__file__), "..", "..", "..", X)) as f:
                text = f.read()
        d = start(yoked, text, "good")
        try:
            code = settle(d)
            rec.case(f"config at its bounds: {label}", spec(X, cite), "serves (answers health)",
                     f"exit {code}, {' '.join(log_of(d).split())[-160:]!r}" if code is not None
                     else "serves", code is None)
            if code is None and label.startswith("max_abs_weight = 2^52"):
                with Client(d) as c:
                    r = c.batch("w", [add(1), add(2)], client_id="cfg", client_batch=1)
                    st = c.stats("w")
                    got = st.stats.config.limits.max_abs_weight if st.WhichOneof("kind") == \
                        "stats" else None
                rec.case("max_vertices 2, max_abs_weight 2^52: the pool's resolved bound",
                         spec(X, "(0 .. 4503599627370496)"), "Stats max_abs_weight 2^52",
                         f"{outcome(r)}; {got}", got == 2**52)
        finally:
            d.stop()
            d.remove_files()


def endpoint_configs(rec, yoked):
    p = free_ports(4)
    same = (f'[endpoints]\ningest = "tcp://127.0.0.1:{p[0]}"\npublish = "tcp://127.0.0.1:{p[0]}"'
            f'\nquery = "tcp://127.0.0.1:{p[2]}"\nmetrics = "127.0.0.1:{p[3]}"\n')
    d = start(yoked, same, "ep", use_flags=False)
    try:
        code = settle(d, need_health=False, wait_s=4)
        rec.case("config: ingest and publish on the same address", spec(X, "No two endpoints may "
                 "bind the same address"), "the daemon does not start (exit 2: a bad config)",
                 f"exit {code}, {' '.join(log_of(d).split())[:200]!r}", code == 2 if code is not
                 None else False)
    finally:
        d.stop()
        d.remove_files()
    p = free_ports(4)
    metrics_on_ingest = (f'[endpoints]\ningest = "tcp://127.0.0.1:{p[0]}"\n'
                         f'publish = "tcp://127.0.0.1:{p[1]}"\nquery = "tcp://127.0.0.1:{p[2]}"\n'
                         f'metrics = "127.0.0.1:{p[0]}"\n')
    d = start(yoked, metrics_on_ingest, "ep2", use_flags=False)
    try:
        code = settle(d, need_health=False, wait_s=4)
        rec.case("config: metrics HOST:PORT equal to the ingest tcp address",
                 spec(X, "No two endpoints may bind the same address"),
                 "the daemon does not start (exit 2: a bad config)",
                 f"exit {code}, {' '.join(log_of(d).split())[:200]!r}", code == 2 if code is not
                 None else False)
    finally:
        d.stop()
        d.remove_files()
    p = free_ports(4)
    star = (f'[endpoints]\ningest = "tcp://*:{p[0]}"\npublish = "tcp://127.0.0.1:{p[1]}"\n'
            f'query = "tcp://127.0.0.1:{p[2]}"\nmetrics = "127.0.0.1:{p[3]}"\n')
    d = start(yoked, star, "star", use_flags=False)
    d.ports = p
    try:
        code = settle(d)
        r = None
        if code is None:
            with Client(d) as c:
                r = c.batch("star", [add(1)], client_id="S", client_batch=1)
        rec.case("config: ingest on tcp://*:PORT, reached on 127.0.0.1", spec(X, 'HOST "*" binds '
                 "every interface"), "serves; a batch sent to 127.0.0.1:PORT accepted",
                 f"exit {code}; {outcome(r)}", code is None and accepted(r))
    finally:
        d.stop()
        d.remove_files()
    # a flag wins over the file: the file names a port that is taken
    blocker = socket.socket()
    blocker.bind(("127.0.0.1", 0))
    blocker.listen(1)
    taken = blocker.getsockname()[1]
    d = start(yoked, f'[endpoints]\ningest = "tcp://127.0.0.1:{taken}"\n', "flag")
    try:
        code = settle(d)
        rec.case("config names a taken ingest port, --ingest names a free one",
                 spec(X, "Flags (--ingest, --publish, --query, --metrics, --log-format) win over "
                      "this file"), "serves on the flag's port", "serves" if code is None else
                 f"exit {code}, {' '.join(log_of(d).split())[:160]!r}", code is None)
    finally:
        blocker.close()
        d.stop()
        d.remove_files()


def behaviour(rec, yoked):
    """What some keys do, seen from a client."""
    d = start(yoked, "[limits]\nmax_events_per_batch = 3\nmax_message_bytes = 1024\n", "lim")
    try:
        settle(d)
        with Client(d) as c:
            r3 = c.batch("p", [add(1), add(2), add(3)], client_id="L", client_batch=1)
            r4 = c.batch("p", [add(4), add(5), add(6), add(7)], client_id="L", client_batch=2)
            rec.case("limits.max_events_per_batch = 3: batches of 3 and of 4 events",
                     spec(X, "max_events_per_batch = 100000  # 1 .. 10000000"),
                     "accepted; TOO_MANY_EVENTS", outcome(r3) + " / " + outcome(r4),
                     accepted(r3) and rejected_code(r4) == Code.TOO_MANY_EVENTS)
            req = ingest_pb2.IngestRequest(version=1)
            req.batch.pool, req.batch.client_id, req.batch.client_batch = "p", "L", 3
            n = 1024
            while len(req.SerializeToString()) != 1024:  # a length's varint may grow by a byte
                n -= 1
                req.batch.client_id = "L" * n
            data = req.SerializeToString()
            c.send_raw(data)
            r_at = c.recv_ack(5)
            req.batch.client_id += "x"
            c.send_raw(req.SerializeToString())
            r_over = c.recv_ack(5)
            rec.case(f"limits.max_message_bytes = 1024: messages of {len(data)} and "
                     f"{len(data) + 1} bytes", spec(X, "max_message_bytes = 4194304    # 1 KiB .."),
                     f"the first read (its client id is {len(req.batch.client_id) - 1} bytes: "
                     "MALFORMED_MESSAGE past 128), the second OVERSIZED_MESSAGE",
                     outcome(r_at) + " / " + outcome(r_over),
                     rejected_code(r_at) == Code.MALFORMED_MESSAGE and
                     rejected_code(r_over) == Code.OVERSIZED_MESSAGE)
    finally:
        d.stop()
        d.remove_files()

    d = start(yoked, "[batching]\nmax_events = 1\n", "onewin")
    try:
        settle(d)
        with Client(d) as c:
            sub = Subscriber(d, "one")
            time.sleep(0.3)
            for b in range(1, 21):
                req = ingest_pb2.IngestRequest(version=1)
                req.batch.pool, req.batch.client_id, req.batch.client_batch = "one", "O", b
                req.batch.events.append(add(b))
                c.send_request(req)
            acks = [c.wait_ack("O", b, 5) for b in range(1, 21)]
            diffs = sub.diffs(1.0, count=20)
            cover = [(p.diff.prev_seq, p.diff.seq) for _, p, _ in diffs]
            sub.close()
            chained = all(a[1] == b[0] for a, b in zip(cover, cover[1:]))
            rec.case("batching.max_events = 1: twenty one-event batches sent at once",
                     spec(X, "the window closes early once it holds this many events") + "; " +
                     spec(X, "then join the next window together: that window may hold more "
                          "than max_events"), "all accepted; diffs chained from 0 to 20 (a diff"
                     " of several seqs only from batches that waited behind a repair)",
                     f"{sum(map(accepted, acks))} accepted; diffs (prev_seq, seq) {cover}",
                     all(map(accepted, acks)) and chained and cover and cover[0][0] == 0 and
                     cover[-1][1] == 20)
    finally:
        d.stop()
        d.remove_files()


def slow_window(rec, yoked):
    """Slow (a window of a second): what batching.max_delay_us does."""
    d = start(yoked, "[batching]\nmax_delay_us = 1000000\nmax_events = 10000000\n", "slowwin")
    try:
        settle(d)
        with Client(d) as c:
            sub = Subscriber(d, "win")
            time.sleep(0.3)
            t0 = time.time()
            req = ingest_pb2.IngestRequest(version=1)
            req.batch.pool, req.batch.client_id, req.batch.client_batch = "win", "W", 1
            req.batch.events.append(add(1))
            c.send_request(req)
            time.sleep(0.2)
            req.batch.client_batch = 2
            req.batch.events[0].u = 2
            c.send_request(req)
            a1, a2 = c.wait_ack("W", 1, 5), c.wait_ack("W", 2, 5)
            waited = time.time() - t0
            diffs = sub.diffs(1.0)
            cover = [(p.diff.prev_seq, p.diff.seq) for _, p, _ in diffs]
            sub.close()
            rec.case("batching.max_delay_us = 1 s: two batches 0.2 s apart",
                     spec(X, "longest a batch waits for others, in microseconds") + "; " +
                     spec("proto/yoke/v1/publish.proto", "one diff may cover several sequence "
                          "numbers"), "both acknowledged about 1 s after the first was sent, "
                     "one diff covering seqs 1..2", f"{outcome(a1)} / {outcome(a2)} after "
                     f"{waited:.2f} s; diffs (prev_seq, seq) {cover}",
                     accepted(a1) and accepted(a2) and 0.8 <= waited <= 2.5 and cover == [(0, 2)])
    finally:
        d.stop()
        d.remove_files()


def logging_configs(rec, yoked):
    d = start(yoked, '[logging]\nformat = "text"\n', "json", argv_extra=["--log-format", "json"])
    try:
        settle(d)
        with Client(d) as c:
            c.batch("lg", [add(1)], client_id="J", client_batch=1)
        d.stop()
        lines = [ln for ln in log_of(d).splitlines() if ln.strip()]
        bad, dupes, order = [], [], []
        for ln in lines:
            try:
                pairs = json.loads(ln, object_pairs_hook=lambda kv: kv)
            except ValueError:
                bad.append(ln)
                continue
            keys = [k for k, _ in pairs]
            if len(keys) != len(set(keys)):
                dupes.append(ln)
            if keys[:4] != ["time", "level", "logger", "event"]:
                order.append(ln)
        rec.case("--log-format json over a file's format = \"text\": every line a JSON object "
                 "with time, level, logger, event first, each key once",
                 spec(R, "A JSON log line's keys are `time`, `level`, `logger`, `event`") + "; " +
                 spec(X, "Flags (--ingest, --publish, --query, --metrics, --log-format) win"),
                 "all lines so", f"{len(lines)} lines; not JSON {bad[:1]}; a key twice "
                 f"{dupes[:1]}; other order {order[:1]}",
                 bool(lines) and not bad and not dupes and not order)
    finally:
        d.stop()
        d.remove_files()
    path_holder = Daemon(yoked, "", tag="lf")
    logfile = path_holder.data_dir + ".file.log"
    d = start(yoked, f'[logging]\nfile = "{logfile}"\n', "lf")
    try:
        settle(d)
        d.stop()
        in_file = open(logfile).read() if os.path.exists(logfile) else ""
        rec.case("logging.file: the log goes to the file, not stderr",
                 spec(X, 'file = "/var/log/yoked.log"   # append to this file; left out or "" = '
                      'stderr'), "lines in the file, nothing on stderr",
                 f"file {len(in_file.splitlines())} lines, stderr {len(log_of(d).splitlines())} "
                 f"lines {log_of(d)[:100]!r}", bool(in_file.strip()) and not log_of(d).strip())
    finally:
        d.stop()
        d.remove_files()
        path_holder.remove_files()


def all_cases(rec, yoked):
    for group in (bad_configs, good_configs, endpoint_configs, behaviour, logging_configs):
        print(f"== config.{group.__name__}", flush=True)
        group(rec, yoked)
