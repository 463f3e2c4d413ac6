"""Shared helpers of the Python oracle scripts: run the built `yoke` binary and the LEMON
file oracle, check a returned matching against the input, record failures with reproducers.

Runs under Debian's /usr/bin/python3 (python3-networkx, python3-scipy); no other packages.
"""

import argparse
import itertools
import json
import os
import re
import shutil
import subprocess
import sys
import time

MODES = ("max-weight", "max-cardinality", "perfect")
FAILURE_DIR = "/tmp/yoke-oracle-failures"
EXIT_NO_PERFECT = 3  # `yoke solve --mode perfect` without a perfect matching (README)


def small_scale():
    """The sanitizer build sets YOKE_TEST_SCALE=small; sweeps then run about a fifth."""
    return os.environ.get("YOKE_TEST_SCALE") == "small"


def scaled(full):
    return max(1, full // 5) if small_scale() else full


def parse_args(description):
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("--yoke", required=True, help="the built yoke binary")
    parser.add_argument("--lemon-file", required=True, help="the built oracle_lemon_file binary")
    parser.add_argument("--work-dir", required=True, help="scratch directory for edge lists")
    args = parser.parse_args()
    os.makedirs(args.work_dir, exist_ok=True)
    return args


def write_edge_list(path, edges, comment):
    """edges: list of (u, v, w) with non-negative integer ids."""
    with open(path, "w") as out:
        for line in comment.splitlines():
            out.write("# " + line + "\n")
        for u, v, w in edges:
            out.write(f"{u} {v} {w}\n")


def read_edge_list(path):
    edges = []
    with open(path) as source:
        for line in source:
            fields = line.split()
            if not fields or fields[0].startswith("#"):
                continue
            u, v, w = (int(x) for x in fields)
            edges.append((u, v, w))
    return edges


class Report:
    """Collects failures; each one keeps a copy of its input under FAILURE_DIR."""

    def __init__(self, name):
        self.name = name
        self.failures = []
        self.checks = 0
        self.started = time.monotonic()

    def check(self, ok, message, graph_path=None):
        self.checks += 1
        if ok:
            return True
        if graph_path:
            # Named after the case (the message up to its first colon), so files never collide.
            case = re.sub(r"[^A-Za-z0-9]+", "_", message.split(":")[0]).strip("_")
            os.makedirs(FAILURE_DIR, exist_ok=True)
            kept = os.path.join(FAILURE_DIR, f"{self.name}_{case}.txt")
            shutil.copyfile(graph_path, kept)
            message += f"\n  reproducer: {kept}"
        self.failures.append(message)
        print("FAIL: " + message, file=sys.stderr, flush=True)
        return False

    def finish(self):
        seconds = time.monotonic() - self.started
        print(f"{self.name}: {self.checks} checks, {len(self.failures)} failures, {seconds:.1f} s")
        sys.exit(1 if self.failures else 0)


def run_solve(yoke, graph_path, mode, certificate_path=None):
    """Returns (exit code, parsed JSON or None, stderr)."""
    command = [yoke, "solve", graph_path, "--mode", mode]
    if certificate_path:
        command += ["--certificate", certificate_path]
    done = subprocess.run(command, capture_output=True, text=True, timeout=120)
    try:
        result = json.loads(done.stdout) if done.stdout.strip() else None
    except json.JSONDecodeError:
        result = None
    return done.returncode, result, done.stderr


def run_verify(yoke, graph_path, certificate_path):
    done = subprocess.run([yoke, "verify", graph_path, certificate_path], capture_output=True,
                          text=True, timeout=120)
    try:
        result = json.loads(done.stdout) if done.stdout.strip() else None
    except json.JSONDecodeError:
        result = None
    return done.returncode, result, done.stderr


def lemon_optimum(lemon_file, graph_path, mode):
    """oracle: LEMON (Debian liblemon-dev 1.3.1) through tests/oracles/lemon_file_oracle.cpp."""
    done = subprocess.run([lemon_file, graph_path, mode], capture_output=True, text=True,
                          timeout=120, check=True)
    return json.loads(done.stdout)


def solve_and_check_matching(report, yoke, path, edges, mode, feasible, where,
                             certificate_path=None):
    """Runs `yoke solve` in `mode`; checks the exit code (0, or EXIT_NO_PERFECT when the
    oracle found no perfect matching) and that the output is a matching of `edges` with the
    reported weight and size. Returns the parsed output, or None when the exit code was wrong."""
    code, result, stderr = run_solve(yoke, path, mode, certificate_path)
    want_code = 0 if feasible else EXIT_NO_PERFECT
    if not report.check(code == want_code and result is not None,
                        f"{where}: yoke exit {code} (want {want_code}) {stderr.strip()}", path):
        return None
    problem = matching_problem(edges, result)
    report.check(problem is None, f"{where}: {problem}", path)
    return result


def matching_problem(edges, result):
    """None when result['matching'] is a matching of `edges` whose weight and size are the
    reported ones; otherwise what is wrong."""
    weight_of = {}
    for u, v, w in edges:
        weight_of[frozenset((u, v))] = w
    seen = set()
    total = 0
    for pair in result["matching"]:
        if len(pair) != 2:
            return f"matching entry {pair} is not a pair"
        u, v = pair
        key = frozenset((u, v))
        if key not in weight_of:
            return f"matched pair {u}-{v} is not an edge of the input"
        if u in seen or v in seen:
            return f"vertex of pair {u}-{v} is matched twice"
        seen.update((u, v))
        total += weight_of[key]
    if total != result["weight"] or len(result["matching"]) != result["pairs"]:
        return (f"reported weight {result['weight']} pairs {result['pairs']}, but the matching "
                f"sums to {total} with {len(result['matching'])} pairs")
    return None


def brute_force(edges):
    """Exhaustive enumeration over every subset of edges that is a matching (tiny graphs only).
    Returns {mode: (feasible, weight, pairs)} for the three modes."""
    vertices = {x for u, v, _ in edges for x in (u, v)}
    best_weight = (0, 0)          # (weight, -pairs): most weight, then fewest pairs
    best_card = (0, 0)            # (pairs, weight)
    best_perfect = None
    for size in range(len(vertices) // 2 + 1):
        for chosen in itertools.combinations(edges, size):
            ends = [x for u, v, _ in chosen for x in (u, v)]
            if len(set(ends)) != len(ends):
                continue
            weight = sum(w for _, _, w in chosen)
            best_weight = max(best_weight, (weight, -size))
            best_card = max(best_card, (size, weight))
            if 2 * size == len(vertices) and (best_perfect is None or weight > best_perfect):
                best_perfect = weight
    return {
        "max-weight": (True, best_weight[0], -best_weight[1]),
        "max-cardinality": (True, best_card[1], best_card[0]),
        "perfect": (best_perfect is not None, best_perfect or 0, len(vertices) // 2),
    }
