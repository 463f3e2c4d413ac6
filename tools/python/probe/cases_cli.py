"""Probe cases about the client commands of `yoke` against a real yoked: send, query (every
kind), retire and watch, their documented outputs and exit codes (contracts.md §3 and §5, the
commands' --help)."""

import json
import os
import signal
import subprocess
import time

from outside import dead_endpoint, helps, run, scratch_file, spec

C = "docs/contracts.md"
R = "README.md"
SEND_KEYS = {"pool", "batches", "events", "first_seq", "last_seq", "duplicates"}
SUMMARY_KEYS = {"pool", "seq", "weight", "pairs", "vertices", "edges", "mode",
                "no_perfect_matching"}
DIFF_KEYS = {"pool", "seq", "prev_seq", "weight", "pairs", "no_perfect_matching", "removed",
             "added", "repair_us", "commit_to_publish_us", "publish_unix_us", "stats"}
EXPLAIN_KEYS = {"pool", "seq", "vertex", "present", "mate", "pair_weight", "pair_bonus",
                "weight_offset", "dual_x2", "price", "alternatives"}


def one_json(ran):
    """The one JSON object a command printed, or None."""
    lines = [ln for ln in ran.out.splitlines() if ln.strip()]
    if len(lines) != 1:
        return None
    try:
        return json.loads(lines[0])
    except ValueError:
        return None


def json_lines(text):
    out = []
    for ln in text.splitlines():
        if ln.strip():
            try:
                out.append(json.loads(ln))
            except ValueError:
                out.append({"unreadable": ln})
    return out


class Yoke:
    """The `yoke` command line pointed at one daemon."""

    def __init__(self, yoke, daemon):
        self.yoke, self.d = yoke, daemon

    def send(self, script_text, pool, *extra, stdin=None):
        path = "-" if stdin is not None else scratch_file(script_text)
        try:
            return run([self.yoke, "send", path, "--pool", pool, "--ingest", self.d.ingest,
                        *extra], stdin=stdin)
        finally:
            if path != "-":
                os.remove(path)

    def query(self, kind, pool, *extra, timeout=30):
        return run([self.yoke, "query", kind, "--pool", pool, "--query", self.d.query, *extra],
                   timeout=timeout)

    def retire(self, pool, *extra):
        return run([self.yoke, "retire", pool, "--ingest", self.d.ingest, *extra])

    def watch(self, pool, *extra):
        """A `yoke watch` child left running (the caller reads and ends it)."""
        return subprocess.Popen([self.yoke, "watch", "--pool", pool, "--publish",
                                 self.d.publish, "--query", self.d.query, *extra],
                                stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def finished(proc, timeout):
    try:
        out, err = proc.communicate(timeout=timeout)
        return proc.returncode, out, err
    except subprocess.TimeoutExpired:
        proc.kill()
        out, err = proc.communicate()
        return None, out, err


def send_cases(rec, y):
    script = ("# two commits and a tail\nset 1 2 5\nset 3 4 7\ncommit\n\nset 2 3 20\ncommit\n"
              "set 8 9 1\n")
    r = y.send(script, "cli-send", "--client-id", "cli-1")
    o = one_json(r)
    want = {"pool": "cli-send", "batches": 3, "events": 4, "first_seq": 1, "last_seq": 3,
            "duplicates": 0}
    rec.case("yoke send: a script of 2 commits and a tail of events",
             spec(C, "exits 0 once every batch is acknowledged") + "; " +
             helps('{"pool":P,"batches":N,"events":E,"first_seq":S1,"last_seq":S2,'
                   '"duplicates":D}'),
             f"exit 0, {want}", r.short(), r.code == 0 and o == want)
    s = one_json(y.query("summary", "cli-send"))
    got = {k: s.get(k) for k in ("seq", "weight", "pairs", "vertices", "edges")} if s else None
    rec.case("yoke query summary after the send", spec(C, "one JSON object with at least seq, "
             "weight, pairs"), "seq 3 weight 21 pairs 2 vertices 6 edges 4", str(got),
             got == {"seq": 3, "weight": 21, "pairs": 2, "vertices": 6, "edges": 4})
    rec.case("yoke query summary: the keys its help lists", helps('summary {"pool","seq",'
             '"weight","pairs","vertices","edges","mode", "no_perfect_matching"}'),
             str(sorted(SUMMARY_KEYS)), str(sorted(s) if s else None),
             s is not None and SUMMARY_KEYS <= set(s))

    r = y.send(script, "cli-send", "--client-id", "cli-1")
    o = one_json(r)
    rec.case("yoke send: the same script again under the same --client-id",
             helps("so a second run under the same --client-id sends new batches (applied "
                   "again), not retries of the first run's"),
             "exit 0, 3 new batches at seqs 4..6, no duplicate", r.short(),
             r.code == 0 and o is not None and (o.get("first_seq"), o.get("last_seq"),
                                                o.get("duplicates")) == (4, 6, 0))

    r = y.send("set 1 2 5\ncommit\nremove 77\ncommit\n", "cli-bad", "--client-id", "cli-2")
    rec.case("yoke send: a batch the daemon rejects (remove of an unknown vertex, line 3)",
             helps("2 a malformed script, or a batch the daemon rejects (FILE:LINE names its "
                   "event)"), "exit 2, stderr names SCRIPT:3 and UNKNOWN_VERTEX", r.short(),
             r.code == 2 and ":3" in r.err and "UNKNOWN_VERTEX" in r.err)

    r = y.send("set 1 2 5\ncommit\nsett 3 4 5\ncommit\n", "cli-form", "--client-id", "cli-3")
    rec.case("yoke send: a malformed script (unknown verb on line 3)",
             helps("2 a malformed script"), "exit 2, stderr names line 3", r.short(),
             r.code == 2 and ":3" in r.err)
    q = y.query("summary", "cli-form")
    rec.case("yoke send of a malformed script: were the batches before the bad line sent?",
             helps("The script is read whole first: a malformed one sends nothing"),
             "no: the pool cli-form does not exist (UNKNOWN_POOL)", q.short(),
             q.code == 2 and "UNKNOWN_POOL" in q.err)

    r = y.send("", "cli-send", "--client-id", "cli-4", stdin="set 10 11 4\ncommit\n")
    o = one_json(r)
    rec.case("yoke send - (the script on stdin)", helps("Event-script file, or - for stdin"),
             "exit 0, 1 batch at seq 4 or later", r.short(),
             r.code == 0 and o is not None and o.get("batches") == 1)

    r = y.send("set 1 2 5\ncommit\n", "a/b", "--client-id", "cli-5")
    rec.case("yoke send to an invalid pool name 'a/b'", spec(C, "non-zero with the daemon's "
             "error otherwise") + "; " + helps("for send, query and watch also an error the "
             "daemon answered"), "exit 2, stderr with UNKNOWN_POOL", r.short(),
             r.code == 2 and "UNKNOWN_POOL" in r.err)

    r = y.send(f"set 1 2 {2**53}\ncommit\n", "cli-w", "--client-id", "cli-6")
    rec.case("yoke send: a weight beyond the pool's bound", helps("a batch the daemon rejects"),
             "exit 2, WEIGHT_OUT_OF_RANGE on stderr", r.short(),
             r.code == 2 and "WEIGHT_OUT_OF_RANGE" in r.err)

    t0 = time.time()
    r = run([y.yoke, "send", "-", "--pool", "x", "--ingest", dead_endpoint(), "--timeout-ms",
             "200", "--retries", "1", "--owner-wait-ms", "600"], stdin="add 1\ncommit\n")
    rec.case("yoke send to an endpoint where no daemon listens",
             spec(C, "4 a daemon did not answer") + "; " + helps("4 no acknowledgement after the "
             "retries"), "exit 4 within a few seconds",
             r.short() + f" after {time.time() - t0:.1f} s", r.code == 4)

    t0 = time.time()
    r = run([y.yoke, "send", "-", "--pool", "cli-list", "--ingest", dead_endpoint() + "," +
             y.d.ingest, "--timeout-ms", "300", "--owner-wait-ms", "5000"],
            stdin="add 1\ncommit\n")
    q = run([y.yoke, "query", "summary", "--pool", "cli-list", "--query", dead_endpoint() + "," +
             y.d.query, "--timeout-ms", "300", "--owner-wait-ms", "5000"])
    rec.case("yoke send and query given a silent endpoint first, then the daemon's",
             spec(R, "or an endpoint stays silent, they try the next endpoint after a short "
                  "backoff"), "both exit 0 (the batch at seq 1; the summary at seq 1)",
             f"{r.short(80)} / {q.short(80)} after {time.time() - t0:.1f} s",
             r.code == 0 and q.code == 0 and (one_json(q) or {}).get("seq") == 1)

    r = y.send("", "cli-empty", "--client-id", "cli-7", stdin="")
    o = one_json(r)
    rec.case("yoke send of an empty script", spec("docs/formats.md", "An empty script, or one of "
             "comments and blank lines only, holds no batch") + "; " + helps("an empty script "
             "sends nothing: 0 batches, first_seq and last_seq null"),
             "exit 0, batches 0, first_seq null, last_seq null", r.short(),
             r.code == 0 and o is not None and o.get("batches") == 0 and
             o.get("first_seq") is None and o.get("last_seq") is None)


def query_cases(rec, y):
    pool = "cli-send"
    seq = one_json(y.query("summary", pool))["seq"]
    m = one_json(y.query("mate", pool, "--vertex", "2"))
    rec.case("yoke query mate --vertex 2 (paired)", helps('mate --vertex V: {"pool","seq",'
             '"vertex","mate" (null: unpaired), "pair_weight" (null: unpaired)}'),
             "mate 3, pair_weight 20", str(m),
             m is not None and m.get("mate") == 3 and m.get("pair_weight") == 20)
    m = one_json(y.query("mate", pool, "--vertex", "1"))
    rec.case("yoke query mate --vertex 1 (unpaired)", helps('"mate" (null: unpaired)'),
             "mate null, pair_weight null", str(m), m is not None and "mate" in m and
             m["mate"] is None and "pair_weight" in m and m["pair_weight"] is None)
    r = y.query("mate", pool, "--vertex", "999")
    rec.case("yoke query mate of a vertex the pool does not hold",
             helps("2 the daemon answered with an error (printed as 'error: CODE: message')"),
             "exit 2, stderr 'error: UNKNOWN_VERTEX: ...'", r.short(),
             r.code == 2 and "error: UNKNOWN_VERTEX:" in r.err)
    r = y.query("mate", pool)
    rec.case("yoke query mate without --vertex", helps("or the options do not fit KIND"),
             "exit 2", r.short(), r.code == 2)
    r = y.query("summary", pool, "--vertex", "3")
    rec.case("yoke query summary --vertex 3 (an option of mate and explain)",
             helps("or the options do not fit KIND"),
             "exit 2 (or, GAP, the option ignored)", r.short(), True if r.code == 2 else None)

    m = one_json(y.query("matching", pool))
    ok = m is not None and m.get("pairs") == len(m.get("matching", [])) and \
        [2, 3, 20] in m.get("matching", []) and m.get("weight") == sum(
            p[2] for p in m.get("matching", [])) and m.get("seq") == seq
    rec.case("yoke query matching", helps('matching {"pool","seq","weight","pairs" (a count),'
             '"matching":[[A,B,W],...], "mode","no_perfect_matching"}'),
             f"seq {seq}, pairs = len(matching), [2,3,20] in it, weight = the pairs' sum",
             str(m)[:160], ok)

    r = y.query("explain", pool, "--vertex", "2")
    e = one_json(r)
    rec.case("yoke query explain --vertex 2: the keys", helps('explain --vertex V [--alternatives'
             ' N]: {"pool","seq"} and the explanation keys'), str(sorted(EXPLAIN_KEYS)),
             str(sorted(e) if e else r.short()), e is not None and EXPLAIN_KEYS <= set(e))
    if e is not None:
        ok = e["price"] == (e["dual_x2"] - e["weight_offset"]) / 2 and all(
            a["slack"] == a["slack_x2"] / 2 for a in e["alternatives"])
        rec.case("yoke query explain: price and slack from the doubled values",
                 helps("price = (dual_x2 - weight_offset) / 2 and slack = slack_x2 / 2"),
                 "both rules hold", str(e)[:160], ok)
    e = one_json(y.query("explain", pool, "--vertex", "2", "--alternatives", "1"))
    rec.case("yoke query explain --alternatives 1", helps("--alternatives UINT Alternatives to "
             "list at most"), "at most 1 alternative", str(e)[:160],
             e is not None and len(e.get("alternatives", [0, 0])) <= 1)
    r = y.query("explain", pool, "--vertex", "999")
    o = one_json(r)
    rec.case("yoke query explain of a vertex the pool does not hold",
             spec("docs/formats.md", "which `yoke query explain` prints as `error: "
                  "UNKNOWN_VERTEX: ...` with exit code 2") + "; " +
             spec("proto/yoke/v1/protocol.proto", "in a query, a vertex the pool does not hold"),
             "exit 2, stderr 'error: UNKNOWN_VERTEX: ...', nothing on stdout", r.short(),
             r.code == 2 and r.err.startswith("error: UNKNOWN_VERTEX: ") and o is None)
    r = y.query("explain", pool, "--vertex", "2", "--text")
    rec.case("yoke query explain --text", helps("--text prints it in sentences instead"),
             "exit 0, text that is not one JSON object", r.short(),
             r.code == 0 and r.out.strip() and one_json(r) is None)

    r = y.query("stats", pool)
    st = one_json(r)
    rec.case("yoke query stats", helps("stats the pool's counters, limits, last repair and "
             "timings"), f"exit 0, one JSON object with seq {seq}", r.short(),
             r.code == 0 and st is not None and st.get("seq") == seq)

    h = one_json(y.query("health", pool))
    rec.case("yoke query health", helps('health {"ok","status","uptime_s","pools",'
             '"daemon_version"}'), "those keys, ok true", str(h),
             h is not None and {"ok", "status", "uptime_s", "pools", "daemon_version"} <= set(h)
             and h["ok"] is True)

    r = y.query("snapshot", pool)
    s = one_json(r)
    rec.case("yoke query snapshot --pool P", helps('snapshot write a snapshot now [--all-pools]:'
             ' {"pools":[{"pool","seq"}],"path"}') + "; " + spec(R, "snapshots pool P and "
             "answers for it alone"), f"pools = [{{pool cli-send, seq {seq}}}], a path",
             r.short(), s is not None and bool(s.get("path")) and
             [(p.get("pool"), p.get("seq")) for p in s.get("pools", [])] == [(pool, seq)])
    r = y.query("snapshot", pool, "--all-pools", timeout=60)
    s = one_json(r)
    names = [p.get("pool") for p in s.get("pools", [])] if s else []
    rec.case("yoke query snapshot --all-pools", spec(R, "`--all-pools` answers for every pool"),
             "every pool, sorted by name (cli-bad and cli-send among them)", str(names)[:160],
             s is not None and names == sorted(names) and {"cli-bad", pool} <= set(names))

    r = y.query("summary", "nosuch")
    rec.case("yoke query summary of a pool that does not exist",
             helps("printed as 'error: CODE: message'") + "; " +
             spec("docs/protocol.md", "`there is no pool NAME`"),
             "exit 2, stderr 'error: UNKNOWN_POOL: there is no pool nosuch'", r.short(),
             r.code == 2 and "error: UNKNOWN_POOL: there is no pool nosuch" in r.err)
    t0 = time.time()
    r = run([y.yoke, "query", "summary", "--query", dead_endpoint(), "--timeout-ms", "300",
             "--owner-wait-ms", "600"])
    rec.case("yoke query to an endpoint where no daemon listens",
             helps("4 no reply within --timeout-ms"), "exit 4",
             r.short() + f" after {time.time() - t0:.1f} s", r.code == 4)
    r = run([y.yoke, "query", "bogus", "--query", y.d.query])
    rec.case("yoke query of an unknown KIND", spec(C, "2 bad input or usage"), "exit 2",
             r.short(), r.code == 2)


def retire_cases(rec, y):
    y.send("set 1 2 5\ncommit\n", "cli-ret", "--client-id", "cli-r")
    r = y.retire("cli-ret", "--at-seq", "7")
    rec.case("yoke retire --at-seq of another seq", helps("2 refused (UNKNOWN_POOL: ... ; "
             "SEQ_MISMATCH; ...)"), "exit 2, SEQ_MISMATCH; the pool still there",
             r.short() + " / " + y.query("summary", "cli-ret").short(80),
             r.code == 2 and "SEQ_MISMATCH" in r.err)
    r = y.retire("cli-ret", "--at-seq", "1")
    o = one_json(r)
    rec.case("yoke retire POOL --at-seq 1", helps('Output: {"pool":P,"retired_at_seq":S}'),
             "exit 0, {pool cli-ret, retired_at_seq 2}", r.short(),
             r.code == 0 and o == {"pool": "cli-ret", "retired_at_seq": 2})
    r = y.retire("cli-ret")
    rec.case("yoke retire of the pool retired already", helps("UNKNOWN_POOL: no such pool, also "
             "when an earlier attempt retired it"), "exit 2, UNKNOWN_POOL", r.short(),
             r.code == 2 and "UNKNOWN_POOL" in r.err)
    r = y.retire("a b")
    rec.case("yoke retire of an invalid pool name 'a b'", spec("docs/protocol.md", "the same "
             "for a batch, a retirement and a query"), "exit 2, UNKNOWN_POOL saying byte 32",
             r.short(), r.code == 2 and "UNKNOWN_POOL" in r.err and "32" in r.err)
    t0 = time.time()
    r = run([y.yoke, "retire", "x", "--ingest", dead_endpoint(), "--timeout-ms", "200",
             "--retries", "1", "--owner-wait-ms", "600"])
    rec.case("yoke retire to an endpoint where no daemon listens",
             helps("4 no answer after the retries"), "exit 4",
             r.short() + f" after {time.time() - t0:.1f} s", r.code == 4)


def watch_cases(rec, y):
    w = y.watch("cli-watch", "--count", "3", "--timeout-ms", "8000")
    time.sleep(0.4)  # the slow joiner: the subscription takes effect a little later
    y.send("set 1 2 5\ncommit\n", "cli-watch-2", "--client-id", "cw")
    y.send("set 1 2 5\ncommit\n", "cli-watch", "--client-id", "cw")  # one batch a send: one diff
    y.send("set 2 3 9\nremove 1\ncommit\n", "cli-watch", "--client-id", "cw")
    y.retire("cli-watch")
    code, out, err = finished(w, 15)
    lines = json_lines(out)
    keys_ok = all(DIFF_KEYS <= set(d) for d in lines[:2])
    pools = [d.get("pool") for d in lines]
    chain = [(d.get("prev_seq"), d.get("seq")) for d in lines]
    rec.case("yoke watch --count 3: two diffs and a retirement (a pool sharing the prefix sent "
             "too)", helps("Output: one JSON object per diff, one per line") + "; " +
             spec("docs/protocol.md", "keep only messages whose topic frame equals the pool name"),
             "exit 0; 3 lines of pool cli-watch with the documented keys; (prev_seq, seq) (0,1) "
             '(1,2) (2,3); the last "retired": true', f"exit {code}, {len(lines)} lines, pools "
             f"{pools}, chain {chain}, retired {[d.get('retired') for d in lines]}"
             f", {err.strip()[:100]!r}",
             code == 0 and len(lines) == 3 and keys_ok and pools == ["cli-watch"] * 3 and
             chain == [(0, 1), (1, 2), (2, 3)] and lines[2].get("retired") is True)
    if len(lines) >= 3:
        d, r = lines[1], lines[2]
        ok = d.get("removed") == [[1, 2, 5]] and d.get("added") == [[2, 3, 9]] and \
            d.get("weight") == 9 and d.get("pairs") == 1
        rec.case("yoke watch: removed and added as [[A,B,W],...]", helps('"removed":[[A,B,W],'
                 '...],"added":[[A,B,W],...]'), "seq 2: removed [[1,2,5]] added [[2,3,9]] "
                 "weight 9 pairs 1", str(d)[:200], ok)
        ok = r.get("removed") == [[2, 3, 9]] and r.get("added") == [] and \
            r.get("weight") == 0 and r.get("pairs") == 0
        rec.case("yoke watch: the retired diff removes every pair", spec(
            "proto/yoke/v1/publish.proto", "`removed` lists every pair it held at prev_seq, "
            "`weight` and `pairs` are 0"), "removed [[2,3,9]], added [], weight 0, pairs 0",
            str(r)[:200], ok)

    w = y.watch("cli-silent", "--timeout-ms", "400")
    code, out, err = finished(w, 10)
    rec.case("yoke watch --timeout-ms 400 on a silent pool", helps("4 nothing within "
             "--timeout-ms"), "exit 4, nothing printed", f"exit {code}, {out[:80]!r}",
             code == 4 and not out.strip())

    w = y.watch("cli-term")
    time.sleep(0.5)
    w.send_signal(signal.SIGTERM)
    code, out, err = finished(w, 10)
    rec.case("yoke watch ended by SIGTERM", helps("0 after --count diffs, or on SIGINT/SIGTERM"),
             "exit 0", f"exit {code}, {err.strip()[:100]!r}", code == 0)

    # --catch-up on a pool that does not exist yet, then created
    w = y.watch("cli-late", "--catch-up", "--count", "2", "--timeout-ms", "8000")
    time.sleep(0.4)
    y.send("set 4 5 6\ncommit\n", "cli-late", "--client-id", "cl")
    y.send("set 5 6 8\ncommit\n", "cli-late", "--client-id", "cl")
    code, out, err = finished(w, 15)
    lines = json_lines(out)
    first = lines[0] if lines else {}
    rec.case("yoke watch --catch-up of a pool not made yet, then made by two batches",
             helps('first the pool\'s whole matching with "catch_up":true') + "; " +
             spec("docs/protocol.md", "(an `UNKNOWN_POOL` answer: the empty matching, s = 0"),
             'exit 0; first line catch_up true, seq 0, matching []; then diffs seq 1 and 2',
             f"exit {code}, lines {[(d.get('catch_up'), d.get('seq')) for d in lines]}, "
             f"{err.strip()[:120]!r}",
             code == 0 and first.get("catch_up") is True and first.get("seq") == 0 and
             first.get("matching") == [] and [d.get("seq") for d in lines[1:]] == [1, 2])

    w = y.watch("cli-late", "--catch-up", "--count", "1", "--timeout-ms", "8000")
    time.sleep(0.4)
    y.send("add 40\ncommit\n", "cli-late", "--client-id", "cl2")
    code, out, err = finished(w, 15)
    lines = json_lines(out)
    m = one_json(y.query("matching", "cli-late"))
    first = lines[0] if lines else {}
    same = first.get("matching") == [[5, 6, 8]] and first.get("seq") == 2
    rec.case("yoke watch --catch-up of a live pool: the first line is `yoke query matching`",
             helps('(as `yoke query matching` prints it)'), "catch_up line at seq 2 with "
             "[[5,6,8]], then the diff seq 3",
             f"exit {code}, lines {[str(d)[:90] for d in lines]}; query now {str(m)[:80]}",
             code == 0 and same and [d.get("seq") for d in lines[1:]] == [3])


def send_across_a_restart(rec, yoke, yoked):
    """`yoke send` of 20,000 one-event batches while the daemon is SIGKILLed and restarted."""
    from harness import Daemon
    d = Daemon(yoked, "", tag="sendkill")
    d.start()
    try:
        n = 20000
        script = "".join(f"add {i}\ncommit\n" for i in range(1, n + 1))
        path = scratch_file(script)
        p = subprocess.Popen([yoke, "send", path, "--pool", "sk", "--ingest", d.ingest,
                              "--timeout-ms", "500", "--retries", "40", "--in-flight", "32"],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        time.sleep(0.4)
        d.proc.kill()
        d.proc.wait()
        time.sleep(0.3)
        d.start(timeout=20)
        code, out, err = finished(p, 120)
        os.remove(path)
        o = None
        try:
            o = json.loads(out)
        except ValueError:
            pass
        s = one_json(Yoke(yoke, d).query("summary", "sk"))
        rec.case("yoke send of 20,000 batches across a SIGKILL and restart of the daemon",
                 spec("README.md", "keeps batches in flight and resends after a timeout or a "
                      "restart (the daemon applies each once)"),
                 f"exit 0; batches {n}, last_seq {n}; the pool at seq {n} with {n} vertices",
                 f"exit {code}, {out.strip()[:140]!r}, {err.strip()[:100]!r}; summary "
                 f"{ {k: s.get(k) for k in ('seq', 'vertices')} if s else None}",
                 code == 0 and o is not None and o.get("batches") == n and
                 o.get("last_seq") == n and s is not None and s.get("seq") == n and
                 s.get("vertices") == n)
    finally:
        d.stop()
        d.remove_files()


def send_oversized(rec, yoke, yoked):
    """`yoke send` of a batch past a daemon's max_message_bytes: refused unread, so its Ack
    names no batch (protocol.md); the command must still tell it from silence."""
    from harness import Daemon
    d = Daemon(yoked, "[limits]\nmax_message_bytes = 1024\n", tag="sendbig")
    d.start()
    try:
        script = "add 1\ncommit\n" + "".join(f"set {i} {i + 1} 3\n" for i in range(0, 400, 2))
        r = Yoke(yoke, d).send(script + "commit\n", "big", "--timeout-ms", "500", "--retries", "2")
        rec.case("yoke send of a batch larger than the daemon's max_message_bytes (1 KiB)",
                 helps("2 a malformed script, or a batch the daemon rejects") + "; " +
                 spec("docs/protocol.md", "A message that could not be read as a batch (not a "
                      "`yoke.v1.IngestRequest`, another version or kind, too large"),
                 "exit 2 at once with OVERSIZED_MESSAGE (not exit 4 after the retries)",
                 r.short(), r.code == 2 and "OVERSIZED_MESSAGE" in r.err)
    finally:
        d.stop()
        d.remove_files()


def all_cases(rec, yoke, daemon):
    y = Yoke(yoke, daemon)
    for group in (send_cases, query_cases, retire_cases, watch_cases):
        print(f"== cli.{group.__name__}", flush=True)
        group(rec, y)
