"""End to end: the postmortem answers of `yoke replay DATA_DIR --history V` (a vertex's history
with the cause of every change) and `--explain V --until SEQ` (its pair, price and closest
alternatives at a past seq) on a real daemon's journal.

References: the commit lines and diffs of the plain `yoke replay DATA_DIR --diffs` (every
history change must sit at a commit whose diff holds V, and every such diff line must be in the
history); the event script the test sent (vertices added and removed, and the causes, are its events);
and the oracle NetworkX max_weight_matching (Debian python3-networkx) on the graph rebuilt from
that script at the explained seq."""

import json
import os
import re
import unittest

from e2e_harness import (Daemon, check_binaries, gen_stream, networkx_weight,
                         replay_final_matching, run_yoke, scaled)

_COMMIT = re.compile(r"^commit (\d+) weight (-?\d+) pairs (\d+) repair_us \d+ seq (\d+)$")


def replay_diffs(data_dir, *extra):
    """`yoke replay DATA --diffs`: a list of (seq, weight, removed pairs, added pairs)."""
    commits = []
    for line in run_yoke("replay", data_dir, "--diffs", *extra).stdout.splitlines():
        match = _COMMIT.match(line)
        if match:
            commits.append((int(match[4]), int(match[2]), [], []))
            continue
        fields = line.split()
        if len(fields) == 3 and fields[0] in "+-":
            pair = (int(fields[1]), int(fields[2]))
            commits[-1][3 if fields[0] == "+" else 2].append(pair)
    return commits


def json_lines(text):
    return [json.loads(line) for line in text.splitlines() if line.strip()]


def event_words(event):
    _, kind, u, v, w = event
    return {"add": f"add {u}", "remove": f"remove {u}", "unset": f"unset {u} {v}",
            "set": f"set {u} {v} {w}"}[kind]


class HistoryTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def test_stolen_partner_names_the_stealing_event(self):
        # Three batches sent one at a time (--in-flight 1: each its own window and commit):
        # 1-2 (5); then an unrelated pair and 2-3 (9), which takes 2 from 1; then 1 leaves.
        daemon = Daemon(self).start()
        path = os.path.join(daemon.dir, "steal.txt")
        with open(path, "w") as out:
            out.write("set 1 2 5\ncommit\nset 5 6 1\nset 2 3 9\ncommit\nremove 1\ncommit\n")
        daemon.yoke("send", path, "--in-flight", "1", "--client-id", "hist")
        self.assertEqual(daemon.terminate(), 0, daemon.diagnostics())

        [history] = json_lines(run_yoke("replay", daemon.data_dir, "--history", "1",
                                        "--json").stdout)
        self.assertEqual((history["kind"], history["vertex"], history["unit"]),
                         ("history", 1, "seq"))
        changes = [(c["at"], c["change"], c.get("other")) for c in history["changes"]]
        self.assertEqual(changes, [(1, "added", None), (1, "pair_gained", 2),
                                   (2, "pair_lost", 2), (3, "removed", None)])
        self.assertEqual(history["changes"][1]["cause"], {"kind": "first_solve"})
        lost = history["changes"][2]["cause"]
        self.assertEqual((lost["kind"], lost["event"], lost["index"], lost["seq"],
                          lost["client_id"]), ("event", "set 2 3 9", 1, 2, "hist"))
        self.assertGreater(lost["client_batch"], 0)
        self.assertEqual(history["partners"], [{"other": 2, "weight": 5, "from": 1,
                                                "from_start": False, "to": 2}])
        self.assertFalse(history["end"]["present"])

        text = run_yoke("replay", daemon.data_dir, "--history", "1").stdout
        self.assertIn("seq 2: pair with 2 lost (weight 5): cause set 2 3 9 [seq 2, "
                      "client hist, batch ", text)
        self.assertIn("  2 (weight 5) from seq 1 to seq 2\n", text)

        # At seq 2, 1 is alone: price 0, its edge to 2 (now paired with 3) the alternative.
        [explained] = json_lines(run_yoke("replay", daemon.data_dir, "--explain", "1",
                                          "--until", "2", "--json").stdout)
        self.assertEqual((explained["at"], explained["mate"], explained["pair_weight"],
                          explained["price"], explained["dual_x2"]), (2, None, None, 0, 0))
        self.assertEqual([(a["other"], a["weight"], a["other_mate"])
                          for a in explained["alternatives"]], [(2, 5, 3)])

    def test_history_and_explanations_follow_the_stream(self):
        daemon = Daemon(self).start()
        script = gen_stream(os.path.join(daemon.dir, "stream.txt"), "dispatch",
                            scaled(120, 60), scaled(1500, 500), 10, seed=11)
        # A few batches in flight: many commits, some of them of several seqs.
        daemon.yoke("send", script.path, "--in-flight", "3")
        self.assertEqual(daemon.terminate(), 0, daemon.diagnostics())

        commits = replay_diffs(daemon.data_dir)
        self.assertGreater(len(commits), len(script.batches) // 4)
        # The vertex whose pair changed most often, and one that is removed, if any.
        counts = {}
        for _, _, removed, added in commits:
            for a, b in removed + added:
                counts[a] = counts.get(a, 0) + 1
                counts[b] = counts.get(b, 0) + 1
        busiest = max(sorted(counts), key=lambda k: counts[k])
        removed_ids = [e[2] for batch in script.batches for e in batch if e[1] == "remove"]
        watched = [busiest] + [v for v in removed_ids[:1] if v != busiest]

        args = []
        for vertex in watched:
            args += ["--history", str(vertex)]
        histories = json_lines(run_yoke("replay", daemon.data_dir, *args, "--json").stdout)
        self.assertEqual([h["vertex"] for h in histories], watched)
        for history in histories:
            self.check_history(history, commits, script)

        # Explanations at a few seqs (one may sit inside a commit of several seqs: the answer
        # then names the seq it stopped at).
        seqs = [commits[len(commits) // 4][0], commits[len(commits) // 2][0] + 1,
                commits[-1][0]]
        for until in seqs:
            self.check_explanation(daemon.data_dir, busiest, until, commits, script)

        text = run_yoke("replay", daemon.data_dir, "--explain", str(busiest), "--until",
                        str(seqs[0])).stdout
        self.assertIn(f"explain {busiest} at seq ", text)
        self.assertRegex(text, rf"\n{busiest} is (paired with \d+ \(weight -?\d+\)|unpaired)\. "
                               r"Its price is -?\d+(\.5)?\.\n")

    def test_an_odd_max_cardinality_pools_explanations_equal_the_replays(self):
        # An odd max-cardinality pool holds the phantom vertex: the daemon's first explanation
        # after each commit has a worker search for the certificate's prices, between that
        # pool's repairs (docs/mathematics.md §9). Oracle: `yoke replay DATA_DIR --explain`,
        # which makes them itself from the journal.
        daemon = Daemon(self, config='[pools.odd]\nmode = "max-cardinality"\n').start()
        # Two streams on the same 61 street points (no arrivals or departures: the pool stays
        # odd), the second sent after the first; explanations after each.
        for seed in (23, 24):
            script = gen_stream(os.path.join(daemon.dir, f"odd-{seed}.txt"), "city", 61, 300, 10,
                                seed=seed,
                                extra=("--mix", "nudge-weight=40,random-weight=40,unset=10,link=10"))
            daemon.yoke("send", script.path, "--pool", "odd")
            for vertex in (0, 17, 60):
                asked = daemon.yoke_json("query", "explain", "--pool", "odd", "--vertex",
                                         str(vertex), "--alternatives", "50")
                [replayed] = json_lines(run_yoke("replay", daemon.data_dir, "--pool", "odd",
                                                 "--explain", str(vertex), "--json",
                                                 "--alternatives", "50").stdout)[-1:]
                self.assertEqual(asked["seq"], replayed["at"])
                self.assertEqual({k: x for k, x in asked.items() if k not in ("pool", "seq")},
                                 {k: x for k, x in replayed.items()
                                  if k not in ("kind", "pool", "unit", "at")}, vertex)

    def check_history(self, history, commits, script):
        vertex = history["vertex"]
        # Every pair change of the history at a commit whose diff holds it, and back.
        from_diffs = set()
        for seq, _, removed, added in commits:
            for kind, pairs in (("pair_lost", removed), ("pair_gained", added)):
                for a, b in pairs:
                    if vertex in (a, b):
                        from_diffs.add((seq, kind, b if a == vertex else a))
        from_history = [(c["at"], c["change"], c["other"]) for c in history["changes"]
                        if c["change"] in ("pair_lost", "pair_gained")]
        self.assertEqual(len(from_history), len(set(from_history)))
        self.assertEqual(set(from_history), from_diffs, vertex)

        # The partner at every commit, from the diffs and from the partner intervals.
        partner = None
        for seq, _, removed, added in commits:
            for a, b in removed:
                if vertex in (a, b):
                    partner = None
            for a, b in added:
                if vertex in (a, b):
                    partner = b if a == vertex else a
            held = [p["other"] for p in history["partners"]
                    if p["from"] <= seq and (p["to"] is None or seq < p["to"])]
            self.assertEqual(held, [partner] if partner is not None else [], (vertex, seq))
        self.assertEqual(history["end"]["mate"], partner)

        # Causes: an event of the batch sent as that seq (one batch per seq), or the
        # first solve at the pool's first commit.
        first_seq = commits[0][0]
        for change in history["changes"]:
            cause = change["cause"]
            if cause["kind"] == "first_solve":
                self.assertEqual(change["at"], first_seq, change)
                continue
            self.assertEqual(cause["kind"], "event", change)
            self.assertTrue(change["first"] <= cause["seq"] <= change["at"], change)
            batch = script.batches[cause["seq"] - 1]
            self.assertIn(cause["event"], [event_words(e) for e in batch], change)

        # Vertices added and removed: the script's first mention and its `remove`.
        alive, expected = False, []
        for seq, batch in enumerate(script.batches, start=1):
            for event in batch:
                _, kind, u, v, _ = event
                if kind == "remove" and u == vertex and alive:
                    alive = False
                    expected.append((seq, "removed", event_words(event)))
                elif (kind in ("add", "set") and vertex in ((u, v) if kind == "set" else (u,))
                      and not alive):
                    alive = True
                    expected.append((seq, "added", event_words(event)))
        got = [(c["cause"]["seq"], c["change"], c["cause"]["event"]) for c in history["changes"]
               if c["change"] in ("added", "removed")]
        self.assertEqual(got, expected, vertex)

    def check_explanation(self, data_dir, vertex, until, commits, script):
        [answer] = json_lines(run_yoke("replay", data_dir, "--explain", str(vertex), "--until",
                                       str(until), "--json").stdout)
        at = answer["at"]
        self.assertLessEqual(at, until)
        self.assertIn(at, [c[0] for c in commits])
        # The matching at `at`, accumulated from the diffs of the plain replay.
        pairs = set()
        for seq, _, removed, added in commits:
            if seq > at:
                break
            pairs -= set(removed)
            pairs |= set(added)
        # ... is the matching `yoke replay --until AT --diffs` adds up to.
        self.assertEqual(replay_final_matching(data_dir, "--until", str(at))[0], pairs)
        mates = {}
        for a, b in pairs:
            mates[a], mates[b] = b, a
        graph = script.graph(upto=at)  # one batch per seq from a fresh pool
        # Oracle: NetworkX max_weight_matching on the graph rebuilt from the script.
        self.assertEqual(sum(graph[a][b]["weight"] for a, b in pairs), networkx_weight(graph))
        if not answer["present"]:
            self.assertFalse(graph.has_node(vertex))
            return
        self.assertTrue(graph.has_node(vertex))
        self.assertEqual(answer["mate"], mates.get(vertex))
        if answer["mate"] is not None:
            self.assertEqual(answer["pair_weight"], graph[vertex][answer["mate"]]["weight"])
        others = [n for n in graph.neighbors(vertex) if n != answer["mate"]]
        self.assertEqual(len(answer["alternatives"]), min(5, len(others)))
        slacks = []
        for alternative in answer["alternatives"]:
            other = alternative["other"]
            self.assertEqual(alternative["weight"], graph[vertex][other]["weight"])
            self.assertEqual(alternative["other_mate"], mates.get(other))
            self.assertGreaterEqual(alternative["slack_x2"], 0)
            self.assertEqual(alternative["slack"] * 2, alternative["slack_x2"])
            slacks.append(alternative["slack_x2"])
        self.assertEqual(slacks, sorted(slacks))
        self.assertEqual(answer["price"] * 2, answer["dual_x2"] - answer["weight_offset"])


if __name__ == "__main__":
    unittest.main()
