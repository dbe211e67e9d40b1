"""How long ago the front end sent the message a widget is handling.

While a marker is dragged, the browser sends a message on every mouse move, up to 60 a
second. When the kernel falls behind (a preview took longer than the moves' spacing, the
machine is busy), moves queue up, and a preview made for a queued move shows where the mouse
was, not where it is, while the drop waits behind the queue. The age of the move being handled,
against the least age seen in the drag, says how far behind the kernel is.
"""

from __future__ import annotations

from datetime import UTC, datetime

__all__ = ["message_age_s"]


def message_age_s(widget) -> float | None:
    """Return seconds since the front end sent the message being handled, or None.

    From the Jupyter message header's ``date``, stamped by the front end's clock: compare ages
    with each other (the two clocks may differ by a constant), not with zero. None without a
    kernel (a widget built in a test or a script) or a dated message.
    """
    kernel = getattr(getattr(widget, "comm", None), "kernel", None)
    get_parent = getattr(kernel, "get_parent", None)
    if get_parent is None:
        return None
    try:
        sent = get_parent("shell")["header"]["date"]
    except (KeyError, TypeError):
        return None
    if isinstance(sent, str):
        try:
            sent = datetime.fromisoformat(sent)
        except ValueError:
            return None
    if not isinstance(sent, datetime):
        return None
    if sent.tzinfo is None:  # the protocol says UTC
        sent = sent.replace(tzinfo=UTC)
    return (datetime.now(UTC) - sent).total_seconds()
