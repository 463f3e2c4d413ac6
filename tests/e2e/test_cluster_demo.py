"""End to end: the cluster demo (tools/demo/cluster_demo.py, `tools/demo.sh --cluster`), short.

The driver runs as its own process, output piped, with the built yoke and yoked: three
nats-server nodes, two yoked (east owns quillory, west owns quillory-plain, each stands by for
the other's), east SIGKILLed, then the stream's leader node SIGKILLed. Checks: it exits 0; west
took quillory over (the sender saw the move east -> west, with a gap from the kill to west's
first acknowledgement); every batch was accepted, once (each pool's seq is the tick count,
what the simulator saw is what the serving daemon answers); each pool's replay from the
cluster certified every commit and ends at the daemon's seq, weight, pairs and matching; the
daemons exited 0 on SIGTERM; no process of the run is left. A Ctrl-C (SIGINT) after the
takeover ends the evening early and the run still checks out, with nothing left behind.
"""

import json
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import unittest

from e2e_harness import SLOWDOWN, YOKE, YOKED, check_binaries

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DRIVER = os.path.join(ROOT, "tools", "demo", "cluster_demo.py")


def gone(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    with open(f"/proc/{pid}/stat") as f:  # a zombie not reaped yet counts as gone
        return f.read().split(")")[-1].split()[0] == "Z"


class ClusterDemoTest(unittest.TestCase):
    def setUp(self):
        check_binaries()
        self.dir = tempfile.mkdtemp(prefix="yoke-cluster-demo-")
        self.child = None

    def tearDown(self):
        if self.child is not None and self.child.poll() is None:
            self.child.kill()  # its children die with it (PR_SET_PDEATHSIG)
            self.child.wait()
        if os.environ.get("YOKE_E2E_KEEP") == "1":
            print(f"kept {self.dir}")
        else:
            shutil.rmtree(self.dir, ignore_errors=True)

    def start(self, *args):
        env = dict(os.environ)
        env["PYTHONPATH"] = os.pathsep.join(
            [p for p in env.get("PYTHONPATH", "").split(os.pathsep) if p] +
            [os.path.join(ROOT, "tools", d) for d in ("python", "nats_cluster", "demo")])
        self.child = subprocess.Popen(
            [sys.executable, DRIVER, "--yoke", YOKE, "--yoked", YOKED, "--dir", self.dir,
             "--plain", *map(str, args)],
            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
        return self.child

    def finish(self, out="", limit_s=180):
        rest, err = self.child.communicate(timeout=limit_s * SLOWDOWN)
        out += rest
        with open(os.path.join(self.dir, "result.json")) as f:
            result = json.load(f)
        self.assertEqual(self.child.returncode, 0,
                         f"driver exited {self.child.returncode}\n{out[-3000:]}\n{err[-6000:]}")
        self.assertNotIn("\x1b[", out, "escape codes in piped output")
        return out, result

    def check_run(self, out, result):
        self.assertTrue(result["ok"], result["problems"])
        ticks = result["evening"]["tick"]
        self.assertGreater(ticks, 10)
        # The takeover: quillory moved from the killed east to west, once; the gap is from the
        # kill to west's first acknowledgement (at least the takeover silence of 1.5 s).
        moves = result["takeovers"]["quillory"]
        self.assertEqual([(m["from"], m["to"]) for m in moves], [("east", "west")])
        self.assertGreater(moves[0]["gap_s"], 1.0)
        self.assertLess(moves[0]["gap_s"], 30.0)
        self.assertNotIn("quillory-plain", result["takeovers"])
        self.assertIn("quillory: west acknowledges (was east)", out)
        self.assertRegex(out, r"takeover_gaps_s=quillory:\d+\.\d\d")
        self.assertIn("west's log: pool_taken pool=quillory reason=takeover", out)
        for pool in ("quillory", "quillory-plain"):
            said = result["daemons_said"][pool]
            self.assertEqual(said["served_by"], "west", pool)
            self.assertEqual(said["seq"], ticks, pool)  # every batch applied, once
            replay = result["replays"][pool]
            self.assertTrue(replay["equal"], replay)
            self.assertEqual(replay["commits"], ticks, pool)
            self.assertEqual((replay["seq"], replay["weight"], replay["pairs"]),
                             (said["seq"], said["weight"], said["pairs"]), pool)
            self.assertIn(f"{pool}: {ticks} commits, each certificate held", out)
        track = {p["name"]: p for p in result["evening"]["pools"]}
        for pool, p in track.items():
            self.assertEqual(p["hold_violations"], 0, pool)
            self.assertEqual((p["seq"], p["weight"]),
                             (result["daemons_said"][pool]["seq"],
                              result["daemons_said"][pool]["weight"]), pool)
        self.assertEqual(result["exit_codes"], {"west": 0})
        for name, pid in result["pids"].items():
            self.assertTrue(gone(pid), f"{name} (pid {pid}) is still running")

    def test_a_short_run_takes_over_survives_a_nats_node_and_replays_certified(self):
        self.start("--seconds", 14)
        out, result = self.finish()
        self.check_run(out, result)
        self.assertEqual(result["stopped_by"], "end of run")
        killed = [text for _, text in result["events"] if text.startswith("SIGKILL NATS")]
        self.assertEqual(len(killed), 1, result["events"])
        # The stream went on across the election (the batches after the kill were acknowledged,
        # by the same daemon), and the node came back with the whole log.
        self.assertEqual(set(result["longest_ack_wait_after_nats_kill_s"]),
                         {"quillory", "quillory-plain"})
        self.assertIn(result["nats_restarted"]["node"], killed[0])
        self.assertIn("restarted; its copy of the stream caught up", out)

    def test_ctrl_c_after_the_takeover_ends_early_and_still_checks_out(self):
        child = self.start("--seconds", 120, "--kill-yoked-at", 0.05, "--kill-nats-at", 0)
        out = ""
        deadline = time.monotonic() + 90 * SLOWDOWN
        while "takeover_gaps_s=quillory:" not in out:
            line = child.stdout.readline()
            self.assertTrue(line, f"the driver ended early:\n{out[-3000:]}")
            self.assertLess(time.monotonic(), deadline, out[-3000:])
            out += line
        child.send_signal(signal.SIGINT)
        out, result = self.finish(out)
        self.check_run(out, result)
        self.assertEqual(result["stopped_by"], "SIGINT")


if __name__ == "__main__":
    unittest.main()
