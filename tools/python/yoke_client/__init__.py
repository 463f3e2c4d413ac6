"""yoke_client: a small Python client of yoked (proto/yoke/v1/*.proto is the wire spec).

    Sender(ingest_endpoint, pool, ...)      batches in, exactly once;       (sender.py)
                                            .retire() deletes the pool
    Query(query_endpoint)                   questions, as plain dicts       (query.py)
    Watcher(publish_endpoint, pool, ...)    diffs out, optional catch-up    (watcher.py)
    add_vertex, set_edge, unset_edge,       events as tuples                (events.py)
    remove_vertex, hold_pair, release_pair

Each endpoint argument takes one endpoint or several daemons of a cluster (a list, or one
comma-separated string): a pool's batches and queries follow the daemons' NOT_OWNER refusals to
the daemon that serves it (route.py), and a watcher subscribes to every publisher.

Needs the generated modules (`from yoke.v1 import ...`, build/proto/python) and pyzmq on the
path. Errors: Rejected, Unavailable, QueryError, all YokeError (errors.py).
"""

from .errors import QueryError, Rejected, Unavailable, YokeError
from .events import add_vertex, hold_pair, release_pair, remove_vertex, set_edge, unset_edge
from .query import Query
from .sender import Ack, Sender
from .watcher import Watcher

__all__ = ["Ack", "Query", "QueryError", "Rejected", "Sender", "Unavailable", "Watcher",
           "YokeError", "add_vertex", "hold_pair", "release_pair", "remove_vertex", "set_edge",
           "unset_edge"]
