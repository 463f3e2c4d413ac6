"""Protobuf replies and diffs as plain dicts, with the keys `yoke query` and `yoke watch` print
(tools/cli/proto_json.cpp): pairs as [a, b, weight], modes as "max-weight" etc., absent optional
keys as None."""

from yoke.v1 import pool_pb2, protocol_pb2

_MODES = {pool_pb2.MODE_MAX_WEIGHT: "max-weight", pool_pb2.MODE_MAX_CARDINALITY: "max-cardinality",
          pool_pb2.MODE_PERFECT: "perfect"}


def code_name(code):
    """The Error.Code name of a number ("CODE_<n>" for one this package does not know)."""
    try:
        return protocol_pb2.Error.Code.Name(code)
    except ValueError:
        return f"CODE_{code}"


def _pairs(pairs):
    return [[p.a, p.b, p.weight] for p in pairs]


def _optional(message, field):
    return getattr(message, field) if message.HasField(field) else None


def _half(doubled):
    """A doubled value in plain units, as `yoke query explain` prints it: 87 -> 43.5, 8 -> 4."""
    return doubled // 2 if doubled % 2 == 0 else doubled / 2


def _repair(stats):
    return {k: getattr(stats, k) for k in ("events", "roots", "searches", "augmentations",
                                           "blossoms_dissolved", "vertices_touched",
                                           "initial_solve")}


def _timings(t):
    return {"repair_us": t.repair_us, "commit_to_publish_us": t.commit_to_publish_us,
            "publish_unix_us": t.publish_unix_us}


def diff(d):
    out = {"pool": d.pool, "seq": d.seq, "prev_seq": d.prev_seq, "weight": d.weight,
           "pairs": d.pairs, "no_perfect_matching": d.no_perfect_matching,
           "removed": _pairs(d.removed), "added": _pairs(d.added)}
    out.update(_timings(d.timings))
    out["stats"] = _repair(d.stats)
    if d.retired:
        out["retired"] = True  # the pool's last diff: every pair removed
    return out


def reply(r):
    """The dict of a QueryReply that is not an error."""
    kind, pool = r.WhichOneof("kind"), r.pool
    m = getattr(r, kind)
    if kind == "summary":
        return {"pool": pool, "seq": m.seq, "weight": m.weight, "pairs": m.pairs,
                "vertices": m.vertices, "edges": m.edges, "mode": _MODES.get(m.mode),
                "no_perfect_matching": m.no_perfect_matching}
    if kind == "mate":
        return {"pool": pool, "seq": m.seq, "vertex": m.vertex, "mate": _optional(m, "mate"),
                "pair_weight": _optional(m, "pair_weight")}
    if kind == "matching":
        return {"pool": pool, "seq": m.seq, "weight": m.weight, "pairs": len(m.matching),
                "matching": _pairs(m.matching), "mode": _MODES.get(m.mode),
                "no_perfect_matching": m.no_perfect_matching}
    if kind == "explain":
        # The shape of tools/cli/explanation_text.h (which states the units): price and slack in
        # plain weights, the _x2 values doubled as the wire has them.
        alternatives = [{"other": a.other, "weight": a.weight, "slack": _half(a.slack_x2),
                         "slack_x2": a.slack_x2, "other_mate": _optional(a, "other_mate")}
                        for a in m.alternatives]
        explained = {"pool": pool, "seq": m.seq, "vertex": m.vertex, "present": True,
                     "mate": _optional(m, "mate"), "pair_weight": _optional(m, "pair_weight"),
                     "pair_bonus": m.pair_bonus, "weight_offset": m.weight_offset,
                     "dual_x2": m.dual_x2,
                     "price": None if m.held else _half(m.dual_x2 - m.weight_offset),
                     "alternatives": alternatives}
        if m.held:  # a held pair: fixed, so no price (as `yoke query explain` prints it)
            explained["held"] = True
        return explained
    if kind == "stats":
        limits = m.config.limits
        return {"pool": pool, "seq": m.seq, "weight": m.weight, "pairs": m.pairs,
                "vertices": m.vertices, "edges": m.edges, "mode": _MODES.get(m.config.mode),
                "limits": {"max_vertices": limits.max_vertices, "max_edges": limits.max_edges,
                           "max_abs_weight": limits.max_abs_weight},
                "churn_bonus": m.config.churn_bonus,
                "batches_accepted": m.batches_accepted, "batches_rejected": m.batches_rejected,
                "batches_duplicate": m.batches_duplicate, "events_applied": m.events_applied,
                "commits": m.commits, "last_repair": _repair(m.last_repair),
                "last_timings": _timings(m.last_timings),
                "last_snapshot_seq": m.last_snapshot_seq}
    if kind == "snapshot":
        return {"pools": [{"pool": e.pool, "seq": e.seq} for e in m.pools], "path": m.path}
    if kind == "health":
        return {"ok": m.ok, "status": m.status, "uptime_s": m.uptime_s, "pools": m.pools,
                "daemon_version": m.daemon_version}
    raise ValueError(f"unexpected reply kind {kind!r}")
