"""End to end: the live demo (tools/demo/city_sim.py) against a real yoked.

The simulator runs as its own process, output piped (so in its plain line-per-update form), on
the harness daemon's endpoints. Checks: it exits 0; its final numbers (seq, weight, pairs per
pool; vertices and edges of its own model of the pool) are the daemon's (`summary` query); the
journal of the lead pool replays with every certificate checked (`yoke replay DATA --pool quillory
--verify`) and ends at the same state; dispatched pairs are held while the courier travels
(holds happen, and no diff of either pool ever removes a held pair, nor is one missing from the
matching after a batch: 0 hold violations); the same seed and tick count give the same run;
SIGINT ends a run cleanly with the final summary. The lead pool is declared with a churn bonus
when the daemon accepts the key (the check that the shadow pool, plain maximum weight on the
same graph, weighs at least as much holds either way)."""

import json
import os
import signal
import subprocess
import sys
import time
import unittest

from e2e_harness import (SLOWDOWN, Daemon, DaemonExited, check_binaries, replay_commits,
                         scaled)

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DEMO_DIR = os.path.join(ROOT, "tools", "demo")
SIM = os.path.join(DEMO_DIR, "city_sim.py")
sys.path.insert(0, DEMO_DIR)

from city_sim import pools_toml  # noqa: E402

BONUS = 60


class DemoTest(unittest.TestCase):
    def setUp(self):
        check_binaries()

    def start_daemon(self, pool_names=(("quillory", "quillory-plain"),)):
        """A daemon with the demo's pools declared: with the churn bonus, or without it when
        this yoked does not know the key yet. Returns (daemon, bonus or None)."""
        for bonus in (BONUS, None):
            config = "".join(pools_toml(lead, shadow, bonus) for lead, shadow in pool_names)
            daemon = Daemon(self, config=config)
            try:
                return daemon.start(), bonus
            except DaemonExited:
                if bonus is None or "churn_bonus" not in daemon.log_text() + daemon.stderr_text():
                    raise
        raise AssertionError("unreachable")

    def sim(self, daemon, *args, result="result.json", pool="quillory", shadow="quillory-plain"):
        """Starts the simulator on the daemon's endpoints; returns (process, result path)."""
        path = os.path.join(daemon.dir, f"{pool}-{result}")
        env = dict(os.environ)
        env["PYTHONPATH"] = os.pathsep.join(
            [p for p in env.get("PYTHONPATH", "").split(os.pathsep) if p] +
            [os.path.join(ROOT, "tools", "python")])
        child = subprocess.Popen(
            [sys.executable, SIM, "--ingest", daemon.ingest, "--publish", daemon.publish,
             "--query", daemon.query, "--pool", pool, "--shadow-pool", shadow,
             "--client-id", f"test-{pool}", "--result", path, *map(str, args)],
            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
        daemon.children.append(child)
        return child, path

    def finish(self, child, timeout_s):
        out, err = child.communicate(timeout=timeout_s * SLOWDOWN)
        self.assertEqual(child.returncode, 0, f"simulator exited {child.returncode}\n{err}")
        self.assertNotIn("\x1b[", out, "escape codes in piped output")
        finals = [line for line in out.splitlines() if line.startswith("demo: final")]
        self.assertEqual(len(finals), 1, out[-2000:])
        return out

    def check_against_daemon(self, daemon, result):
        """The simulator's own numbers are the daemon's, for both pools."""
        lead, shadow = result["pools"]
        for mine in (lead, shadow):
            summary = daemon.summary(mine["name"])
            self.assertIsNotNone(summary, mine["name"])
            self.assertEqual((summary["seq"], summary["weight"], summary["pairs"]),
                             (mine["seq"], mine["weight"], mine["pairs"]), mine["name"])
            self.assertEqual((summary["vertices"], summary["edges"]),
                             (result["couriers"] + result["orders"], result["edges"]),
                             mine["name"])
            self.assertEqual(mine["seq"], result["tick"])
            self.assertEqual(mine["hold_violations"], 0, mine["name"])
        # Held pairs are matched in both pools, so neither holds fewer pairs than are held.
        self.assertGreaterEqual(min(lead["pairs"], shadow["pairs"]), result["held_now"])
        # Same graph in both pools: plain maximum weight is at least the lead pool's weight,
        # and equal when the lead pool has no bonus (common knowledge: w(M*) is the maximum).
        self.assertGreaterEqual(shadow["weight"], lead["weight"])

    def test_run_matches_the_daemon_and_replays(self):
        daemon, bonus = self.start_daemon((("quillory", "quillory-plain"),
                                           ("quillory2", "quillory2-plain")))
        ticks = scaled(80, 25)
        args = ("--ticks", ticks, "--seconds", 120, "--tick-ms", 0, "--seed", 7,
                "--standing-ticks", 6)
        if bonus is not None:
            args += ("--churn-bonus", bonus)
        child, path = self.sim(daemon, *args)
        out = self.finish(child, 90)
        with open(path) as f:
            result = json.load(f)
        self.assertEqual(result["tick"], ticks)
        self.assertEqual(result["standing_ticks"], 6)
        self.assertGreater(result["dispatched"], 0, out[-2000:])
        self.assertGreater(result["held_total"], 0, out[-2000:])
        # Every dispatched pair was held first; those delivered are no longer held.
        self.assertEqual(result["held_total"], result["dispatched"])
        self.assertEqual(result["held_now"], result["held_total"] - result["delivered"])
        self.check_against_daemon(daemon, result)
        lead = result["pools"][0]
        self.assertIn(f"quillory: seq={lead['seq']} pairs={lead['pairs']} weight={lead['weight']}",
                      out)
        self.assertIn(f"held={result['held_now']} held_total={result['held_total']}",
                      out)
        self.assertIn("hold_violations=0", out)
        self.assertNotRegex(out, r"hold_violations=(?!0\b)|hold_violations=0/(?!0\b)")

        # The same seed and tick count, into two more pools declared the same way: the same run.
        child, path2 = self.sim(daemon, *args, pool="quillory2", shadow="quillory2-plain")
        self.finish(child, 90)
        with open(path2) as f:
            again = json.load(f)
        for key in ("weight", "pairs", "seq", "changed_total", "broken_total", "hold_violations"):
            self.assertEqual([p[key] for p in again["pools"]],
                             [p[key] for p in result["pools"]], key)
        for key in ("held_total", "held_now", "delivered"):
            self.assertEqual(again[key], result[key], key)

        self.assertEqual(daemon.terminate(), 0)
        commits = replay_commits(daemon.data_dir, "--pool", "quillory", "--verify")
        self.assertEqual((commits[-1]["seq"], commits[-1]["weight"], commits[-1]["pairs"]),
                         (lead["seq"], lead["weight"], lead["pairs"]))

    def test_sigint_ends_the_run_cleanly(self):
        daemon, bonus = self.start_daemon()
        args = ("--seconds", 120, "--tick-ms", 50)
        if bonus is not None:
            args += ("--churn-bonus", bonus)
        child, path = self.sim(daemon, *args)
        deadline = time.monotonic() + 30 * SLOWDOWN
        while (time.monotonic() < deadline
               and (daemon.summary("quillory") or {"seq": 0})["seq"] < 10):
            self.assertIsNone(child.poll(), "the simulator ended early")
            time.sleep(0.05)
        child.send_signal(signal.SIGINT)
        self.finish(child, 30)
        with open(path) as f:
            result = json.load(f)
        self.assertEqual(result["stopped_by"], "SIGINT")
        self.assertGreaterEqual(result["tick"], 10)
        self.check_against_daemon(daemon, result)


if __name__ == "__main__":
    unittest.main()
