"""The evening in Quillory as a stream of pool events: couriers and orders, and the edges
between them.

Each `step()` advances the simulated clock by one tick and returns that tick's events, in the
yoke_client tuple form: holds (`hold`), then departures (`remove`), then arrivals (`add`), then
edge changes (`set`, `unset`). The model keeps its own copy of the pool (who is alive, which
edges exist and their weights, which pairs are held), so every event it emits is valid for a
daemon pool that received the same events before, and its counts can be compared with the
daemon's (a held pair's vertices and all their edges are in the pool until the delivery).

Vertices: couriers are 10000 + n, orders 1000000 + n. A courier who is dispatched is held with
the order while it travels there, then leaves the pool with the order, delivers it off the
pool, and comes back (same id) where the delivery ended; a courier whose shift is over leaves
for good; an order nobody took leaves when its patience runs out.

Edges: a courier and an order within RADIUS_M metres (along streets) may be linked; an order
holds at most ORDER_EDGES edges and a courier at most COURIER_EDGES, the nearest ones found so
far. Neighbours are looked up in a grid of square cells RADIUS_M wide, so a tick costs in
proportion to the couriers that moved and the vertices that came or went, not to the city.
Weight (an integer score): the order's value, plus a bonus growing with each minute it has
waited, minus a cost per 25 m the courier is away.

What is dispatched is decided by the caller (`dispatch(pairs)`): at the next step each pair it
names is held (a `hold` event: the courier is on the way, and no later change of the scores may
break the pair) for the pair's travel time in ticks, then leaves the pool (delivered: both
`remove`d, which ends the hold); a travel time of 0 removes the pair at once. While held, the
courier walks to its order, neither end expires nor ends its shift, the pair's edge stays
whatever the distance, and neither end gets new edges (the edges it has stay, and count, as in
the daemon's pool).
"""

import math

import quillory

COURIER_BASE = 10_000
ORDER_BASE = 1_000_000
RADIUS_M = 700
ORDER_EDGES = 6
COURIER_EDGES = 8
RESCAN_M = 150        # a moving courier looks for new orders after this many metres
SWAP_GAIN_M = 250     # a full courier trades its farthest order for one this much nearer
COST_PER_25M = 3      # score lost per 25 m between courier and order
WAIT_BONUS_PER_MIN = 12


def is_courier(v):
    return COURIER_BASE <= v < ORDER_BASE


class Courier:
    __slots__ = ("id", "pos", "speed", "route", "park", "shift_end", "scan_pos", "edges",
                 "out_until", "home", "deliveries", "cell")

    def __init__(self, cid, pos, speed, shift_end, home):
        self.id = cid
        self.pos = pos
        self.speed = speed          # metres per simulated second
        self.route = []             # waypoints still to walk
        self.park = 0               # ticks left standing still
        self.shift_end = shift_end  # simulated seconds
        self.scan_pos = None        # where it last looked for orders
        self.edges = {}             # order id -> manhattan distance
        self.out_until = None       # delivering (off the pool) until this simulated second
        self.home = home            # district index where the shift started
        self.deliveries = 0
        self.cell = None


class Order:
    __slots__ = ("id", "pos", "value", "born", "patience", "edges", "district", "cell")

    def __init__(self, oid, pos, value, born, patience, district):
        self.id = oid
        self.pos = pos
        self.value = value
        self.born = born
        self.patience = patience
        self.edges = {}  # courier id -> manhattan distance
        self.district = district
        self.cell = None


class Grid:
    """Square cells of RADIUS_M metres; a point's neighbours within RADIUS_M are in the 3 x 3
    cells around its own."""

    def __init__(self, cell_m):
        self.cell_m = cell_m
        self.cells = {}

    def key(self, pos):
        return (int(pos[0]) // self.cell_m, int(pos[1]) // self.cell_m)

    def put(self, item):
        key = self.key(item.pos)
        if item.cell == key:
            return
        if item.cell is not None:
            self.cells[item.cell].pop(item.id, None)
        self.cells.setdefault(key, {})[item.id] = item
        item.cell = key

    def drop(self, item):
        if item.cell is not None:
            self.cells[item.cell].pop(item.id, None)
            item.cell = None

    def near(self, pos):
        cx, cy = self.key(pos)
        for dx in (-1, 0, 1):
            for dy in (-1, 0, 1):
                cell = self.cells.get((cx + dx, cy + dy))
                if cell:
                    yield from cell.values()


def evening_factor(clock_s):
    """Demand through the evening: rises from 18:00 to a peak around 19:30, then eases."""
    hours = clock_s / 3600.0
    return 0.75 + 0.5 * math.exp(-((hours - 19.5) ** 2) / 0.8)


def poisson(rng, mean):
    """A Poisson draw (Knuth's product of uniforms; fine for small means)."""
    limit, k, product = math.exp(-mean), 0, rng.random()
    while product > limit:
        k += 1
        product *= rng.random()
    return k


class Evening:
    """The whole simulated population and its pool. `rng` is the only source of randomness."""

    def __init__(self, rng, couriers=260, orders=120, order_rate=5.0, tick_s=10,
                 start_clock_s=18 * 3600 + 30 * 60):
        self.rng = rng
        self.city = quillory.City(rng)
        self.tick_s = tick_s
        self.clock = start_clock_s
        self.tick = 0
        self.order_rate = order_rate                  # new orders per tick at the base level
        self.target_couriers = couriers               # on shift (in the pool or delivering)
        self.initial_orders = orders
        self.couriers = {}                            # on shift, in the pool
        self.away = {}                                # on shift, delivering
        self.orders = {}                              # waiting, in the pool
        self.courier_grid = Grid(RADIUS_M)
        self.order_grid = Grid(RADIUS_M)
        self.edge_count = 0
        self.next_courier = COURIER_BASE + 1
        self.next_order = ORDER_BASE + 1
        self.to_dispatch = []
        self.held = {}                              # (courier, order) -> tick of delivery
        self.held_by = {}                           # courier or order -> its held pair
        self.counts = {"dispatched": 0, "delivered": 0, "held_total": 0, "expired": 0,
                       "shifts_ended": 0, "shifts_started": 0, "orders_placed": 0,
                       "returned": 0}
        self._touched = {}   # (courier, order) -> weight before this tick (None: no edge)
        self._weights = {}   # (courier, order) -> current weight
        self._dirty_orders = set()
        self._dirty_couriers = set()

    # --- the pool as the daemon holds it ---

    @property
    def vertex_count(self):
        return len(self.couriers) + len(self.orders)

    def alive(self, v):
        return v in self.couriers or v in self.orders

    def district_of(self, v):
        item = self.couriers.get(v) or self.orders.get(v)
        return None if item is None else self.city.district_of(item.pos)

    def weight(self, courier, order, distance):
        waited_min = int((self.clock - order.born) // 60)
        return (order.value + WAIT_BONUS_PER_MIN * waited_min
                - COST_PER_25M * (distance // 25))

    # --- edges (recorded per tick, emitted as net changes) ---

    def _touch(self, key):
        if key not in self._touched:
            self._touched[key] = self._weights.get(key)

    def _link(self, courier, order, distance):
        key = (courier.id, order.id)
        self._touch(key)
        courier.edges[order.id] = distance
        order.edges[courier.id] = distance
        self._weights[key] = self.weight(courier, order, distance)
        self.edge_count += 1

    def _unlink(self, courier, order):
        key = (courier.id, order.id)
        self._touch(key)
        del courier.edges[order.id]
        del order.edges[courier.id]
        del self._weights[key]
        self.edge_count -= 1
        self._dirty_couriers.add(courier.id)
        self._dirty_orders.add(order.id)

    def _reweigh(self, courier, order, distance):
        key = (courier.id, order.id)
        w = self.weight(courier, order, distance)
        if self._weights[key] != w:
            self._touch(key)
            self._weights[key] = w
        courier.edges[order.id] = distance
        order.edges[courier.id] = distance

    def _drop_vertex_edges(self, item, others, courier_side):
        """A vertex leaves: its edges go with it (no events: `remove` takes them)."""
        for other_id in list(item.edges):
            other = others[other_id]
            del other.edges[item.id]
            key = (item.id, other_id) if courier_side else (other_id, item.id)
            del self._weights[key]
            self._touched.pop(key, None)
            self.edge_count -= 1
            (self._dirty_orders if courier_side else self._dirty_couriers).add(other_id)
        item.edges.clear()

    def _scan_courier(self, c):
        """Links c to the nearest orders within reach that still have room; a full courier
        swaps its farthest order for a much nearer one."""
        c.scan_pos = c.pos
        candidates = []
        for o in self.order_grid.near(c.pos):
            if o.id in c.edges or len(o.edges) >= ORDER_EDGES or o.id in self.held_by:
                continue
            d = quillory.manhattan(c.pos, o.pos)
            if d <= RADIUS_M:
                candidates.append((d, o.id))
        candidates.sort()
        for d, oid in candidates:
            o = self.orders[oid]
            if len(c.edges) < COURIER_EDGES:
                self._link(c, o, d)
                continue
            far_id = max(c.edges, key=lambda k: (c.edges[k], k))
            if c.edges[far_id] - d < SWAP_GAIN_M:
                break
            self._unlink(c, self.orders[far_id])
            self._link(c, o, d)

    def _scan_order(self, o):
        """Links o to the nearest couriers within reach that still have room."""
        if len(o.edges) >= ORDER_EDGES:
            return
        candidates = []
        for c in self.courier_grid.near(o.pos):
            if c.id in o.edges or len(c.edges) >= COURIER_EDGES or c.id in self.held_by:
                continue
            d = quillory.manhattan(c.pos, o.pos)
            if d <= RADIUS_M:
                candidates.append((d, c.id))
        candidates.sort()
        for d, cid in candidates[:ORDER_EDGES - len(o.edges)]:
            self._link(self.couriers[cid], o, d)

    # --- arrivals and departures ---

    def _new_courier(self, events, pos=None, district=None):
        rng = self.rng
        if district is None:
            district = self.city.pick_district(rng, "supply")
        if pos is None:
            pos = self.city.street_point_near(rng, self.city.random_intersection(rng, district),
                                              100)
        c = Courier(self.next_courier, pos, rng.uniform(3.5, 6.5),
                    self.clock + rng.uniform(35, 150) * 60, district.index)
        self.next_courier += 1
        c.park = rng.randrange(0, 4)
        self._enter_courier(c, events)
        self.counts["shifts_started"] += 1

    def _enter_courier(self, c, events):
        self.couriers[c.id] = c
        self.courier_grid.put(c)
        events.append(("add", c.id))
        self._dirty_couriers.add(c.id)

    def _new_order(self, events):
        rng = self.rng
        pos = self.city.order_spot(rng)
        o = Order(self.next_order, pos, rng.randrange(420, 900), self.clock,
                  rng.uniform(12, 30) * 60, self.city.district_of(pos))
        self.next_order += 1
        self.orders[o.id] = o
        self.order_grid.put(o)
        events.append(("add", o.id))
        self._dirty_orders.add(o.id)
        self.counts["orders_placed"] += 1

    def _leave_courier(self, c, events):
        self._drop_vertex_edges(c, self.orders, courier_side=True)
        self.courier_grid.drop(c)
        del self.couriers[c.id]
        self._dirty_couriers.discard(c.id)
        events.append(("remove", c.id))

    def _leave_order(self, o, events):
        self._drop_vertex_edges(o, self.couriers, courier_side=False)
        self.order_grid.drop(o)
        del self.orders[o.id]
        self._dirty_orders.discard(o.id)
        events.append(("remove", o.id))

    def dispatch(self, pairs):
        """The caller commits these (courier, order, travel ticks) triples: at the next step
        each pair is held for its travel ticks, then delivered (0: delivered at once)."""
        self.to_dispatch.extend(pairs)

    def _deliver(self, cid, oid, events):
        """Courier and order leave the pool (a held pair's hold ends with them); the courier
        comes back where the delivery ends."""
        rng = self.rng
        c, o = self.couriers[cid], self.orders[oid]
        trip_s = quillory.manhattan(c.pos, o.pos) / c.speed + rng.uniform(3, 8) * 60
        self._leave_courier(c, events)
        self._leave_order(o, events)
        c.out_until = self.clock + trip_s
        c.pos = self.city.street_point_near(
            rng, self.city.random_intersection(rng, self.city.pick_district(rng)), 100)
        c.route, c.park, c.scan_pos, c.edges = [], rng.randrange(1, 4), None, {}
        c.deliveries += 1
        self.away[cid] = c
        self.counts["delivered"] += 1

    def _hold(self, cid, oid, travel_ticks, events):
        """The pair is held until the step of tick self.tick + travel_ticks; the courier sets
        off to the order."""
        c, o = self.couriers[cid], self.orders[oid]
        events.append(("hold", cid, oid))
        self.held[(cid, oid)] = self.tick + travel_ticks
        self.held_by[cid] = self.held_by[oid] = (cid, oid)
        goal = (quillory.snap(o.pos[0], quillory.WIDTH_M),
                quillory.snap(o.pos[1], quillory.HEIGHT_M))
        c.route, c.park = quillory.route(c.pos, goal, True), 0
        self.counts["held_total"] += 1

    # --- one tick ---

    def step(self):
        """Advances one tick; returns its events (departures, arrivals, edge changes)."""
        rng = self.rng
        events = []
        self._touched = {}
        if self.tick > 0:
            self.clock += self.tick_s
        self.tick += 1

        # Holds and deliveries first (a hold needs the pair's edge as it stood before this tick),
        # then departures: expired orders, shifts that ended (a held end stays).
        for cid, oid, travel_ticks in self.to_dispatch:
            if cid not in self.couriers or oid not in self.orders or \
                    oid not in self.couriers[cid].edges or \
                    cid in self.held_by or oid in self.held_by:
                continue
            self.counts["dispatched"] += 1
            if travel_ticks > 0:
                self._hold(cid, oid, travel_ticks, events)
            else:
                self._deliver(cid, oid, events)
        self.to_dispatch = []
        for (cid, oid), due in sorted(self.held.items()):
            if due <= self.tick:
                del self.held[(cid, oid)], self.held_by[cid], self.held_by[oid]
                self._deliver(cid, oid, events)
        for o in [o for o in self.orders.values()
                  if self.clock - o.born > o.patience and o.id not in self.held_by]:
            self._leave_order(o, events)
            self.counts["expired"] += 1
        for c in [c for c in self.couriers.values()
                  if self.clock >= c.shift_end and c.id not in self.held_by]:
            self._leave_courier(c, events)
            self.counts["shifts_ended"] += 1

        # Arrivals: couriers back from a delivery, new shifts, new orders.
        for c in [c for c in self.away.values() if self.clock >= c.out_until]:
            del self.away[c.id]
            c.out_until = None
            if self.clock >= c.shift_end:
                self.counts["shifts_ended"] += 1
                continue
            self._enter_courier(c, events)
            self.counts["returned"] += 1
        if self.tick == 1:
            for _ in range(self.target_couriers):
                self._new_courier(events)
            for _ in range(self.initial_orders):
                self._new_order(events)
        else:
            on_shift = len(self.couriers) + len(self.away)
            target = int(self.target_couriers * (0.9 + 0.2 * evening_factor(self.clock)))
            for _ in range(min(3, max(0, target - on_shift))):
                self._new_courier(events)
            for _ in range(poisson(rng, self.order_rate * evening_factor(self.clock))):
                self._new_order(events)

        # Movement: walking couriers advance; the weights of their edges follow.
        for c in self.couriers.values():
            if c.park > 0:
                c.park -= 1
                continue
            pair = self.held_by.get(c.id)
            if not c.route:
                if pair is not None:
                    continue  # at its order: waits there until the pickup
                self._choose_destination(c)
                if not c.route:
                    continue
            c.pos = quillory.advance(c.pos, c.route, c.speed * self.tick_s)
            self.courier_grid.put(c)
            if not c.route and pair is None:
                c.park = rng.randrange(2, 12)
            for oid in list(c.edges):
                o = self.orders[oid]
                d = quillory.manhattan(c.pos, o.pos)
                if d > RADIUS_M and (c.id, oid) != pair:
                    self._unlink(c, o)
                else:
                    self._reweigh(c, o, d)
            if c.scan_pos is None or quillory.manhattan(c.pos, c.scan_pos) >= RESCAN_M:
                self._dirty_couriers.add(c.id)

        # Each order gains its wait bonus once a minute (a minute after it was placed).
        for o in self.orders.values():
            if self.clock > o.born and (self.clock - o.born) % 60 < self.tick_s:
                for cid, d in o.edges.items():
                    self._reweigh(self.couriers[cid], o, d)

        # New links: couriers that moved far enough or lost an edge, then orders with room.
        # A swap frees a place on an order: it is looked at in this tick's order pass; the
        # couriers dirtied meanwhile wait for the next tick.
        dirty, self._dirty_couriers = sorted(self._dirty_couriers), set()
        for cid in dirty:
            c = self.couriers.get(cid)
            if c is not None and cid not in self.held_by:
                self._scan_courier(c)
        dirty, self._dirty_orders = sorted(self._dirty_orders), set()
        for oid in dirty:
            o = self.orders.get(oid)
            if o is not None and oid not in self.held_by:
                self._scan_order(o)

        for key in sorted(self._touched):
            before, after = self._touched[key], self._weights.get(key)
            if before == after:
                continue
            if after is None:
                events.append(("unset", key[0], key[1]))
            else:
                events.append(("set", key[0], key[1], after))
        self._touched = {}
        return events

    def _choose_destination(self, c):
        rng = self.rng
        here = self.city.district_of(c.pos)
        if rng.random() < 0.35:
            c.park = rng.randrange(3, 15)  # waits where it is
            return
        d = self.city.pick_district(rng, "demand", self.city.districts[here].neighbours())
        goal = rng.choice(d.hotspots) if rng.random() < 0.7 else \
            self.city.random_intersection(rng, d)
        c.route = quillory.route(c.pos, goal, rng.random() < 0.5)
