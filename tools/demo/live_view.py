"""The demo's live summary: a block redrawn in place on a terminal (ANSI), or one plain
`key=value` line per update when the output is not a terminal (a log, a pipe, a test).

A `Frame` is a plain dict built by the simulator (see city_sim.frame()); nothing here talks to
the daemon.
"""

import sys

_UP_AND_CLEAR = "\x1b[{n}F\x1b[J"  # cursor up n lines to column 1, clear to the end
_BOLD, _DIM, _RESET = "\x1b[1m", "\x1b[2m", "\x1b[0m"


def _num(value):
    """An integer with thin grouping: 61 233."""
    return f"{value:,}".replace(",", " ")


def _ms(us):
    return "-" if us is None else f"{us / 1000.0:.2f}"


def percentile(values, q):
    """The q-quantile (0..1) of a list of numbers, nearest rank; None when empty."""
    if not values:
        return None
    ordered = sorted(values)
    return ordered[min(len(ordered) - 1, max(0, int(round(q * (len(ordered) - 1)))))]


def clock_text(clock_s):
    clock_s = int(clock_s)
    return f"{clock_s // 3600 % 24:02d}:{clock_s // 60 % 60:02d}:{clock_s % 60:02d}"


class LiveView:
    def __init__(self, stream=None, ansi=None):
        self.stream = stream or sys.stdout
        self.ansi = self.stream.isatty() if ansi is None else ansi
        self._drawn = 0

    def update(self, f):
        if self.ansi:
            lines = self.block(f)
            out = (_UP_AND_CLEAR.format(n=self._drawn) if self._drawn else "") + \
                "\n".join(lines) + "\n"
            self._drawn = len(lines)
        else:
            out = self.line(f) + "\n"
        self.stream.write(out)
        self.stream.flush()

    def finish(self, f):
        """The final summary as plain text, in place of the live block on a terminal."""
        if self.ansi and self._drawn:
            self.stream.write(_UP_AND_CLEAR.format(n=self._drawn))
        self._drawn = 0
        self.stream.write("\n".join(self.block(f, final=True)) + "\n")
        self.stream.write(final_line(f) + "\n")
        self.stream.flush()

    # --- the two layouts ---

    def block(self, f, final=False):
        lead, shadow = f["pools"]
        b, d, r = (_BOLD, _DIM, _RESET) if self.ansi and not final else ("", "", "")
        title = "final" if final else "live"
        lines = [
            f"{b}Quillory, {title}{r}   sim {clock_text(f['clock'])}   "
            f"wall {f['wall']:.1f} s of {f['seconds']:.0f} s   tick {f['tick']}",
            f"couriers  {f['couriers']} in the pool, {f['away']} delivering"
            f"      orders  {f['orders']} waiting      edges {_num(f['edges'])}",
            "",
        ]
        if "cluster" in f:
            lines += cluster_block(f["cluster"]) + [""]
        lines += [f"{'':24}{lead['label']:<28}{shadow['label']}"]
        rows = [("pairs", "pairs"), ("objective w(M)", "weight"),
                ("pairs changed / tick", "changed_rate"),
                ("standing pairs broken", "broken_total"),
                ("held pairs broken", "hold_violations"),
                ("pool seq", "seq")]
        for title_, key in rows:
            lv, sv = lead[key], shadow[key]
            fmt = (lambda v: f"{v:.1f}") if isinstance(lv, float) else _num
            lines.append(f"{title_:<24}{fmt(lv):<28}{fmt(sv)}")
        lines += [
            "",
            f"events / s        sent {_num(f['sent_rate'])}   acknowledged "
            f"{_num(f['acked_rate'])}   {d}(both pools; {_num(f['events_total'])} in all){r}",
            f"repair (daemon)   p50 {_ms(f['repair_p50_us'])} ms   p99 {_ms(f['repair_p99_us'])} ms"
            f"   commit to publish p50 {_ms(f['publish_p50_us'])} ms",
            f"client            send to ack p50 {f['ack_p50_ms']:.2f} ms   "
            f"send to diff p99 {f['diff_p99_ms']:.2f} ms",
            f"dispatched {_num(f['dispatched'])}   delivered {_num(f['delivered'])}   "
            f"expired {_num(f['expired'])}   shifts ended {_num(f['shifts_ended'])}",
            f"held now {_num(f['held_now'])}   held in all {_num(f['held_total'])}   "
            f"{d}(pairs standing {f['standing_ticks']} ticks in {lead['name']} are dispatched: "
            f"held about {f['travel_ticks']} ticks while the courier travels, then "
            f"delivered){r}",
            "",
            f"{'district':<20}{'couriers':>9}{'orders':>8}{'pairs':>7}",
        ]
        for name, couriers, orders, pairs in f["districts"]:
            lines.append(f"{name:<20}{couriers:>9}{orders:>8}{pairs:>7}")
        return lines

    def line(self, f):
        lead, shadow = f["pools"]
        return (f"t={f['wall']:.1f}s sim={clock_text(f['clock'])} tick={f['tick']} "
                f"couriers={f['couriers']} away={f['away']} orders={f['orders']} "
                f"edges={f['edges']} pairs={lead['pairs']}/{shadow['pairs']} "
                f"objective={lead['weight']}/{shadow['weight']} "
                f"events_per_s={f['sent_rate']}/{f['acked_rate']} "
                f"repair_ms_p50={_ms(f['repair_p50_us'])} p99={_ms(f['repair_p99_us'])} "
                f"ack_ms_p50={f['ack_p50_ms']:.2f} "
                f"changed_per_tick={lead['changed_rate']:.1f}/{shadow['changed_rate']:.1f} "
                f"broken={lead['broken_total']}/{shadow['broken_total']} "
                f"held={f['held_now']} held_total={f['held_total']} "
                f"hold_violations={lead['hold_violations']}/{shadow['hold_violations']}"
                + (" " + cluster_line(f["cluster"]) if "cluster" in f else ""))


def cluster_block(c):
    """The cluster demo's lines: the NATS nodes and the daemons, then per pool who serves it,
    its seq and weight, and its takeovers with their gaps."""
    nats = "   ".join(f"{n['name']} {n['state']}" for n in c["nats"])
    daemons = "   ".join(f"{d['name']} {d['state']}" for d in c["instances"])
    lines = [f"NATS ({c['stream']})  {nats}", f"yoked             {daemons}",
             f"{'pool':<24}{'served by':<12}{'seq':>7}{'weight':>14}   takeover (gap: kill to the "
             "first acknowledgement)"]
    for p in c["pools"]:
        moves = "; ".join(f"{m['from']} -> {m['to']} at {m['at_s']:.1f} s, gap {m['gap_s']:.2f} s"
                          for m in p["takeovers"]) or "-"
        lines.append(f"{p['name']:<24}{p['served_by'] or '-':<12}{p['seq']:>7}"
                     f"{_num(p['weight']):>14}   {moves}")
    return lines


def cluster_line(c):
    """The cluster demo's part of a plain line: serving=POOL@INSTANCE,... and the gaps."""
    serving = ",".join(f"{p['name']}@{p['served_by'] or '-'}" for p in c["pools"])
    gaps = ",".join(f"{p['name']}:{m['gap_s']:.2f}" for p in c["pools"] for m in p["takeovers"])
    down = ",".join([n["name"] for n in c["nats"] if n["state"] != "up"] +
                    [d["name"] for d in c["instances"] if d["state"] != "up"])
    return f"serving={serving} takeover_gaps_s={gaps or '-'} down={down or '-'}"


def final_line(f):
    """One line a script or a test can read: the run's totals per pool."""
    parts = [f"demo: final ticks={f['tick']} events={f['events_total']} "
             f"vertices={f['couriers'] + f['orders']} edges={f['edges']} "
             f"dispatched={f['dispatched']} delivered={f['delivered']} "
             f"held={f['held_now']} held_total={f['held_total']}"]
    for p in f["pools"]:
        parts.append(f"{p['name']}: seq={p['seq']} pairs={p['pairs']} weight={p['weight']} "
                     f"changed={p['changed_total']} broken={p['broken_total']} "
                     f"hold_violations={p['hold_violations']}")
    return " | ".join(parts)
