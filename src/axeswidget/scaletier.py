"""The kernel side of the scale tier: pair counts in the background, the rank matrix, the sample mask.

Above ``sample_above`` rows, or for an engine source, the page holds a seeded sample of rows; the
kernel sends the binned pair counts of neighbouring axes (``pair_counts`` trait) and Spearman's rho
between every pair of axes (``rank_matrix`` trait). The contract is SCALE_CONTRACT.md / DEVELOPERS.md.

* :class:`LatestRunner` -- one background thread that runs the newest job; a job submitted while
  another waits replaces it, and a job may only publish while it is still the newest (newer edit wins).
* :func:`count_pairs` -- the ``all`` and ``selected`` matrices of an order, reusing what a cache holds.
* :func:`pair_counts_value` -- the trait value (little-endian uint32 buffers).
* :func:`rank_matrix` -- Spearman's rho from :func:`axeswidget.measures.association`.
* :func:`sample_mask` -- which sample rows of an engine source a selection picks.
* :func:`measure_ranks`, :func:`publish_pair_counts` -- a widget's background jobs, published under its
  state lock only while still the newest (:func:`publish_lock`).
"""

from __future__ import annotations

import atexit
import json
import math
import threading
import weakref
from collections.abc import Callable

import narwhals as nw
import numpy as np
import pandas as pd

from . import measures, wire

#: rows above which the rank matrix is measured on a seeded sample (as ``association``'s default)
RANK_ROWS = 200_000
_UINT32_MAX = np.iinfo(np.uint32).max


_RUNNERS: weakref.WeakSet = weakref.WeakSet()


@atexit.register
def _finish_jobs() -> None:
    """At exit, let running engine queries end (an engine torn down under a running query aborts)."""
    for runner in list(_RUNNERS):
        runner.cancel()
        runner.wait(30)


class LatestRunner:
    """Runs jobs one at a time in a daemon thread; only the newest waiting job is kept.

    ``submit(job)`` calls ``job(is_latest)`` later in the thread; ``is_latest()`` is True while no
    newer job has been submitted, so a job checks it (under the caller's lock) before publishing.
    """

    def __init__(self, name: str):
        self.name = name
        self._cond = threading.Condition()
        self._pending: tuple[int, Callable] | None = None
        self._busy = False
        self._thread: threading.Thread | None = None
        self.generation = 0
        #: the last exception a job raised (kept for the caller to report), or None
        self.error: BaseException | None = None
        _RUNNERS.add(self)

    def submit(self, job: Callable[[Callable[[], bool]], None]) -> None:
        with self._cond:
            self.generation += 1
            self._pending = (self.generation, job)
            if self._thread is None:
                self._thread = threading.Thread(target=self._loop, name=self.name, daemon=True)
                self._thread.start()
            self._cond.notify_all()

    def cancel(self) -> None:
        """Drop the waiting job and make any running one stale."""
        with self._cond:
            self.generation += 1
            self._pending = None
            self._cond.notify_all()

    def _loop(self) -> None:
        while True:
            with self._cond:
                if self._pending is None:
                    self._thread = None
                    self._cond.notify_all()
                    return
                generation, job = self._pending
                self._pending = None
                self._busy = True
            try:
                job(lambda g=generation: self.generation == g)
                self.error = None
            except Exception as err:  # reported through ``error``; the widget stays as it was
                self.error = err
            finally:
                with self._cond:
                    self._busy = False
                    self._cond.notify_all()

    def wait(self, timeout: float | None = None) -> bool:
        """Block until no job runs or waits; False when ``timeout`` ran out first."""
        with self._cond:
            return self._cond.wait_for(lambda: self._pending is None and not self._busy, timeout)


def ranges_key(ranges: dict) -> str:
    """A stable text key of a normalised selection."""
    return json.dumps(ranges, sort_keys=True, default=str)


def _chains(order: list[str], wanted: set[tuple[str, str]]) -> list[list[str]]:
    """Maximal runs of ``order`` whose neighbouring pairs are all in ``wanted``."""
    chains, run = [], []
    for left, right in zip(order[:-1], order[1:], strict=True):
        if (left, right) in wanted:
            run = run or [left]
            run.append(right)
        elif run:
            chains.append(run)
            run = []
    if run:
        chains.append(run)
    return chains


def count_pairs(
    source, order: list[str], bins: int, ranges: dict, mask, cache: dict, is_latest=lambda: True
) -> dict | None:
    """``{(left, right): (all, selected)}`` for the neighbours of ``order``, reusing ``cache``.

    ``cache`` holds ``"all"`` (pair -> matrix) and ``"selected"`` (``(ranges key, pair -> matrix)``);
    it is updated in place. In-memory sources count the rows of ``mask`` (the selection already
    evaluated), engines run the selection. Returns None when a newer job took over meanwhile.
    """
    source = source.background()
    pairs = list(zip(order[:-1], order[1:], strict=True))
    every = cache.setdefault("all", {})
    for chain in _chains(order, {p for p in pairs if p not in every}):
        if not is_latest():
            return None
        found = source.pair_counts(chain, bins)
        for pair, counts in zip(zip(chain[:-1], chain[1:], strict=True), found, strict=True):
            every[pair] = counts
    key = ranges_key(ranges)
    if not ranges:
        return {p: (every[p], every[p]) for p in pairs}
    if cache.get("selected", (None,))[0] != key:
        cache["selected"] = (key, {})
    chosen = cache["selected"][1]
    for chain in _chains(order, {p for p in pairs if p not in chosen}):
        if not is_latest():
            return None
        if source.in_memory:
            found = source.pair_counts(chain, bins, mask=mask)
        else:
            found = source.pair_counts(chain, bins, ranges)
        for pair, counts in zip(zip(chain[:-1], chain[1:], strict=True), found, strict=True):
            chosen[pair] = counts
    return {p: (every[p], chosen[p]) for p in pairs}


def _buffer(counts: np.ndarray) -> bytes:
    return np.minimum(counts, _UINT32_MAX).astype("<u4").tobytes()


def pair_counts_value(order: list[str], bins: int, seq: int, counts: dict) -> dict:
    """The ``pair_counts`` trait value (see the module docstring)."""
    pairs = [
        {
            "left": left,
            "right": right,
            "all": _buffer(counts[left, right][0]),
            "selected": _buffer(counts[left, right][1]),
        }
        for left, right in zip(order[:-1], order[1:], strict=True)
    ]
    return {"bins": int(bins), "order": list(order), "seq": int(seq), "pairs": pairs}


def sample_frame(source, sample) -> pd.DataFrame:
    """The sample rows of an engine source with label columns as ordered categoricals (axis order)."""
    out = {}
    for name, col in source.columns.items():
        values = sample.rows[col.source]
        if col.kind == "category":
            values = pd.Categorical(values, categories=list(col.raw_labels), ordered=True)
        out[name] = values
    return pd.DataFrame(out)


def rank_matrix(source, sample=None) -> dict:
    """``{"axes", "values"}``: Spearman's rho between every pair of axes (None where undefined).

    In memory: every row up to :data:`RANK_ROWS`, a seeded sample above (``association``'s rule);
    engine sources: their sample rows.
    """
    if source.in_memory:
        matrix = measures.association(source.columns, "spearman", max_rows=RANK_ROWS, seed=0)
    elif sample is None or len(sample) < 2:
        names = list(source.columns)
        return {"axes": names, "values": [[None] * len(names) for _ in names]}
    else:
        matrix = measures.association(sample_frame(source, sample), "spearman", max_rows=RANK_ROWS, seed=0)
    values = [[None if not math.isfinite(v) else float(v) for v in row] for row in matrix.to_numpy()]
    return {"axes": [str(a) for a in matrix.index], "values": values}


def sample_mask(source, sample, ranges: dict) -> np.ndarray:
    """Which rows of an engine source's sample a normalised selection picks (the same rule as the engine)."""
    n = len(sample)
    if not ranges or not any(ranges.values()):
        return np.ones(n, dtype=bool)
    if n == 0:
        return np.zeros(0, dtype=bool)
    frame = nw.from_native(sample.rows, eager_only=True)
    picked = frame.select(source.filter_expression(ranges).alias("__picked"))["__picked"]
    return np.asarray(picked.to_numpy(), dtype=bool)


# -- publishing a widget's background results --------------------------------------------------------
def measure_ranks(widget) -> None:
    """Compute the widget's ``rank_matrix`` in the background (a 200,000-row sample takes a while)."""
    source, sample = widget._source, widget._sample

    def job(is_latest):
        value = rank_matrix(source, sample)
        if not publish_lock(widget, is_latest):
            return
        try:
            if widget._source is source:
                widget.rank_matrix = value
        finally:
            widget._state_lock.release()

    widget._rank_jobs.submit(job)


def publish_pair_counts(widget) -> None:
    """Recount the pair counts of the widget's current order in the background (scale tier only).

    ``all`` matrices are reused per pair until the data or its codes change; ``selected`` ones
    until the selection changes. The result is published after count/answered_seq, and only if no
    newer request came in meanwhile.
    """
    with widget._state_lock:
        if widget._sample is None:
            return
        source, order, ranges = widget._source, list(widget.order), dict(widget._applied or {})
        mask, seq, cache = widget._mask, widget.answered_seq, widget._pair_cache
        bins = wire.DENSITY_BINS

        def job(is_latest):
            counts = count_pairs(source, order, bins, ranges, mask, cache, is_latest)
            if counts is None or not publish_lock(widget, is_latest):
                return
            try:
                if widget._source is source:
                    widget.pair_counts = pair_counts_value(order, bins, seq, counts)
            finally:
                widget._state_lock.release()

        widget._pair_jobs.submit(job)


def publish_lock(widget, is_latest) -> bool:
    """Take the widget's state lock for a background result, unless a newer request makes it stale
    first (a data swap holds the lock while it waits for the running job: never wait for it blindly)."""
    lock = widget._state_lock
    while not lock.acquire(timeout=0.05):
        if not is_latest():
            return False
    if is_latest():
        return True
    lock.release()
    return False


def wait_published(widget, timeout: float = 60.0) -> bool:
    """Block until the widget's background pair counts and rank matrix are published."""
    done = widget._pair_jobs.wait(timeout) and widget._rank_jobs.wait(timeout)
    for runner in (widget._pair_jobs, widget._rank_jobs):
        if runner.error is not None:
            raise runner.error
    return done
