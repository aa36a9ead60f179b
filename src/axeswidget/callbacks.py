"""The state lock, ``wait()`` and the ``on_change`` callbacks of a widget.

Page messages may arrive on another thread (a kernel subshell) while a cell runs: selection updates,
callbacks and the background publishers hold one re-entrant lock (:class:`StateGuard`), which also
counts page messages and callback rounds in flight so that ``wait()`` knows when nothing is pending.
"""

from __future__ import annotations

import logging
import threading
import time

_log = logging.getLogger("axeswidget")


class StateGuard:
    """The widget's state lock plus a count of page messages and callback rounds in flight."""

    def __init__(self):
        self.lock = threading.RLock()
        self.settled = threading.Condition(threading.Lock())
        self.busy = 0
        self.inside = threading.local()  # depth of page messages / callbacks on this thread

    @property
    def depth(self) -> int:
        """How many page messages or callback rounds this thread is inside of."""
        return getattr(self.inside, "depth", 0)

    def section(self) -> _Busy:
        """A context counting one page message or callback round in flight."""
        return _Busy(self)

    def wait(self, done, timeout: float | None) -> bool:
        """Block until nothing is in flight and ``done()`` holds; False when ``timeout`` passed first."""
        if self.depth:
            raise RuntimeError(
                "wait() called from an on_change callback or a page message would wait for itself"
            )
        with self.settled:
            return self.settled.wait_for(lambda: self.busy == 0 and done(), timeout)


class _Busy:
    """Counts a page message or callback round in flight (for ``wait``), per guard and thread."""

    def __init__(self, guard: StateGuard):
        self.guard = guard

    def __enter__(self):
        g = self.guard
        g.inside.depth = g.depth + 1
        with g.settled:
            g.busy += 1

    def __exit__(self, *exc):
        g = self.guard
        g.inside.depth -= 1
        with g.settled:
            g.busy -= 1
            g.settled.notify_all()


class Callbacks:
    """The registered ``on_change`` callbacks, throttled while a range is dragged on the page."""

    def __init__(self):
        self.entries: list[list] = []  # [callback, min_interval_while_dragging, last_call_time]
        self.was_dragging = False

    def add(self, callback, every: float) -> None:
        self.entries.append([callback, float(every), 0.0])

    def remove(self, callback) -> None:
        self.entries = [c for c in self.entries if c[0] is not callback]

    def due(self, dragging: bool, changed: bool) -> list:
        """The callbacks to run now: none while throttled; all on release of a drag."""
        final = not dragging
        released = final and self.was_dragging
        self.was_dragging = dragging
        if not (changed or released):
            return []
        now = time.monotonic()
        due = []
        for entry in list(self.entries):
            if not final and now - entry[2] < entry[1]:
                continue  # throttled while dragging; the release always calls
            entry[2] = now
            due.append(entry[0])
        return due


def notify(widget, changed: bool, page: bool = False) -> None:
    """Run the widget's due callbacks. From the page an error is caught, shown in ``callback_error``
    and logged; from Python code it propagates to the caller."""
    due = widget._callbacks.due(widget.dragging, changed)
    if not due:
        return
    errors = []
    with widget._guard.section():
        widget._page_edit = False  # what a callback sets is a change from Python
        try:
            for callback in due:
                if not page:
                    callback(widget)
                    continue
                try:
                    callback(widget)
                except Exception as err:
                    text = error_text(callback, err)
                    errors.append(text)
                    _log.error("axeswidget: %s (the selection stands)", text, exc_info=err)
        finally:
            widget._page_edit = page
    more = f" (and {len(errors) - 1} more)" if len(errors) > 1 else ""
    widget.callback_error = errors[0] + more if errors else ""


def error_text(callback, err: BaseException) -> str:
    """A short one-line description of a callback's error, for the page."""
    name = getattr(callback, "__qualname__", None) or getattr(callback, "__name__", None) or repr(callback)
    message = " ".join(str(err).split())
    if len(message) > 200:
        message = message[:199] + "…"
    return f"callback {name} raised {type(err).__name__}" + (f": {message}" if message else "")
