"""What the client's socket holders share: a DEALER made on first use and closed on demand, and
closing at the end of a `with` block or when collected."""

import zmq


class DealerConnection:
    """Holds one DEALER socket to `endpoint`, connected on first use (`_socket()`), dropped by
    `close()` (idempotent). Linger 0: closing never waits for unsent messages. Subclasses set
    `fast_reconnect` to retry a restarting daemon every 50..500 ms instead of ZeroMQ's default."""

    fast_reconnect = False

    def __init__(self, endpoint, context=None):
        self.endpoint = endpoint
        self._context = context or zmq.Context.instance()
        self._sock = None

    def _socket(self):
        if self._sock is None:
            self._sock = self._context.socket(zmq.DEALER)
            self._sock.setsockopt(zmq.LINGER, 0)
            if self.fast_reconnect:
                self._sock.setsockopt(zmq.RECONNECT_IVL, 50)
                self._sock.setsockopt(zmq.RECONNECT_IVL_MAX, 500)
            self._sock.connect(self.endpoint)
        return self._sock

    def close(self):
        if self._sock is not None:
            self._sock.close()
            self._sock = None

    def _move_to(self, endpoint):
        """Drops the socket (and whatever it still queues or receives) and uses `endpoint` from
        the next `_socket()` on."""
        self.close()
        self.endpoint = endpoint

    def __del__(self):
        self.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
