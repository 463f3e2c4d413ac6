"""A short tour of yoke_client: couriers of the (invented) city of Lanternfield take parcels.

Start a daemon with its default endpoints first, then run from the repository root:

    build/daemon/server/yoked --data-dir /tmp/lanternfield &
    PYTHONPATH=build/proto/python:tools/python /usr/bin/python3 tools/python/example.py

Couriers are vertices 101..104, parcels 201..205; an edge's weight is what a courier earns by
carrying that parcel. The pool `lanternfield` holds the best set of (courier, parcel) pairs.
"""

from yoke_client import Query, Sender, Watcher, remove_vertex, set_edge

INGEST, PUBLISH, QUERY = "tcp://127.0.0.1:7410", "tcp://127.0.0.1:7411", "tcp://127.0.0.1:7412"
POOL = "lanternfield"

BATCHES = [
    # Morning: Ada (101) and Bruno (102) are out, three parcels wait.
    [set_edge(101, 201, 40), set_edge(101, 202, 25), set_edge(102, 201, 35),
     set_edge(102, 203, 30)],
    # Cleo (103) starts her shift near the canal.
    [set_edge(103, 202, 45), set_edge(103, 204, 20)],
    # A rush parcel (205) pays well for Bruno; parcel 201 is collected by its owner.
    [set_edge(102, 205, 60), remove_vertex(201)],
    # Dario (104) arrives and can take the parcel by the canal.
    [set_edge(104, 204, 33), set_edge(104, 203, 28)],
]


def main():
    query = Query(QUERY, timeout_s=3.0)
    print("daemon:", query.health()["status"])
    # Subscribe first, then take the whole matching (an empty one while the pool is new).
    watcher = Watcher(PUBLISH, POOL, query_endpoint=QUERY).catch_up()
    seqs = Sender(INGEST, pool=POOL, in_flight=4).send_all(BATCHES)
    print("batches accepted as seqs", seqs)

    while watcher.seq < seqs[-1]:
        diff = watcher.next(timeout_s=5.0)
        if diff is None:
            print("no diff within 5 s (another client in this pool?)")
            break
        print(f"seq {diff['seq']}: weight {diff['weight']}, "
              f"+{[p[:2] for p in diff['added']]} -{[p[:2] for p in diff['removed']]}")
    print("couriers' parcels now:",
          {c: watcher.matching.get(c) for c in (101, 102, 103, 104)})

    why = query.explain(POOL, 103, alternatives=3)
    print(f"courier 103 carries {why['mate']} (earning {why['pair_weight']}); "
          f"price {why['price']}")
    for alt in why["alternatives"]:
        print(f"  parcel {alt['other']} (weight {alt['weight']}) would need "
              f"{alt['slack']} more to be worth taking; its courier: {alt['other_mate']}")


if __name__ == "__main__":
    main()
