"""The exceptions of yoke_client. Every one derives from YokeError."""


class YokeError(Exception):
    """Base class of everything this package raises about the daemon."""


class Rejected(YokeError):
    """The daemon refused a batch as a whole; nothing of it was applied.

    code_name: the Error.Code name (e.g. "UNKNOWN_EDGE"); message: the daemon's text;
    event_index: the position of the bad event in its batch, or None when the error is about the
    whole batch; batch_index: the batch's position in what was passed to send_all (0 for send);
    last_batch: with BATCH_SKIPPED, BATCH_FORGOTTEN and OUT_OF_ORDER, the client's highest batch
    number the daemon accepted in the pool (Error.last_batch), else None.
    """

    def __init__(self, code_name, message, event_index=None, batch_index=0, last_batch=None):
        super().__init__(f"batch {batch_index} rejected: {code_name}: {message}"
                         + ("" if event_index is None else f" (event {event_index})"))
        self.code_name = code_name
        self.message = message
        self.event_index = event_index
        self.batch_index = batch_index
        self.last_batch = last_batch


class Unavailable(YokeError):
    """The daemon did not answer (or kept answering UNAVAILABLE / OUT_OF_ORDER) through every
    retry. Batches already acknowledged stay applied; the others may or may not be."""


class QueryError(YokeError):
    """The daemon answered a query with an Error (code_name such as "UNKNOWN_POOL")."""

    def __init__(self, code_name, message):
        super().__init__(f"{code_name}: {message}")
        self.code_name = code_name
        self.message = message
