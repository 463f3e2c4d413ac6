"""Events as plain tuples, and their encoding.

An event is ("add", u), ("set", u, v, w), ("unset", u, v), ("remove", u), ("hold", u, v) or
("release", u, v), the event script's words (docs/formats.md, "Event script"); the helpers below
build them, one per wire kind (ADD_VERTEX, SET_EDGE, UNSET_EDGE, REMOVE_VERTEX, HOLD_PAIR,
RELEASE_PAIR). A yoke.v1 Event message is accepted as is. Vertex keys are unsigned 64-bit
integers; weights signed 64-bit.
"""

from yoke.v1 import events_pb2

_KINDS = {"add": events_pb2.Event.ADD_VERTEX, "set": events_pb2.Event.SET_EDGE,
          "unset": events_pb2.Event.UNSET_EDGE, "remove": events_pb2.Event.REMOVE_VERTEX,
          "hold": events_pb2.Event.HOLD_PAIR, "release": events_pb2.Event.RELEASE_PAIR}


def add_vertex(u):
    """Vertex u arrives with no edges."""
    return ("add", u)


def set_edge(u, v, w):
    """Edge {u, v} gets weight w (created if new; u and v arrive if new)."""
    return ("set", u, v, w)


def unset_edge(u, v):
    """Edge {u, v} goes; its ends stay."""
    return ("unset", u, v)


def remove_vertex(u):
    """Vertex u departs with all its edges."""
    return ("remove", u)


def hold_pair(u, v):
    """The pair {u, v} stays matched, whatever the weights, until release_pair(u, v),
    unset_edge(u, v) or the departure of u or v. The edge {u, v} must exist and neither end be
    held already."""
    return ("hold", u, v)


def release_pair(u, v):
    """The held pair {u, v} is optimised again."""
    return ("release", u, v)


def to_proto(event):
    """The Event message of a tuple (or the message itself). ValueError on an unknown word."""
    if isinstance(event, events_pb2.Event):
        return event
    kind, *numbers = event
    if kind not in _KINDS:
        raise ValueError(f"unknown event kind {kind!r}")
    u, v, w = (list(numbers) + [0, 0, 0])[:3]
    return events_pb2.Event(kind=_KINDS[kind], u=u, v=v, w=w)
