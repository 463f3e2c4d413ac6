#!/usr/bin/python3
"""yoke on open data sets that a Debian package ships, against NetworkX and LEMON.

Data (both bundled with Debian's python3-networkx 2.8.8, no download):
- networkx.les_miserables_graph(): co-occurrence of the characters of Victor Hugo's novel
  (77 characters, 254 edges, edge attribute 'weight' = number of shared chapters), as compiled
  by D. E. Knuth for The Stanford GraphBase.
- networkx.karate_club_graph(): W. W. Zachary's karate club (34 members, 78 edges); NetworkX 2.8
  ships his interaction counts as the edge attribute 'weight'.
Names are mapped to ids 0..n-1 in sorted order and the edge list is written to the work
directory with its source in a comment.

oracles: networkx.max_weight_matching (Debian python3-networkx) in max-weight and
max-cardinality modes; LEMON (Debian liblemon-dev 1.3.1, through oracle_lemon_file) on the same
edge-list file in all three modes.

Usage: open_data_oracle.py --yoke YOKE --lemon-file ORACLE_LEMON_FILE --work-dir DIR
"""

import os

import networkx as nx

import oracle_common as oc


def export(graph, path, source):
    names = sorted(graph.nodes(), key=str)
    ids = {name: i for i, name in enumerate(names)}
    edges = [(ids[u], ids[v], int(data["weight"])) for u, v, data in graph.edges(data=True)]
    oc.write_edge_list(path, edges, f"{source}\n{len(names)} vertices, {len(edges)} edges; ids "
                                    "are the names in sorted order")
    return edges


def check_data_set(report, args, name, graph, source):
    path = os.path.join(args.work_dir, name + ".txt")
    certificate = os.path.join(args.work_dir, name + "_cert.json")
    edges = export(graph, path, source)
    weighted = nx.Graph()
    for u, v, w in edges:
        weighted.add_edge(u, v, weight=w)

    def summed(matching):
        return sum(weighted[u][v]["weight"] for u, v in matching), len(matching)

    networkx = {
        # oracle: networkx.max_weight_matching(G) (Debian python3-networkx)
        "max-weight": summed(nx.max_weight_matching(weighted)),
        # oracle: networkx.max_weight_matching(G, maxcardinality=True) (Debian python3-networkx)
        "max-cardinality": summed(nx.max_weight_matching(weighted, maxcardinality=True)),
    }
    for mode in oc.MODES:
        where = f"{name} {mode}"
        # oracle: LEMON (Debian liblemon-dev 1.3.1) on the exported file
        lemon = oc.lemon_optimum(args.lemon_file, path, mode)
        result = oc.solve_and_check_matching(report, args.yoke, path, edges, mode, lemon["feasible"],
                                             where, certificate)
        if result is None:
            continue
        if lemon["feasible"]:
            same = result["weight"] == lemon["weight"] and (
                mode == "max-weight" or result["pairs"] == lemon["pairs"])
            report.check(same, f"{where}: yoke {result['weight']}/{result['pairs']}, "
                               f"LEMON {lemon['weight']}/{lemon['pairs']}", path)
        if mode in networkx or not lemon["feasible"]:
            # Without a perfect matching the evidence is a maximum-cardinality matching of
            # maximum weight (engine/include/yoke/solve.h).
            weight, pairs = networkx[mode if mode in networkx else "max-cardinality"]
            same = result["weight"] == weight and (mode == "max-weight" or
                                                   result["pairs"] == pairs)
            report.check(same, f"{where}: yoke {result['weight']}/{result['pairs']}, "
                               f"networkx {weight}/{pairs}", path)
        vcode, verdict, vstderr = oc.run_verify(args.yoke, path, certificate)
        report.check(vcode == 0 and verdict is not None and verdict.get("valid") is True,
                     f"{where}: yoke verify exit {vcode} {verdict} {vstderr.strip()}", path)
        print(f"{where}: weight {result['weight']} pairs {result['pairs']} ({result['status']})")


def main():
    args = oc.parse_args(__doc__)
    report = oc.Report("oracle_open_data")
    check_data_set(report, args, "les_miserables", nx.les_miserables_graph(),
                   "Les Miserables co-occurrence graph (Knuth, Stanford GraphBase), from "
                   "networkx.les_miserables_graph() in Debian python3-networkx")
    check_data_set(report, args, "karate_club", nx.karate_club_graph(),
                   "Zachary's karate club with interaction counts, from "
                   "networkx.karate_club_graph() in Debian python3-networkx")
    report.finish()


if __name__ == "__main__":
    main()
