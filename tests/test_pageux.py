"""Kernel side of the page tools: contrast markers (contrast_axes), colour by kept groups, PNG title."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import traitlets as t
from scipy import stats

import axeswidget as aw
from axeswidget import export
from axeswidget.answer import CONTRAST_MAX_ROWS
from axeswidget.checks import SAVED_GROUPS


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(2000, seed=3)


def _reference_ranking(frame: pd.DataFrame, mask: pd.Series, axes: list[str]) -> list[str]:
    """Most different axes first: KS statistic for numbers, total-variation distance for labels."""
    scores = {}
    for name in axes:
        col = frame[name]
        if col.dtype.kind in "ifmM":
            x = col.astype("int64") if col.dtype.kind == "M" else col.astype(float)
            one, two = x[mask & col.notna()], x[~mask & col.notna()]
            scores[name] = stats.ks_2samp(one, two).statistic  # reference: scipy.stats.ks_2samp
        else:
            # reference: total-variation distance = half the L1 distance of the label shares (pandas)
            p = col[mask].value_counts(normalize=True)
            q = col[~mask].value_counts(normalize=True)
            scores[name] = 0.5 * p.sub(q, fill_value=0).abs().sum()
    return sorted(scores, key=lambda a: -scores[a])


def test_contrast_axes_name_the_three_unbrushed_axes_most_different(fleet):
    axes = [*aw.demo.NUMERIC_AXES, "site", "fault"]
    w = aw.AxesWidget(fleet, axes=axes)
    assert w.contrast_axes == []  # no selection: nothing to mark
    w.ranges = {"efficiency_pct": [[40, 60]]}
    mask = fleet["efficiency_pct"].between(40, 60)  # reference: pandas.Series.between
    others = [a for a in axes if a != "efficiency_pct"]
    assert w.contrast_axes == _reference_ranking(fleet, mask, others)[:3]
    assert "efficiency_pct" not in w.contrast_axes  # brushed axes differ by construction
    # a drag in progress keeps the markers; the release updates them
    before = list(w.contrast_axes)
    w.set_state({"ranges": {"site": ["Red Gully"]}, "edit_seq": 1, "dragging": True})
    assert w.contrast_axes == before
    w.set_state({"dragging": False, "edit_seq": 2})
    mask = fleet["site"].isin(["Red Gully"])  # reference: pandas.Series.isin
    ref = _reference_ranking(fleet, mask, [a for a in axes if a != "site"])[:3]
    assert w.contrast_axes == ref
    w.clear()
    assert w.contrast_axes == []


def test_contrast_axes_skipped_for_very_large_tables(fleet, monkeypatch):
    monkeypatch.setattr("axeswidget.answer.CONTRAST_MAX_ROWS", 1000)
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    w.ranges = {"flow_m3h": [[50, 120]]}
    assert 0 < w.count < len(fleet) and w.contrast_axes == []
    assert CONTRAST_MAX_ROWS == 200_000


def test_color_by_saved_groups_is_accepted_and_unknown_names_still_refused(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "site"])
    w.color_by = SAVED_GROUPS
    assert w.color_by == "@saved"
    with pytest.raises(t.TraitError, match="unknown axis '@other'"):
        w.color_by = "@other"
    with pytest.raises(t.TraitError, match="bundle_by"):
        w.bundle_by = SAVED_GROUPS  # only colour knows the kept groups


def test_a_column_named_like_the_saved_option_is_still_a_column():
    frame = pd.DataFrame({"@saved": ["a", "b", "a"], "x": [1.0, 2.0, 3.0]})
    w = aw.AxesWidget(frame)
    w.color_by = "@saved"
    assert w.color_by == "@saved" and "@saved" in w.axes


def test_save_png_takes_a_title_and_sends_it_to_the_page(fleet, tmp_path):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    w.views = ["v1"]
    sent = []
    w.send = lambda content, buffers=None: sent.append(content)
    export.save_png(w, tmp_path / "a.png", title="Pumps at Red Gully")
    w.save_png(tmp_path / "b.png", scale=2)
    assert sent[0]["title"] == "Pumps at Red Gully" and "title" not in sent[1] and sent[1]["scale"] == 2
    with pytest.raises(TypeError, match="title must be text"):
        w.save_png(tmp_path / "c.png", title=3)
    assert np.all([m["type"] == "axw:png" for m in sent])
