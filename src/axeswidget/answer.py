"""Answer a selection edit: the exact count and page mask, the callbacks, the contrast markers.

For a final edit from the page the ``on_change`` callbacks run before the answer (count, mask_bits,
answered_seq) leaves the kernel, so a page showing the exact count means its callbacks are done.
Pair counts (scale tier) follow in the background, never delaying the count.
"""

from __future__ import annotations

import warnings

import numpy as np

from . import contrast, scaletier
from .callbacks import notify
from .evaluate import pack

#: above this many rows the page's contrast markers are not computed (``contrast()`` still works): measured
#: here, ``contrast.compare`` over 13 axes takes ~0.4 s at 10^5 rows and ~5 s at 10^6, after every edit
CONTRAST_MAX_ROWS = 200_000


def apply(widget, ranges, pairs: bool = True) -> None:
    """Answer a selection: exact count and page mask first, pair counts after (final edits only)."""
    w = widget
    with w._state_lock:
        source = w._source
        changed = w._applied is None or ranges != w._applied
        page = w._page_edit
        # the contrast markers follow final selections (kept as they were while dragging)
        mark = not w.dragging and (changed or w._callbacks.was_dragging)
        with w.hold_sync():
            if changed:
                if source.in_memory:
                    mask = source.mask(ranges)
                    count = int(np.count_nonzero(mask))
                    on_page = mask if w._sample is None else mask[w._sample.positions]
                else:
                    mask = None
                    count = source.count(ranges)
                    on_page = scaletier.sample_mask(source, w._sample, ranges)
                w._mask, w._applied = mask, {k: list(v) for k, v in ranges.items()}
                w.mask_bits = pack(on_page)
                w.count = count
            w.answered_seq = w.edit_seq
            final = not w.dragging
            if page and final:
                # a final edit from the page: callbacks first, then the answer goes out (on leaving
                # hold_sync), so the page's exact count means the callbacks are done
                notify(w, changed, page=True)
        if not (page and final):
            notify(w, changed, page=page)
        # computed after the answer and the callbacks, so it never delays the exact count
        if mark:
            mark_contrast(w)
    if pairs and final:  # after the answer: the exact count never waits for pair counts
        scaletier.publish_pair_counts(w)


def mark_contrast(widget) -> None:
    """Name the 3 unbrushed axes that set a final selection apart most (``contrast``) for the page.

    An empty list without a proper selection (no row or every row selected) and above
    ``CONTRAST_MAX_ROWS`` rows, where it would slow every edit down.
    """
    mask = widget._mask
    n, picked = widget._source.n, widget.count
    if mask is None or not 0 < picked < n or n > CONTRAST_MAX_ROWS:
        widget.contrast_axes = []
        return
    try:
        # huge values (1e300) overflow the spread of the mean difference: not the user's concern here
        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            table = contrast.compare(widget._columns, mask, brushed=widget.ranges)
    except ValueError:
        widget.contrast_axes = []
        return
    # the brushed axes differ by construction: mark the others
    top = table[table["statistic"].notna() & ~table["brushed"]]["axis"].head(3)
    widget.contrast_axes = [str(a) for a in top]
