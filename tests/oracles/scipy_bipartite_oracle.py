#!/usr/bin/python3
"""yoke (the built `yoke solve` binary) against scipy's assignment solver on bipartite graphs.

oracle: scipy.optimize.linear_sum_assignment (Debian python3-scipy 1.10.1). Common knowledge
(bipartite matching LP relaxations are integral): the best assignment of a suitably padded
profit matrix is the optimum matching.

- max-weight: profit[i][j] = max(w, 0) for an edge, 0 for a missing pair. An assigned entry of
  profit 0 means "leave both unmatched" (no edge, or an edge not worth taking): every matching
  extends to an assignment of the same profit by pairing leftover rows and columns at 0, and the
  positive entries of any assignment form a matching of the same weight. So the best assignment
  of the rectangular matrix is the maximum-weight matching.
- max-cardinality: profit = w + C for an edge, 0 for a missing pair, with C so large that one
  more pair always wins; the edge entries of the best assignment are a maximum-cardinality
  matching of maximum weight.
- perfect (square graphs only): profit = w for an edge, -BIG for a missing pair; a perfect
  matching exists iff the best assignment avoids every -BIG entry.

Usage: scipy_bipartite_oracle.py --yoke YOKE --lemon-file ORACLE_LEMON_FILE --work-dir DIR
"""

import os
import random
import subprocess

import numpy as np
from scipy.optimize import linear_sum_assignment

import oracle_common as oc


def assignment_optima(left, right, edges):
    """{mode: (feasible, weight, pairs)}; left and right list the ids of each side."""
    row = {v: i for i, v in enumerate(left)}
    col = {v: j for j, v in enumerate(right)}
    largest = max([abs(w) for _, _, w in edges] + [1])
    shape = (len(left), len(right))

    def best(profit):
        rows, cols = linear_sum_assignment(profit, maximize=True)
        return rows, cols

    def oriented(u, v):
        return (row[u], col[v]) if u in row else (row[v], col[u])

    # max-weight
    profit = np.zeros(shape)
    for u, v, w in edges:
        profit[oriented(u, v)] = max(w, 0)
    rows, cols = best(profit)
    mw_weight = int(round(profit[rows, cols].sum()))

    # max-cardinality: (n+1) * largest + 1 outweighs any weight difference (see lemon_core.cpp)
    offset = (len(left) + len(right) + 1) * largest + 1
    is_edge = np.zeros(shape, dtype=bool)
    weight = np.zeros(shape)
    for u, v, w in edges:
        is_edge[oriented(u, v)] = True
        weight[oriented(u, v)] = w
    rows, cols = best(np.where(is_edge, weight + offset, 0.0))
    used = is_edge[rows, cols]
    mc_pairs = int(used.sum())
    mc_weight = int(round(weight[rows, cols][used].sum()))

    answers = {
        "max-weight": (True, mw_weight, None),
        "max-cardinality": (True, mc_weight, mc_pairs),
    }
    if len(left) == len(right):
        big = 4.0 * (len(left) + 1) * largest + 1
        rows, cols = best(np.where(is_edge, weight, -big))
        feasible = bool(is_edge[rows, cols].all())
        answers["perfect"] = (feasible, int(round(weight[rows, cols].sum())) if feasible else 0,
                              len(left))
    return answers


def compare(report, args, path, edges, left, right, label):
    vertices = {x for u, v, _ in edges for x in (u, v)}
    # Vertices without edges are not in the edge list; drop them from the sides as well.
    left = [v for v in left if v in vertices]
    right = [v for v in right if v in vertices]
    expected = assignment_optima(left, right, edges)
    for mode, (feasible, weight, pairs) in expected.items():
        where = f"{label} {mode}"
        result = oc.solve_and_check_matching(report, args.yoke, path, edges, mode, feasible,
                                             where)
        if result is None:
            continue
        if mode == "perfect" and not feasible:
            continue  # the shortfall's evidence is checked against NetworkX and LEMON elsewhere
        same = result["weight"] == weight and (pairs is None or result["pairs"] == pairs)
        report.check(same, f"{where}: yoke weight {result['weight']} pairs {result['pairs']}, "
                           f"scipy assignment weight {weight} pairs {pairs}", path)


def random_bipartite(rng, n_left, n_right, p, lo, hi):
    ids = rng.sample(range(10 ** 9), n_left + n_right)
    left, right = ids[:n_left], ids[n_left:]
    edges = []
    for u in left:
        for v in right:
            if rng.random() < p:
                a, b = (u, v) if rng.random() < 0.5 else (v, u)
                edges.append((a, b, rng.randint(lo, hi)))
    rng.shuffle(edges)
    return left, right, edges


def check_oracle_agrees(report, args, rng):
    """The padded assignments against exhaustive enumeration on tiny graphs; no yoke here."""
    path = os.path.join(args.work_dir, "agree.txt")
    for case in range(oc.scaled(40)):
        n = rng.randint(1, 5)
        left, right, edges = random_bipartite(rng, n, n if case % 2 else rng.randint(1, 5),
                                              0.6, -3, 6)
        edges = edges[:12]
        if not edges:
            continue
        vertices = {x for u, v, _ in edges for x in (u, v)}
        left = [v for v in left if v in vertices]
        right = [v for v in right if v in vertices]
        oc.write_edge_list(path, edges, f"scipy agreement case {case}")
        truth = oc.brute_force(edges)
        for mode, answer in assignment_optima(left, right, edges).items():
            want = truth[mode]
            same = answer[0] == want[0] and (not want[0] or answer[1] == want[1])
            if answer[2] is not None and want[0]:
                same = same and answer[2] == want[2]
            report.check(same, f"scipy agreement case {case} {mode}: assignment {answer}, "
                               f"exhaustive enumeration {want}", path)


def check_dispatch(report, args):
    """`yoke gen dispatch`: couriers are ids 0..C-1, orders C..C+O-1 (graphgen/generators.h)."""
    path = os.path.join(args.work_dir, "dispatch.txt")
    sizes = [(c, o, k) for c in (1, 3, 8, 20, 45) for o in (1, 4, 8, 30, 45) for k in (1, 3, 6)]
    sizes += [(600, 800, 4), (1500, 1500, 3)]
    for index, (couriers, orders, per_order) in enumerate(sizes):
        if oc.small_scale() and index % 5 and couriers < 600:
            continue
        for seed in (1, 2):
            subprocess.run([args.yoke, "gen", "dispatch", "--couriers", str(couriers),
                            "--orders", str(orders), "--per-order", str(per_order), "--seed",
                            str(seed), "-o", path], check=True, timeout=60)
            edges = oc.read_edge_list(path)
            bipartite = all((u < couriers) != (v < couriers) for u, v, _ in edges)
            label = f"scipy dispatch c{couriers} o{orders} k{per_order} seed{seed}"
            if not report.check(bipartite, f"{label}: an edge joins two couriers or two orders",
                                path) or not edges:
                continue
            compare(report, args, path, edges, list(range(couriers)),
                    list(range(couriers, couriers + orders)), label)


def check_random_bipartite(report, args, rng):
    """The script's own random bipartite graphs, ids interleaved between the sides."""
    path = os.path.join(args.work_dir, "bipartite.txt")
    for case in range(oc.scaled(150)):
        n_left = rng.randint(1, 30)
        n_right = n_left if case % 3 == 0 else rng.randint(1, 30)  # square: perfect mode too
        lo, hi = rng.choice(((-20, 50), (1, 1), (0, 3), (-9, -1), (1, 1000)))
        left, right, edges = random_bipartite(rng, n_left, n_right, rng.choice((0.1, 0.3, 0.8)),
                                              lo, hi)
        if not edges:
            continue
        label = f"scipy random bipartite case{case} {n_left}x{n_right}"
        oc.write_edge_list(path, edges, label)
        compare(report, args, path, edges, left, right, label)


def main():
    args = oc.parse_args(__doc__)
    report = oc.Report("oracle_scipy")
    check_oracle_agrees(report, args, random.Random(77))
    check_dispatch(report, args)
    check_random_bipartite(report, args, random.Random(4242))
    report.finish()


if __name__ == "__main__":
    main()
