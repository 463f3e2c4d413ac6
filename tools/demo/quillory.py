"""The invented harbour city of Quillory: its streets, its districts and where people go.

The city is a rectangle of 7.2 km (west to east) by 4.8 km (south to north), the harbour along
its southern edge. Streets run every BLOCK metres in both directions; every courier stands on a
street, and distances are walked along streets (Manhattan distance). Nine districts tile the
city in a 3 x 3 grid; each has a few hotspots (kitchens and shop rows) where orders start and
idle couriers wait, and a share of the evening's demand.

Everything here is pure geometry and fixed data; the randomness comes from the caller's
random.Random, so a seed fixes the whole run.
"""

WIDTH_M = 7200
HEIGHT_M = 4800
BLOCK_M = 200  # distance between parallel streets

# (name, demand share, courier share), row by row from the waterfront (south) to the hills.
_DISTRICTS = [
    ("Ondavel", 1.2, 1.1), ("Brissamar", 1.6, 1.3), ("Saverlo", 0.8, 0.8),
    ("Quimbrell", 0.9, 1.0), ("Tazzaline", 1.3, 1.2), ("Harnevoy", 1.0, 1.0),
    ("Oskevarra", 0.6, 0.8), ("Mellivant", 1.0, 0.9), ("Yssolind", 0.7, 0.7),
]
DISTRICT_COLUMNS, DISTRICT_ROWS = 3, 3
_DISTRICT_W = WIDTH_M // DISTRICT_COLUMNS
_DISTRICT_H = HEIGHT_M // DISTRICT_ROWS


class District:
    def __init__(self, index, name, demand, supply, x0, y0):
        self.index = index
        self.name = name
        self.demand = demand
        self.supply = supply
        self.x0, self.y0 = x0, y0
        self.x1, self.y1 = x0 + _DISTRICT_W, y0 + _DISTRICT_H
        self.hotspots = []  # intersections, filled by City

    def neighbours(self):
        """Indices of this district and the ones sharing a side with it."""
        col, row = self.index % DISTRICT_COLUMNS, self.index // DISTRICT_COLUMNS
        out = [self.index]
        for dc, dr in ((1, 0), (-1, 0), (0, 1), (0, -1)):
            c, r = col + dc, row + dr
            if 0 <= c < DISTRICT_COLUMNS and 0 <= r < DISTRICT_ROWS:
                out.append(r * DISTRICT_COLUMNS + c)
        return out


def manhattan(a, b):
    return abs(a[0] - b[0]) + abs(a[1] - b[1])


def snap(value, limit):
    """The nearest street coordinate to value, inside the city."""
    return min(max(0, round(value / BLOCK_M) * BLOCK_M), limit)


class City:
    """The districts and their hotspots; `rng` places the hotspots (three per district)."""

    def __init__(self, rng, hotspots_per_district=3):
        self.districts = []
        for i, (name, demand, supply) in enumerate(_DISTRICTS):
            col, row = i % DISTRICT_COLUMNS, i // DISTRICT_COLUMNS
            self.districts.append(District(i, name, demand, supply, col * _DISTRICT_W,
                                           row * _DISTRICT_H))
        for d in self.districts:
            for _ in range(hotspots_per_district):
                d.hotspots.append(self.random_intersection(rng, d, margin=BLOCK_M))
        self.demand_total = sum(d.demand for d in self.districts)
        self.supply_total = sum(d.supply for d in self.districts)

    def district_of(self, point):
        col = min(int(point[0]) // _DISTRICT_W, DISTRICT_COLUMNS - 1)
        row = min(int(point[1]) // _DISTRICT_H, DISTRICT_ROWS - 1)
        return row * DISTRICT_COLUMNS + col

    def random_intersection(self, rng, district, margin=0):
        x = rng.randrange(district.x0 + margin, district.x1 - margin + 1, BLOCK_M)
        y = rng.randrange(district.y0 + margin, district.y1 - margin + 1, BLOCK_M)
        return (snap(x, WIDTH_M), snap(y, HEIGHT_M))

    def pick_district(self, rng, by="demand", among=None):
        """A district drawn in proportion to its demand (or supply) share."""
        pool = self.districts if among is None else [self.districts[i] for i in among]
        weights = [d.demand if by == "demand" else d.supply for d in pool]
        return rng.choices(pool, weights)[0]

    def street_point_near(self, rng, centre, spread):
        """A point on a street within about `spread` metres of `centre` (kept in the city)."""
        x = centre[0] + rng.uniform(-spread, spread)
        y = centre[1] + rng.uniform(-spread, spread)
        x = min(max(0.0, x), float(WIDTH_M))
        y = min(max(0.0, y), float(HEIGHT_M))
        if rng.random() < 0.5:  # on an east-west street
            return (round(x), snap(y, HEIGHT_M))
        return (snap(x, WIDTH_M), round(y))

    def order_spot(self, rng):
        """Where a new order waits: near a hotspot of a district drawn by demand (three in
        four), or anywhere in it."""
        d = self.pick_district(rng, "demand")
        if rng.random() < 0.75:
            return self.street_point_near(rng, rng.choice(d.hotspots), 350)
        return self.street_point_near(rng, self.random_intersection(rng, d), 100)


def route(start, goal, x_first):
    """Waypoints along streets from `start` (a point on a street) to the intersection `goal`:
    first to the nearest intersection's street line, then along x and y (or y and x)."""
    x, y = start
    points = []
    on_x_street = y % BLOCK_M == 0  # an east-west street: free to move along x
    if not on_x_street:
        # on a north-south street: reach an intersection along it first
        y = snap(y, HEIGHT_M)
        points.append((x, y))
    elif x % BLOCK_M != 0 and not x_first:
        x = snap(x, WIDTH_M)
        points.append((x, y))
    if x_first:
        points.append((goal[0], y))
    else:
        points.append((x, goal[1]))
    points.append(goal)
    out = []
    prev = start
    for p in points:
        if p != prev:
            out.append(p)
            prev = p
    return out


def advance(position, waypoints, distance):
    """Moves `distance` metres along `waypoints` (consumed from the front) from `position`;
    returns the new position. Positions stay integral metres."""
    x, y = position
    while waypoints and distance > 0:
        tx, ty = waypoints[0]
        gap = abs(tx - x) + abs(ty - y)
        if gap <= distance:
            x, y = tx, ty
            distance -= gap
            waypoints.pop(0)
            continue
        step = int(distance)
        if tx != x:
            x += step if tx > x else -step
        else:
            y += step if ty > y else -step
        distance = 0
    return (x, y)
