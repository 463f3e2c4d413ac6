#!/usr/bin/python3
"""yoke (the built `yoke solve` / `yoke verify` binaries) against NetworkX.

oracle: networkx.max_weight_matching (Debian python3-networkx 2.8.8) in max-weight mode and
with maxcardinality=True in max-cardinality mode; perfect mode follows from the latter (a
perfect matching exists iff the maximum cardinality is n/2, and then the weights agree).
Before judging yoke, NetworkX itself is checked against exhaustive enumeration and LEMON
(Debian liblemon-dev 1.3.1) on tiny graphs.

Usage: networkx_oracle.py --yoke YOKE --lemon-file ORACLE_LEMON_FILE --work-dir DIR
"""

import json
import os
import random
import subprocess

import networkx as nx

import oracle_common as oc


def networkx_optima(edges):
    """{mode: (feasible, weight, pairs)} from networkx.max_weight_matching."""
    graph = nx.Graph()
    for u, v, w in edges:
        graph.add_edge(u, v, weight=w)

    def summed(matching):
        return sum(graph[u][v]["weight"] for u, v in matching), len(matching)

    # oracle: networkx.max_weight_matching(G) (Debian python3-networkx)
    mw_weight, mw_pairs = summed(nx.max_weight_matching(graph))
    # oracle: networkx.max_weight_matching(G, maxcardinality=True) (Debian python3-networkx)
    mc_weight, mc_pairs = summed(nx.max_weight_matching(graph, maxcardinality=True))
    perfect = 2 * mc_pairs == graph.number_of_nodes()
    return {
        "max-weight": (True, mw_weight, mw_pairs),
        "max-cardinality": (True, mc_weight, mc_pairs),
        "perfect": (perfect, mc_weight if perfect else 0, mc_pairs),
    }


def compare(report, args, path, edges, expected, label, verify=False):
    """Solves `path` in every mode with yoke and compares with `expected` (networkx_optima)."""
    for mode in oc.MODES:
        feasible, weight, pairs = expected[mode]
        certificate = os.path.join(args.work_dir, "cert.json") if verify else None
        where = f"{label} {mode}"
        result = oc.solve_and_check_matching(report, args.yoke, path, edges, mode, feasible,
                                             where, certificate)
        if result is None:
            continue
        if mode == "perfect" and not feasible:
            # The evidence is a maximum-cardinality matching of maximum weight (solve.h).
            weight, pairs = expected["max-cardinality"][1], expected["max-cardinality"][2]
            report.check(result["status"] == "no_perfect_matching",
                         f"{where}: status {result['status']}", path)
        ok = result["weight"] == weight and (mode == "max-weight" or result["pairs"] == pairs)
        report.check(ok, f"{where}: yoke weight {result['weight']} pairs {result['pairs']}, "
                         f"networkx weight {weight} pairs {pairs}", path)
        if verify:
            vcode, verdict, vstderr = oc.run_verify(args.yoke, path, certificate)
            report.check(vcode == 0 and verdict is not None and verdict.get("valid") is True,
                         f"{where}: yoke verify exit {vcode} {verdict} {vstderr.strip()}", path)


def random_edges(rng, n, p, lo, hi, ids):
    """A random graph on the given external ids, edges shuffled, both orientations."""
    edges = []
    for a in range(n):
        for b in range(a + 1, n):
            if rng.random() < p:
                u, v = (ids[a], ids[b]) if rng.random() < 0.5 else (ids[b], ids[a])
                edges.append((u, v, rng.randint(lo, hi)))
    rng.shuffle(edges)
    return edges


def check_oracles_agree(report, args, rng):
    """NetworkX vs exhaustive enumeration vs LEMON on tiny graphs; no yoke involved."""
    path = os.path.join(args.work_dir, "agree.txt")
    for case in range(oc.scaled(40)):
        n = rng.randint(2, 8)
        edges = random_edges(rng, n, rng.choice((0.3, 0.6, 1.0)), rng.choice((-4, 0, 3)), 6,
                             list(range(n)))
        if len(edges) > 14:
            edges = edges[:14]
        if not edges:
            continue
        oc.write_edge_list(path, edges, f"oracle agreement case {case}")
        truth = oc.brute_force(edges)
        networkx = networkx_optima(edges)
        for mode in oc.MODES:
            lemon = oc.lemon_optimum(args.lemon_file, path, mode)
            lemon_answer = (lemon["feasible"], lemon["weight"] if lemon["feasible"] else 0,
                            lemon["pairs"])
            for name, answer in (("networkx", networkx[mode]), ("LEMON", lemon_answer)):
                same = answer[0] == truth[mode][0] and answer[1] == truth[mode][1]
                if mode != "max-weight" and truth[mode][0]:
                    same = same and answer[2] == truth[mode][2]
                report.check(same, f"oracle agreement case {case} {mode}: {name} {answer}, "
                                   f"exhaustive enumeration {truth[mode]}", path)


def check_random_families(report, args, rng):
    """The script's own seeded random graphs, with scattered external ids."""
    families = [  # (name, vertices, edge probability, min weight, max weight)
        ("mixed", (2, 40), 0.15, -20, 60),
        ("dense", (2, 24), 0.7, 1, 100),
        ("ties", (2, 40), 0.2, 5, 5),
        ("zeros", (2, 30), 0.2, -1, 1),
        ("negative", (2, 30), 0.25, -30, -1),
        ("sparse", (10, 60), 0.05, 1, 9),
    ]
    path = os.path.join(args.work_dir, "random.txt")
    for name, (lo_n, hi_n), p, lo, hi in families:
        for seed in range(oc.scaled(40)):
            n = rng.randint(lo_n, hi_n)
            ids = rng.sample(range(10 ** 12), n)
            edges = random_edges(rng, n, p, lo, hi, ids)
            if not edges:
                continue
            label = f"networkx random {name} n{n} seed{seed}"
            oc.write_edge_list(path, edges, label)
            compare(report, args, path, edges, networkx_optima(edges), label,
                    verify=seed % 5 == 0)


def check_generated(report, args):
    """`yoke gen` outputs of every family (tools/graphgen through the CLI)."""
    path = os.path.join(args.work_dir, "gen.txt")
    for seed in range(1, oc.scaled(12) + 1):
        n = 6 + 5 * seed
        commands = {
            "city": ["city", "--vertices", str(n), "--neighbours", str(2 + seed % 5)],
            "random": ["random", "--vertices", str(n), "--edges", str(2 * n),
                       "--min-weight", "-30", "--max-weight", "90"],
            "dispatch": ["dispatch", "--couriers", str(n // 2), "--orders", str(n - n // 2),
                         "--per-order", str(1 + seed % 4)],
            "complete": ["complete", "--vertices", str(min(n, 30)), "--min-weight", "-5",
                         "--max-weight", "40"],
            "stress": ["stress", "--vertices", str(n)],
        }
        for family, command in commands.items():
            subprocess.run([args.yoke, "gen", *command, "--seed", str(seed), "-o", path],
                           check=True, timeout=60)
            edges = oc.read_edge_list(path)
            if edges:
                label = f"networkx yoke-gen {family} seed{seed}"
                compare(report, args, path, edges, networkx_optima(edges), label,
                        verify=seed % 3 == 0)


def check_huge_ids(report, args, rng):
    """Ids near 2^64 - 1 through the CLI: exact ids back, same optimum as NetworkX and LEMON."""
    top = 2 ** 64 - 1
    path = os.path.join(args.work_dir, "huge_ids.txt")
    cases = [
        ("tiny", [top, top - 1, top - 2, 2 ** 63, 2 ** 63 - 1, 0, 1, top - 10 ** 9], 0.6),
        ("sparse", rng.sample(range(top - 10 ** 7, top + 1), 150) + list(range(50)), 0.03),
    ]
    for name, ids, p in cases:
        for seed in range(3):
            edges = random_edges(rng, len(ids), p, -3, 25, ids)
            label = f"huge ids {name} seed{seed}"
            oc.write_edge_list(path, edges, label)
            compare(report, args, path, edges, networkx_optima(edges), label, verify=True)
            for mode in oc.MODES:
                # oracle: LEMON (Debian liblemon-dev 1.3.1) on the same file
                lemon = oc.lemon_optimum(args.lemon_file, path, mode)
                code, result, _ = oc.run_solve(args.yoke, path, mode)
                if result is None:
                    continue
                same = (code == 0) == lemon["feasible"]
                if lemon["feasible"]:
                    same = same and result["weight"] == lemon["weight"]
                    if mode != "max-weight":
                        same = same and result["pairs"] == lemon["pairs"]
                report.check(same, f"{label} {mode}: yoke {result['weight']}/{result['pairs']}"
                                   f" exit {code}, LEMON {lemon}", path)
            if name == "tiny":
                truth = oc.brute_force(edges)["max-weight"]
                _, result, _ = oc.run_solve(args.yoke, path, "max-weight")
                report.check(result is not None and result["weight"] == truth[1],
                             f"{label}: exhaustive enumeration {truth}, yoke {result}", path)


def check_verify_rejects(report, args):
    """`yoke verify` must be able to fail: a tampered certificate is rejected."""
    path = os.path.join(args.work_dir, "tamper.txt")
    certificate = os.path.join(args.work_dir, "tamper_cert.json")
    edges = [(0, 1, 5), (1, 2, 1), (2, 3, 5), (3, 4, 1), (4, 5, 5), (5, 0, 1), (1, 4, 11)]
    oc.write_edge_list(path, edges, "6-cycle with a chord: optimum 17")
    code, _, _ = oc.run_solve(args.yoke, path, "max-weight", certificate)
    if not report.check(code == 0, "tamper case: solve failed", path):
        return
    with open(certificate) as source:
        original = json.load(source)
    vertices = original.get("vertices") or []
    if not report.check(bool(vertices), "tamper case: certificate has no vertices list", path):
        return
    vertices[0]["dual_x2"] += 2  # dual objective no longer equals the matching's weight
    with open(certificate, "w") as out:
        json.dump(original, out)
    vcode, verdict, _ = oc.run_verify(args.yoke, path, certificate)
    report.check(vcode != 0 and (verdict is None or verdict.get("valid") is False),
                 f"tamper case: yoke verify accepted a tampered certificate ({verdict})", path)


def check_large(report, args):
    """A few graphs of about 2000 vertices (NetworkX takes seconds on each)."""
    path = os.path.join(args.work_dir, "large.txt")
    for family, command in (
            ("stress", ["stress", "--vertices", "2000", "--seed", "7"]),
            ("random", ["random", "--vertices", "2000", "--edges", "3000", "--min-weight", "1",
                        "--max-weight", "20", "--seed", "8"])):
        subprocess.run([args.yoke, "gen", *command, "-o", path], check=True, timeout=60)
        edges = oc.read_edge_list(path)
        compare(report, args, path, edges, networkx_optima(edges),
                f"networkx large {family}", verify=True)


def main():
    args = oc.parse_args(__doc__)
    report = oc.Report("oracle_networkx")
    rng = random.Random(20261202)
    check_oracles_agree(report, args, rng)
    check_random_families(report, args, rng)
    check_generated(report, args)
    check_huge_ids(report, args, rng)
    check_verify_rejects(report, args)
    check_large(report, args)
    report.finish()


if __name__ == "__main__":
    main()
