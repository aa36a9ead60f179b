"""View options: validated with clear errors, kept when valid."""

from __future__ import annotations

import pytest
import traitlets

import axeswidget as aw


@pytest.fixture
def w():
    return aw.AxesWidget(aw.demo.pump_fleet(200, seed=1))


@pytest.mark.parametrize(
    "option, value, message",
    [
        ("color_by", "nope", "unknown axis 'nope' for color_by"),
        ("bundle_by", "nope", "unknown axis 'nope' for bundle_by"),
        ("bundle_by", "flow_m3h", "bundle_by needs a category axis; 'flow_m3h' is a number axis"),
        ("opacity", 1.5, "opacity must be between 0 and 1"),
        ("bundle_strength", -0.1, "bundle_strength must be between 0 and 1"),
        ("pinned", 200, "pinned must be a row position in 0..199 or -1"),
        ("view_mode", "fancy", "view_mode"),
        ("orientation", "diagonal", "orientation"),
    ],
)
def test_bad_options_are_clear_errors(w, option, value, message):
    before = getattr(w, option)
    with pytest.raises(traitlets.TraitError, match=message):
        setattr(w, option, value)
    assert getattr(w, option) == before


def test_good_options_are_kept_and_pinned_index_follows_the_data_index(w):
    w.color_by, w.bundle_by, w.opacity, w.view_mode = "efficiency_pct", "site", 0.3, "density"
    assert (w.color_by, w.bundle_by, w.opacity, w.view_mode) == ("efficiency_pct", "site", 0.3, "density")
    w.pinned = 17
    assert w.pinned_index == w.data.index[17]
    w.pinned = -1
    assert w.pinned_index is None
