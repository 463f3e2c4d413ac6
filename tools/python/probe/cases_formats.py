"""Probe cases about the text formats at their documented limits through `yoke solve`,
`yoke verify` and `yoke replay` (docs/formats.md, every rule; contracts.md §1 and §3: the
outputs and exit codes). No daemon."""

import json
import os
import re

from outside import run, scratch_file, spec

F = "docs/formats.md"
C = "docs/contracts.md"
R = "README.md"
U64_MAX = 2**64 - 1
SOLVE_KEYS = {"weight", "pairs", "solve_ms", "matching", "mode", "status", "vertices", "edges"}
COMMIT_LINE = re.compile(r"^commit (\d+) weight (-?\d+) pairs (\d+) repair_us (\d+)$")


def on_text(yoke, command, text, *extra):
    """`yoke COMMAND FILE ...` on `text` written to a scratch file (its path kept in .path)."""
    path = scratch_file(text)
    try:
        r = run([yoke, command, path, *extra])
        r.path = path
        return r
    finally:
        os.remove(path)


def solve(yoke, text, *extra):
    return on_text(yoke, "solve", text, *extra)


def replay(yoke, text, *extra):
    return on_text(yoke, "replay", text, *extra)


def solved(r):
    try:
        return json.loads(r.out)
    except ValueError:
        return None


def commits(r):
    """[(I, weight, pairs)] of the commit lines, or None when a line is not of the form."""
    out = []
    for ln in r.out.splitlines():
        if not ln.startswith("commit "):
            continue
        m = COMMIT_LINE.match(ln)
        if not m:
            return None
        out.append((int(m.group(1)), int(m.group(2)), int(m.group(3))))
    return out


def names_line(r, line):
    return r.code == 2 and f"{r.path}:{line}" in r.err


def edge_list_cases(rec, yoke):
    r = solve(yoke, "# harbour\n\n   \n\t\n  # indented comment\n1 2 5\n2 3 7\n")
    o = solved(r)
    rec.case("edge list: comments, empty, blank-only and indented-comment lines ignored",
             spec(F, "A line that is empty, only blanks, or whose first non-blank character is "
                  "`#` is ignored"), "exit 0, weight 7, pairs 1, vertices 3, edges 2",
             r.short(), r.code == 0 and o is not None and
             (o.get("weight"), o.get("pairs"), o.get("vertices"), o.get("edges")) == (7, 1, 3, 2))
    rec.case("yoke solve: the keys of its JSON object", spec(R, "`yoke solve` prints one JSON "
             "object: `weight`, `pairs`, `solve_ms`") + "; " + spec(C, "prints one JSON object "
             "with at least `weight`"), str(sorted(SOLVE_KEYS)), str(sorted(o) if o else None),
             o is not None and SOLVE_KEYS <= set(o))
    r = solve(yoke, "1 2 5\r\n2 3 7\r\n\r\n# c\r\n")
    o = solved(r)
    rec.case("edge list with CRLF line ends (and a CRLF blank line and comment)",
             spec(F, "a `\\r` before the newline is a blank, so CRLF files read the same"),
             "exit 0, weight 7", r.short(), r.code == 0 and o is not None and o["weight"] == 7)
    r = solve(yoke, "1\t2\t5\n  3   4\t 6  \n")
    o = solved(r)
    rec.case("edge list: tabs and runs of blanks between and around fields",
             spec(F, "separated by blanks (space, tab"), "exit 0, weight 11",
             r.short(), r.code == 0 and o is not None and o["weight"] == 11)
    r = solve(yoke, "1 2 5")
    rec.case("edge list whose last line has no newline", spec(F, "one edge per line"),
             "exit 0, weight 5", r.short(), r.code == 0 and (solved(r) or {}).get("weight") == 5)
    r = solve(yoke, "1 2 5 # price\n")
    rec.case("edge list: a '#' after the fields", spec(F, "A `#` after the first field is not a "
             "comment (it is a fourth field, an error)"), "exit 2 naming line 1", r.short(),
             names_line(r, 1))
    r = solve(yoke, "1 # 2 5\n")
    rec.case("edge list: a '#' as the second field", spec(F, "A `#` after the first field is not"
             " a comment"), "exit 2 naming line 1", r.short(), names_line(r, 1))
    r = solve(yoke, f"0 {U64_MAX} 3\n{U64_MAX - 1} 0 4\n")
    o = solved(r)
    rec.case("edge list: ids 0 and 2^64-1", spec(F, "integers in 0..2^64-1"),
             "exit 0, weight 4, matching [[18446744073709551614, 0]] in either order",
             r.short(), r.code == 0 and o is not None and o["weight"] == 4)
    r = solve(yoke, f"1 {U64_MAX + 1} 3\n")
    rec.case("edge list: an id of 2^64", spec(F, "integers in 0..2^64-1"), "exit 2 naming line 1",
             r.short(), names_line(r, 1))
    r = solve(yoke, "-1 2 3\n")
    rec.case("edge list: a negative id", spec(C, "vertex ids non-negative integers"),
             "exit 2 naming line 1", r.short(), names_line(r, 1))
    r = solve(yoke, "007 2 005\n2 3 -0\n")
    o = solved(r)
    rec.case("edge list: leading zeros and -0", spec(F, "leading zeros allowed (`007` is 7)"),
             "exit 0 reading 007 as 7 and 005 as 5: weight 5, matching [[2,7]]", r.short(),
             r.code == 0 and o is not None and o.get("weight") == 5 and
             o.get("matching") in ([[2, 7]], [[7, 2]]))
    r = solve(yoke, "1 2 +5\n")
    rec.case("edge list: a weight with a plus sign", spec(F, "W may start with `-`, never with "
             "`+`"), "exit 2 naming line 1", r.short(), names_line(r, 1))
    r = solve(yoke, "1 2 9223372036854775808\n")
    rec.case("edge list: a weight of 2^63 (out of int64)", spec(F, "W is a signed 64-bit integer"),
             "exit 2 naming line 1", r.short(), names_line(r, 1))
    r = solve(yoke, "1 2 9223372036854775807\n")
    rec.case("edge list: a weight of 2^63-1 (reads; beyond the solver's bound)",
             spec(F, "Weights are checked against the engine's bounds per mode by the solver, "
                  "not here") + "; " + spec(R, "the error names the bound that was hit"),
             "exit 2 with an error naming a bound (2^52 = 4503599627370496 or 2^61)", r.short(),
             r.code == 2 and ("4503599627370496" in r.err or "2305843009213693952" in r.err or
                              "2^52" in r.err or "2^61" in r.err))
    r = solve(yoke, f"1 2 {2**52}\n")
    rec.case("edge list: a weight of exactly 2^52 (one pair)", spec(R, "Weights must satisfy |w| "
             "<= 2^52"), "exit 0, weight 2^52", r.short(),
             r.code == 0 and (solved(r) or {}).get("weight") == 2**52)
    r = solve(yoke, f"1 2 {2**52 + 1}\n")
    rec.case("edge list: a weight of 2^52 + 1", spec(R, "Weights must satisfy |w| <= 2^52"),
             "exit 2 naming the bound", r.short(), r.code == 2 and "4503599627370496" in r.err)
    r = solve(yoke, "1 2 -9223372036854775808\n")
    rec.case("edge list: a weight of -2^63 (reads; |w| beyond every bound)",
             spec(F, "W is a signed 64-bit integer") + "; " + spec(R, "Weights must satisfy |w| "
             "<= 2^52"), "exit 2 naming the bound, no crash", r.short(), r.code == 2)
    r = solve(yoke, "1 2 5\n3 4 6\n2 1 7\n")
    rec.case("edge list: an edge given twice in the other orientation (lines 1 and 3)",
             spec(F, "an edge given twice in either orientation (naming the line of the first "
                  "occurrence)"), "exit 2 naming line 3 and the first occurrence, line 1",
             r.short(), names_line(r, 3) and "1" in r.err.split(f"{r.path}:3", 1)[-1])
    r = solve(yoke, "1 2 5\n3 3 1\n4 5\n")
    rec.case("edge list: two bad lines (a self loop on 2, a missing field on 3)",
             spec(F, "Errors name the earliest bad line"), "exit 2 naming line 2", r.short(),
             names_line(r, 2) and f"{r.path}:3" not in r.err)
    r = solve(yoke, "1 2 5 6\n")
    rec.case("edge list: an extra field", spec(F, "Extra or missing fields are an error"),
             "exit 2 naming line 1", r.short(), names_line(r, 1))
    r = solve(yoke, "")
    o = solved(r)
    rec.case("edge list: an empty file (an empty graph)", spec(C, "blank lines and lines "
             "starting with `#` are ignored"), "exit 0, weight 0, pairs 0, matching []",
             r.short(), r.code == 0 and o is not None and o["weight"] == 0 and o["pairs"] == 0
             and o["matching"] == [])
    r = solve(yoke, "1 2 5\n", "--mode", "perfect")
    r3 = solve(yoke, "1 2 5\n2 3 5\n", "--mode", "perfect")
    o3 = solved(r3)
    rec.case("yoke solve --mode perfect: a path of 2 vertices, then of 3",
             spec(R, "status `no_perfect_matching` and exit code 3"),
             "exit 0; then exit 3 with status no_perfect_matching", r.short(60) + " / " +
             r3.short(120), r.code == 0 and r3.code == 3 and o3 is not None and
             o3.get("status") == "no_perfect_matching")
    r = solve(yoke, "1 2 1\n2 3 10\n3 4 1\n", "--mode", "max-cardinality")
    o = solved(r)
    rec.case("yoke solve --mode max-cardinality prefers 2 pairs of 1 to one of 10",
             spec(R, "`max-cardinality` (most pairs, then most weight)"), "pairs 2 weight 2",
             r.short(), o is not None and (o["pairs"], o["weight"]) == (2, 2))
    r = solve(yoke, "\ufeff1 2 5\n")
    rec.case("edge list starting with a UTF-8 byte order mark (as Windows editors write with "
             "CRLF)", spec(F, "A UTF-8 byte order mark is not a blank: a file that starts with "
                          "one is refused at line 1"), "exit 2 naming line 1", r.short(),
             names_line(r, 1))
    r = solve(yoke, "1 2 5\r\r\n")
    rec.case("edge list: two \\r before the newline", spec(F, "a `\\r` anywhere in a line is a "
             "blank too"), "exit 0, weight 5", r.short(),
             r.code == 0 and (solved(r) or {}).get("weight") == 5)
    r = solve(yoke, "1 2\r5\n")
    rec.case("edge list: a \\r between two fields", spec(F, "a `\\r` anywhere in a line is a "
             "blank too"), "exit 0, weight 5 (three fields)", r.short(),
             r.code == 0 and (solved(r) or {}).get("weight") == 5)
    r = run([yoke, "solve", "/nonexistent/graph.txt"])
    rec.case("yoke solve of a file that does not exist", spec(C, "2 bad input or usage"),
             "exit 2", r.short(), r.code == 2)
    r = run([yoke, "solve", "-"], stdin="5 6 3\n")
    rec.case("yoke solve - (stdin)", spec(R, "`-` reads standard input"), "exit 0 weight 3",
             r.short(), r.code == 0 and (solved(r) or {}).get("weight") == 3)


def certificate_cases(rec, yoke):
    graph = "1 2 6\n2 3 5\n3 1 4\n3 4 2\n"
    gpath = scratch_file(graph)
    cpath = gpath + ".cert.json"
    try:
        r = run([yoke, "solve", gpath, "--certificate", cpath])
        cert = json.load(open(cpath)) if os.path.exists(cpath) else None
        v = run([yoke, "verify", gpath, cpath])
        o = solved(v)
        rec.case("yoke verify of solve's own certificate", spec(F, "`yoke verify` exits 0 and "
                 'prints `{"valid":true,"weight":W,"pairs":K}`'), "exit 0, valid true, weight "
                 "8, pairs 2", v.short(), v.code == 0 and o == {"valid": True, "weight": 8,
                                                               "pairs": 2})
        if cert is None:
            return

        def check(c):
            with open(cpath, "w") as f:
                json.dump(c, f)
            return run([yoke, "verify", gpath, cpath])

        c = json.loads(json.dumps(cert))
        c["written_by"] = "probe"
        c["vertices"][0]["colour"] = "teal"
        v = check(c)
        rec.case("yoke verify: a certificate with keys it does not know", spec(F, "Readers ignore"
                 " keys they do not know"), "exit 0, valid", v.short(), v.code == 0)
        c = json.loads(json.dumps(cert))
        c["vertices"][0]["dual_x2"] += 2
        v = check(c)
        o = solved(v)
        rec.case("yoke verify: one dual raised (no longer tight)", spec(F, "exits 1 with "
                 '`{"valid":false,"reason":"..."}` when it does not'), "exit 1, valid false "
                 "with a reason", v.short(), v.code == 1 and o is not None and
                 o.get("valid") is False and bool(o.get("reason")))
        c = json.loads(json.dumps(cert))
        for e in c["vertices"]:
            e["dual2"] = e.pop("dual_x2")
        for b in c.get("blossoms", []):
            b["dual2"] = b.pop("dual_x2")
        c["format"] = "yoke-certificate/1"
        v = check(c)
        rec.case("yoke verify: format 1 (`dual2`)", spec(F, "Format 1, `yoke-certificate/1`, "
                 "named it `dual2`; such files are still read"), "exit 0, valid", v.short(),
                 v.code == 0)
        c["vertices"][0]["dual_x2"] = c["vertices"][0]["dual2"]
        v = check(c)
        rec.case("yoke verify: a file mixing `dual2` and `dual_x2`", spec(F, "a file that mixes "
                 "the two names is refused"), "exit 2, error: ...", v.short(),
                 v.code == 2 and v.err.startswith("error:"))
        c = json.loads(json.dumps(cert))
        c["vertices"].pop()
        v = check(c)
        rec.case("yoke verify: a graph vertex without an entry", spec(F, "a graph vertex without "
                 "an entry)"), "exit 2, error: ...", v.short(), v.code == 2)
        c = json.loads(json.dumps(cert))
        c["vertices"][0]["id"] = 77
        v = check(c)
        rec.case("yoke verify: an id not in the graph", spec(F, "an id not in the graph"),
                 "exit 2", v.short(), v.code == 2)
        with open(cpath, "w") as f:
            f.write('{"format": "yoke-certificate/2", "mode": ')
        v = run([yoke, "verify", gpath, cpath])
        rec.case("yoke verify: malformed JSON", spec(F, "exits 2 with `error: ...` when the file "
                 "is not a certificate"), "exit 2, error: ...", v.short(),
                 v.code == 2 and v.err.startswith("error:"))
    finally:
        for p in (gpath, cpath):
            if os.path.exists(p):
                os.remove(p)


def script_cases(rec, yoke):
    r = replay(yoke, "set 1 2 5  # re-priced\n\n# a comment line\nset 2 3 7\ncommit\n")
    rec.case("event script: a comment after an event, a blank and a comment line",
             spec(F, "a `#` at the start of a token begins a comment that runs to the end of"),
             "exit 0, one commit: weight 7 pairs 1", r.short(),
             r.code == 0 and commits(r) == [(1, 7, 1)])
    r = replay(yoke, "set 1 2 5#x\ncommit\n")
    rec.case("event script: '#' inside a token (5#x)", spec(F, "a `#` at the start of a token "
             "begins a comment"), "exit 2 naming line 1 (5#x is not an integer)", r.short(),
             names_line(r, 1))
    r = replay(yoke, "set 1 2 5\r\ncommit\r\nset 2 3 9\r\n")
    rec.case("event script with CRLF line ends and events after the last commit",
             spec(F, "Tokens are separated by blanks (as in the edge list)") + "; " +
             spec(F, "Events after the last `commit` form one more batch"),
             "exit 0, commits (1,5,1) and (2,9,1)", r.short(),
             r.code == 0 and commits(r) == [(1, 5, 1), (2, 9, 1)])
    r = replay(yoke, "set 1 2 5\ncommit\ncommit\n")
    rec.case("event script: `commit` right after `commit`", spec(F, "a `commit` right after "
             "`commit` is a commit with no events"), "exit 0, two commit lines, the second "
             "unchanged", r.short(), r.code == 0 and commits(r) == [(1, 5, 1), (2, 5, 1)])
    r = replay(yoke, "\n# nothing but a comment\n")
    rec.case("event script: only a blank line and a comment", spec(F, "`yoke replay` prints no "
             "commit line and exits 0"), "exit 0, no output", r.short(),
             r.code == 0 and not r.out.strip())
    r = replay(yoke, "set 1 2 5\ncommit\n# only a comment after the last commit\n\n")
    rec.case("event script: only comments after the last commit", spec(F, "(only comments and "
             "blank lines after it form none)"), "exactly one commit line", r.short(),
             r.code == 0 and commits(r) == [(1, 5, 1)])
    for text, line, what in (("set 1 2\ncommit\n", 1, "`set` with two fields"),
                             ("add 1 2\n", 1, "`add` with two fields"),
                             ("set 1 2 5\nrelease 3\n", 2, "`release` with one field"),
                             ("set 1 2 5\nfrob 1\n", 2, "an unknown verb"),
                             ("set 1 2 5\ncommit 3\n", 2, "`commit` with a field"),
                             ("SET 1 2 5\n", 1, "a verb in capitals"),
                             (f"add {U64_MAX + 1}\n", 1, "an id of 2^64"),
                             ("add -3\n", 1, "a negative id"),
                             ("set 1 2 9223372036854775808\n", 1, "a weight of 2^63"),
                             ("set 1 2 5\nunset 4 4\n", 2, "a self loop in `unset`"),
                             ("set 1 2 5\nhold 7 7\n", 2, "a self loop in `hold`"),
                             ("set 1 2 5\nrelease 8 8\n", 2, "a self loop in `release`"),
                             ("set 1 2 x\n", 1, "a weight that is not an integer")):
        r = replay(yoke, text)
        rec.case(f"event script: {what}", spec(F, "The reader checks the form of each line only")
                 + "; " + spec(F, "names the first bad line"), f"exit 2 naming line {line}",
                 r.short(), names_line(r, line))
    r = replay(yoke, "set 1 2 5\nset 2 3 -4\ncommit\nsett 1\nremove 99\n")
    rec.case("event script: a form error on line 4 after a good commit", spec(F, "names the first"
             " bad line"), "exit 2 naming line 4 (whether commit 1 printed first: GAP)",
             r.short(), names_line(r, 4))
    r = replay(yoke, "set 1 2 5\ncommit\nremove 99\nset 3 4 1\ncommit\n")
    rec.case("event script: a batch the pool rejects (remove of an unknown vertex)",
             spec(R, "rejected whole with `error: SCRIPT:LINE: ...` and exit code 2"),
             "commit 1 printed, then exit 2, stderr 'error: SCRIPT:3: ...'", r.short(),
             r.code == 2 and f"error: {r.path}:3:" in r.err and commits(r) == [(1, 5, 1)])
    r = replay(yoke, "set 1 2 5\nhold 1 2\nhold 2 1\n")
    rec.case("event script: a hold of a vertex held already", spec(R, "a hold of a vertex "
             "already held") + "; " + spec(C, "neither end may be held already"),
             "exit 2 naming line 3", r.short(), names_line(r, 3))
    r = replay(yoke, "set 1 2 5\nrelease 1 2\n")
    rec.case("event script: a release of a pair that is not held", spec(R, "a release of a pair "
             "that is not held"), "exit 2 naming line 2", r.short(), names_line(r, 2))
    r = replay(yoke, "set 1 2 5\nset 1 3 50\nhold 1 2\ncommit\nunset 1 2\ncommit\n")
    rec.case("event script: hold against a heavier edge, then unset of the held edge",
             spec(C, "pairs U with V whatever the weights, until `release U V`, `unset U V`"),
             "commits (1,5,1) then (2,50,1)", r.short(),
             r.code == 0 and commits(r) == [(1, 5, 1), (2, 50, 1)])
    r = replay(yoke, "set 1 2 5\nset 1 2 8\nset 2 1 3\ncommit\n")
    rec.case("event script: `set` of one edge three times (both orientations) in a batch",
             spec(C, "`set U V W` inserts edge {U,V} or changes its weight"),
             "exit 0, weight 3 (the last set wins)", r.short(),
             r.code == 0 and commits(r) == [(1, 3, 1)])
    r = replay(yoke, f"set 1 2 {2**52}\n")
    r2 = replay(yoke, f"set 1 2 {2**52 + 1}\n")
    rec.case("yoke replay max-weight bound with 2 ids (P = 1): 2^52 and 2^52 + 1",
             spec(R, "max-weight takes |w| <= min(2^52, 2^61 / P)"),
             "the first exit 0, the second exit 2 naming the bound 4503599627370496",
             r.short(60) + " / " + r2.short(120), r.code == 0 and r2.code == 2 and
             "4503599627370496" in r2.err)
    bound = (2**52 - 1) // 4
    r = replay(yoke, f"set 1 2 {bound}\n", "--mode", "max-cardinality")
    r2 = replay(yoke, f"set 1 2 {bound + 1}\n", "--mode", "max-cardinality")
    rec.case(f"yoke replay max-cardinality bound with 2 ids: (2^52-1)/4 = {bound} and one more",
             spec(R, "max-cardinality and perfect take |w| <= (2^52 - 1) / (2P + 2)"),
             "the first exit 0, the second exit 2 naming the bound", r.short(60) + " / " +
             r2.short(120), r.code == 0 and r2.code == 2 and str(bound) in r2.err)
    r = replay(yoke, "set 1 2 5\nadd 3\ncommit\n", "--mode", "perfect")
    rec.case("yoke replay --mode perfect with an isolated vertex", helps_replay() + "; " +
             spec(C, "a commit with no perfect matching adds a `note:` line and the replay goes "
                  "on (exit 0"), "a line 'note: commit 1: no perfect matching (1 pairs for 3 "
             "vertices)', exit 0", r.short(200),
             r.code == 0 and "note: commit 1: no perfect matching" in r.out + r.err)
    text = "set 1 2 5\nset 2 3 6\ncommit\nset 3 4 9\ncommit\nremove 3\ncommit\n"
    a, b = replay(yoke, text, "--verify"), replay(yoke, text, "--verify")
    strip = lambda r: re.sub(r"repair_us \d+", "repair_us T", r.out)  # noqa: E731
    rec.case("yoke replay --verify twice: identical apart from the timings",
             spec(C, "Output is identical between runs apart from the timings"),
             "exit 0 both, equal output", a.short(100), a.code == 0 and b.code == 0 and
             strip(a) == strip(b) and len(commits(a) or []) == 3)
    r = replay(yoke, text, "--until", "2")
    rec.case("yoke replay SCRIPT --until 2", spec(R, "On a script, `--until N` stops after commit"
             " N"), "two commit lines", r.short(), r.code == 0 and len(commits(r) or []) == 2)


def helps_replay():
    return ('yoke replay --help: "note: commit I: no perfect matching (K pairs for N vertices)'
            ' [perfect mode]"')


def all_cases(rec, yoke, daemon=None):
    for group in (edge_list_cases, certificate_cases, script_cases):
        print(f"== formats.{group.__name__}", flush=True)
        group(rec, yoke)
