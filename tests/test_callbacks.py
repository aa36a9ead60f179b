"""on_change callbacks and page messages arriving on another thread (kernel subshells).

The page's messages are delivered here with ``set_state`` from a second thread, as ipykernel does when
it handles comm messages on a subshell while a cell runs on the main thread.
"""

from __future__ import annotations

import logging
import threading
import time

import numpy as np
import pytest

import axeswidget as aw


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(3000, seed=11)


def _flow_range(fleet, lo, hi):
    # reference: pandas.Series.between (inclusive on both ends)
    return fleet["flow_m3h"].between(lo, hi).to_numpy()


def _record_sends(w, events):
    """Record every state message the widget sends to the page (no comm in these tests)."""
    real = w.send_state

    def send_state(key=None):
        keys = [key] if isinstance(key, str) else sorted(key) if key is not None else ["*"]
        events.append(("sent", tuple(keys), w.answered_seq))
        real(key)

    w.send_state = send_state


def test_final_page_edit_runs_callbacks_before_the_answer_is_sent(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    events = []

    def slow(wid):
        events.append(("start", wid.edit_seq))
        time.sleep(0.2)
        events.append(("end", wid.edit_seq, wid.count))

    w.on_change(slow, every=0.0)
    _record_sends(w, events)
    w.set_state({"ranges": {"flow_m3h": [[20, 60]]}, "edit_seq": 1, "dragging": False})
    end = events.index(("end", 1, int(_flow_range(fleet, 20, 60).sum())))
    answer = [i for i, e in enumerate(events) if e[0] == "sent" and "answered_seq" in e[1] and e[2] == 1]
    assert answer, events
    assert answer[0] > end  # the page learns the exact count only after the callback finished
    # an intermediate (dragging) edit answers first: the preview is not held up by a slow callback
    events.clear()
    w.set_state({"ranges": {"flow_m3h": [[20, 70]]}, "edit_seq": 2, "dragging": True})
    sent = [i for i, e in enumerate(events) if e[0] == "sent" and "answered_seq" in e[1]]
    assert sent and sent[0] < events.index(("start", 2))


def test_a_cell_that_waits_sees_the_callback_result_for_the_final_selection(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    seen = []

    def refit(wid):
        ranges = wid.ranges
        time.sleep(0.15)  # a slow refit
        seen.append((ranges, int(wid.mask.sum())))

    w.on_change(refit, every=0.0)
    drag = [20.0, 30.0, 40.0, 50.0]

    def page():  # the subshell: a drag (intermediate edits) and the release
        for k, hi in enumerate(drag):
            w.set_state({"ranges": {"flow_m3h": [[10, hi]]}, "edit_seq": k + 1, "dragging": True})
        w.set_state({"ranges": {"flow_m3h": [[10, 55]]}, "edit_seq": len(drag) + 1, "dragging": False})

    thread = threading.Thread(target=page)
    thread.start()
    time.sleep(0.05)  # the drag is under way when the next cell runs
    assert w.wait(timeout=30) is True
    # every edit received was answered and the callback has seen the final selection
    assert w.answered_seq == w.edit_seq == len(drag) + 1
    assert seen[-1] == ({"flow_m3h": [[10, 55]]}, int(_flow_range(fleet, 10, 55).sum()))
    np.testing.assert_array_equal(w.mask, _flow_range(fleet, 10, 55))
    assert w.count == int(w.mask.sum())
    thread.join()


def test_wait_times_out_while_a_callback_runs(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    started, release = threading.Event(), threading.Event()

    def blocked(wid):
        started.set()
        release.wait(10)

    w.on_change(blocked)
    thread = threading.Thread(
        target=w.set_state, args=({"ranges": {"head_m": [[10, 20]]}, "edit_seq": 1, "dragging": False},)
    )
    thread.start()
    assert started.wait(10)
    t0 = time.monotonic()
    assert w.wait(timeout=0.2) is False
    assert time.monotonic() - t0 >= 0.2
    release.set()
    assert w.wait(timeout=10) is True
    thread.join()
    assert w.answered_seq == 1


def test_python_changes_wait_for_a_page_message_in_progress(fleet):
    """The lock: a range set in a cell cannot interleave with the page's message and its callbacks."""
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    started = threading.Event()
    seen = []

    def slow(wid):
        before = dict(wid.ranges)
        started.set()
        time.sleep(0.3)
        seen.append((before, dict(wid.ranges), int(wid.mask.sum()), wid.count))

    w.on_change(slow)
    thread = threading.Thread(
        target=w.set_state,
        args=({"ranges": {"flow_m3h": [[20, 60]]}, "edit_seq": 1, "dragging": False},),
    )
    thread.start()
    assert started.wait(10)
    w.ranges = {"head_m": [[10, 30]]}  # the cell: blocks until the page's message is done
    thread.join()
    page_rows = int(_flow_range(fleet, 20, 60).sum())
    # the page's callback saw its own selection throughout, never the cell's half-applied one
    assert seen[0] == ({"flow_m3h": [[20, 60]]}, {"flow_m3h": [[20, 60]]}, page_rows, page_rows)
    # then the cell's change, with its own callback call
    cell_rows = fleet["head_m"].between(10, 30)  # reference: pandas.Series.between
    assert seen[1][1] == {"head_m": [[10, 30]]} and seen[1][2] == int(cell_rows.sum())
    np.testing.assert_array_equal(w.mask, cell_rows.to_numpy())
    assert w.count == int(cell_rows.sum())


def test_wait_from_inside_a_callback_is_refused(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    w.on_change(lambda wid: wid.wait())
    with pytest.raises(RuntimeError, match="wait for itself"):
        w.ranges = {"head_m": [[10, 20]]}


def test_a_failing_callback_during_a_page_drag_is_shown_and_the_widget_keeps_working(fleet, caplog):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    calls = []

    def broken(wid):
        raise ZeroDivisionError("division by zero")

    w.on_change(broken)
    w.on_change(lambda wid: calls.append(wid.count))  # a later callback still runs
    with caplog.at_level(logging.ERROR, logger="axeswidget"):
        w.set_state({"ranges": {"flow_m3h": [[20, 60]]}, "edit_seq": 1, "dragging": False})
    assert w.callback_error.startswith("callback ")
    assert "broken raised ZeroDivisionError: division by zero" in w.callback_error
    assert any("broken raised ZeroDivisionError" in r.getMessage() for r in caplog.records)
    assert caplog.records[-1].exc_info is not None  # the traceback goes to the log
    # the selection stands and is answered
    rows = _flow_range(fleet, 20, 60)
    np.testing.assert_array_equal(w.mask, rows)
    assert w.count == calls[-1] == int(rows.sum()) and w.answered_seq == 1
    # the next edit works; once the callbacks succeed the message goes away
    w.off_change(broken)
    w.set_state({"ranges": {"flow_m3h": [[30, 60]]}, "edit_seq": 2, "dragging": False})
    assert w.callback_error == ""
    assert w.count == int(_flow_range(fleet, 30, 60).sum())


def test_a_failing_callback_run_from_python_raises_to_the_caller(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])

    def broken(wid):
        raise KeyError("no such model")

    w.on_change(broken)
    with pytest.raises(KeyError, match="no such model"):
        w.ranges = {"flow_m3h": [[20, 60]]}
    # the change itself was made and evaluated
    assert w.ranges == {"flow_m3h": [[20, 60]]}
    np.testing.assert_array_equal(w.mask, _flow_range(fleet, 20, 60))
    assert w.count == int(w.mask.sum())


def test_callback_error_is_a_synced_trait(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h"])
    assert w.trait_metadata("callback_error", "sync") is True
    assert w.get_state()["callback_error"] == ""


def test_any_trait_set_from_a_cell_waits_for_the_page_message(fleet):
    """traitlets keeps its hold and validation state per widget: a cell setting an option while a page
    message is being applied waits for it instead of sharing that state across threads."""
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "site"])
    started, release = threading.Event(), threading.Event()
    w.on_change(lambda wid: (started.set(), release.wait(10)))
    page = threading.Thread(
        target=w.set_state, args=({"ranges": {"head_m": [[10, 20]]}, "edit_seq": 1, "dragging": False},)
    )
    page.start()
    assert started.wait(10)
    done = threading.Event()
    cell = threading.Thread(target=lambda: (setattr(w, "color_by", "site"), done.set()))
    cell.start()
    assert not done.wait(0.3)  # blocked behind the page's message
    release.set()
    assert done.wait(10)
    page.join()
    cell.join()
    assert w.color_by == "site" and w.answered_seq == 1
