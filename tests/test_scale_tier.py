"""The scale tier, kernel side: an in-memory table above ``sample_above`` rows.

The page gets a seeded sample of rows, exact counts over every row, and binned pair counts of every
row (``pair_counts``); every figure is checked against pandas/numpy/scipy on the full table
(tests/source_reference.py holds the numpy recomputation of codes and bins from the documented rule).
"""

from __future__ import annotations

import threading

import numpy as np
import pandas as pd
import pytest
import traitlets as t
from scipy import stats

import axeswidget as aw
from axeswidget.scaletier import LatestRunner
from tests.source_reference import (
    ORDER,
    SELECTION,
    label_order,
    reference_codes,
    reference_mask,
    reference_pairs,
)

N, ABOVE, K, BINS = 5000, 1000, 400, 128  # BINS: wire.json density.bins, the contract's pair-count bins


@pytest.fixture(scope="module")
def table():
    from tests.source_reference import pump_table

    return pump_table(n=N, seed=11)


@pytest.fixture
def widget(table):
    return aw.AxesWidget(table, sample_above=ABOVE, sample_size=K)


def sample_positions(n: int, k: int) -> np.ndarray:
    """The documented seeded sample: numpy's default_rng(0).choice(n, k, replace=False), sorted."""
    return np.sort(np.random.default_rng(0).choice(n, size=k, replace=False))


def unpack(bits: bytes, n: int) -> np.ndarray:
    return np.unpackbits(np.frombuffer(bits, dtype=np.uint8), bitorder="little")[:n].astype(bool)


def matrices(value: dict) -> dict:
    side = value["bins"] + 1
    out = {}
    for pair in value["pairs"]:
        out[pair["left"], pair["right"]] = tuple(
            np.frombuffer(pair[key], dtype="<u4").reshape(side, side).astype(np.int64)
            for key in ("all", "selected")
        )
    return out


def test_table_trait_carries_a_sample_with_specs_over_all_rows(widget, table):
    value = widget.table
    assert (value["n"], value["total"], value["sampled"]) == (K, N, True)
    specs = {c["name"]: c for c in value["columns"]}
    for name in ORDER:
        assert len(specs[name]["codes"]) == 2 * K  # uint16 codes of the sample rows only
        assert specs[name]["missing"] == int(table[name].isna().sum())  # reference: pandas isna, all rows
    finite = table["flow"][np.isfinite(table["flow"])]
    assert (specs["flow"]["lo"], specs["flow"]["hi"]) == (finite.min(), finite.max())  # reference: pandas
    counts = table["site"].value_counts()  # reference: pandas value_counts over all N rows
    assert specs["site"]["labels"] == label_order(table["site"])
    assert specs["site"]["counts"] == [int(counts[lab]) for lab in specs["site"]["labels"]]
    assert len(widget.mask_bits) == (K + 7) // 8
    assert widget.count == N


def test_sample_rows_are_real_rows(widget, table):
    at = sample_positions(N, K)
    specs = {c["name"]: c for c in widget.table["columns"]}
    for name in ORDER:
        page = np.frombuffer(specs[name]["codes"], dtype=np.uint16)
        # reference: the wire rule recomputed with numpy on the full table, taken at the sample rows
        np.testing.assert_array_equal(page, reference_codes(table, name)[at], err_msg=name)
    for row in (0, 17, K - 1):  # a pinned sample row names a row of the user's table
        widget.pinned = row
        label = widget.pinned_index
        assert label == table.index[at[row]]
        assert table.loc[label, "pressure"] == table["pressure"].iloc[at[row]]
    with pytest.raises(t.TraitError, match=f"0..{K - 1}"):
        widget.pinned = K  # a row position on the page: the sample has K rows


def test_count_is_exact_and_mask_bits_cover_the_sample(widget, table):
    widget.ranges = SELECTION
    expected = reference_mask(table)  # reference: pandas Series.between / isin on all rows
    assert widget.count == int(expected.sum())
    np.testing.assert_array_equal(widget.mask, expected)
    assert len(widget.selected) == int(expected.sum())
    np.testing.assert_array_equal(unpack(widget.mask_bits, K), expected[sample_positions(N, K)])


def test_pair_counts_all_and_selected_match_histogram2d(widget, table):
    assert widget._wait_pair_counts()
    value = widget.pair_counts
    assert value["bins"] == BINS and value["order"] == ORDER and value["seq"] == widget.answered_seq
    got = matrices(value)
    assert list(got) == list(zip(ORDER[:-1], ORDER[1:], strict=True))
    for (left, right), want in zip(got, reference_pairs(table, ORDER, BINS), strict=True):
        np.testing.assert_array_equal(got[left, right][0], want)  # reference: numpy.histogram2d
        np.testing.assert_array_equal(got[left, right][1], want)  # nothing selected: selected = all
    # a page edit (final): the exact count comes first, then the selected rows' pair counts
    seen = []
    widget.observe(lambda c: seen.append(c["name"]), names=["count", "answered_seq", "pair_counts"])
    widget.set_state({"ranges": SELECTION, "edit_seq": 4, "dragging": False})
    assert widget._wait_pair_counts()
    assert seen.index("count") < seen.index("pair_counts") and seen.index("answered_seq") < seen.index(
        "pair_counts"
    )
    value = widget.pair_counts
    assert value["seq"] == 4 == widget.answered_seq
    expected = reference_mask(table)
    got = matrices(value)
    wanted = zip(
        reference_pairs(table, ORDER, BINS), reference_pairs(table, ORDER, BINS, expected), strict=True
    )
    for pair, (every, chosen) in zip(got, wanted, strict=True):
        np.testing.assert_array_equal(got[pair][0], every)  # reference: numpy.histogram2d, all rows
        np.testing.assert_array_equal(got[pair][1], chosen)  # reference: numpy.histogram2d, selected rows
        assert got[pair][1].sum() == int(expected.sum())


def test_pair_counts_follow_the_order(widget, table):
    widget.ranges = SELECTION
    order = ["when", "site", "flow", "running", "pressure", "stage"]
    widget.order = order
    assert widget._wait_pair_counts()
    value = widget.pair_counts
    assert value["order"] == order
    got = matrices(value)
    assert list(got) == list(zip(order[:-1], order[1:], strict=True))
    expected = reference_mask(table)
    every, chosen = reference_pairs(table, order, BINS), reference_pairs(table, order, BINS, expected)
    for pair, want_all, want_sel in zip(got, every, chosen, strict=True):
        np.testing.assert_array_equal(got[pair][0], want_all)  # reference: numpy.histogram2d
        np.testing.assert_array_equal(got[pair][1], want_sel)


def test_dragging_answers_the_count_and_waits_with_pair_counts(widget, table):
    assert widget._wait_pair_counts()
    before = widget.pair_counts
    widget.set_state({"ranges": {"flow": [[0.0, 1.0]]}, "edit_seq": 7, "dragging": True})
    assert widget.count == int(table["flow"].between(0.0, 1.0).sum())  # reference: pandas between
    assert widget.answered_seq == 7
    assert widget._wait_pair_counts()
    assert widget.pair_counts == before  # no recount while dragging
    widget.set_state({"edit_seq": 8, "dragging": False})  # release, same ranges
    assert widget._wait_pair_counts()
    value = widget.pair_counts
    assert value["seq"] == 8
    first = matrices(value)[ORDER[0], ORDER[1]][1]
    assert first.sum() == int(table["flow"].between(0.0, 1.0).sum())


def test_many_quick_edits_publish_only_the_newest(widget, table):
    for i, hi in enumerate(np.linspace(0.1, 2.0, 12)):
        widget.set_state({"ranges": {"flow": [[-1.0, float(hi)]]}, "edit_seq": 10 + i, "dragging": False})
    assert widget._wait_pair_counts()
    value = widget.pair_counts
    assert value["seq"] == 21 == widget.answered_seq
    want = table["flow"].between(-1.0, 2.0).to_numpy()  # reference: pandas between
    assert matrices(value)[ORDER[0], ORDER[1]][1].sum() == int(want.sum())


def test_the_runner_keeps_only_the_newest_waiting_job():
    runner = LatestRunner("test")
    release, started, ran, published = threading.Event(), threading.Event(), [], []

    def job(name, block=False):
        def run(is_latest):
            started.set()
            if block:
                release.wait(10)
            ran.append(name)
            if is_latest():
                published.append(name)

        return run

    runner.submit(job("first", block=True))
    assert started.wait(10)
    runner.submit(job("second"))
    runner.submit(job("third"))  # replaces "second" before it starts
    release.set()
    assert runner.wait(10)
    assert ran == ["first", "third"]
    assert published == ["third"]  # "first" finished after newer jobs came: not published


def test_rank_matrix_matches_scipy_spearman(widget, table):
    value = widget.rank_matrix
    assert value["axes"] == ORDER
    rho = pd.DataFrame(value["values"], index=value["axes"], columns=value["axes"], dtype=float)
    ranks = {
        "flow": table["flow"],
        "stage": table["stage"],
        "pressure": table["pressure"],
        "site": table["site"].map({lab: i for i, lab in enumerate(label_order(table["site"]))}),
        "running": table["running"].astype(float),
        "when": table["when"].astype("int64").astype(float),
    }
    for a in ORDER:
        for b in ORDER:
            if a == b:
                assert rho.loc[a, b] == 1.0
                continue
            both = ranks[a].notna() & ranks[b].notna()
            # reference: scipy.stats.spearmanr on the rows where both are present (all N <= 200,000 rows)
            want = stats.spearmanr(ranks[a][both], ranks[b][both]).statistic
            assert rho.loc[a, b] == pytest.approx(want, abs=1e-9), (a, b)


def test_rank_matrix_uses_a_seeded_sample_above_200000_rows():
    n = 250_000
    rng = np.random.default_rng(5)
    x = rng.normal(size=n)
    frame = pd.DataFrame({"x": x, "y": x + rng.normal(size=n), "z": rng.random(n)})
    w = aw.AxesWidget(frame, sample_above=100_000, sample_size=1000)
    assert w._wait_pair_counts()  # above 200,000 rows the matrix is measured in the background
    rho = pd.DataFrame(w.rank_matrix["values"], index=["x", "y", "z"], columns=["x", "y", "z"])
    rows = frame.iloc[sample_positions(n, 200_000)]  # the documented seeded sample (association's rule)
    want = stats.spearmanr(rows).statistic  # reference: scipy.stats.spearmanr
    np.testing.assert_allclose(rho.to_numpy(), want, atol=1e-9)


def test_small_tables_get_every_row_and_no_pair_counts(table):
    w = aw.AxesWidget(table)  # 5,000 rows, below the default threshold of 1,000,000
    assert (w.table["n"], w.table["total"], w.table["sampled"]) == (N, N, False)
    w.ranges = SELECTION
    assert w._wait_pair_counts()
    assert w.pair_counts == {}
    assert len(w.mask_bits) == (N + 7) // 8
    assert w.rank_matrix["axes"] == ORDER  # the rank matrix is sent in every tier
    ranges = w.ranges
    w.sample_above = 1000  # the threshold can be changed: the table moves to the scale tier
    # the default sample_size (100,000) is more than the table: the sample is every row, in order
    assert (w.table["n"], w.table["total"], w.table["sampled"]) == (N, N, True)
    assert w.ranges == ranges and w.count == int(reference_mask(table).sum())  # reference: pandas
    assert w._wait_pair_counts() and w.pair_counts["order"] == ORDER


def test_tier_options_are_checked(table):
    with pytest.raises(t.TraitError, match="sample_size must be a positive number of rows"):
        aw.AxesWidget(table, sample_size=0)
    w = aw.AxesWidget(table, sample_above=ABOVE, sample_size=K)
    with pytest.raises(t.TraitError, match="sample_above"):
        w.sample_above = -1
    assert w.table["n"] == K


def test_a_swap_keeps_the_tier_and_the_view(widget, table):
    widget.ranges = SELECTION
    widget.order = list(reversed(ORDER))
    widget.data = table.iloc[: N - 10]
    assert widget.table["total"] == N - 10 and widget.table["sampled"]
    assert widget.order == list(reversed(ORDER))
    assert widget.count == int(reference_mask(table.iloc[: N - 10]).sum())  # reference: pandas
    assert widget._wait_pair_counts()
    assert widget.pair_counts["order"] == list(reversed(ORDER))


def test_block_counting_matches_histogram2d_over_many_blocks():
    from axeswidget.density import BLOCK_ROWS, count_bin_pairs

    rng = np.random.default_rng(2)
    n, bins = 3 * BLOCK_ROWS + 123, 128
    left = rng.integers(0, bins + 1, n).astype(np.uint8)
    right = rng.integers(0, bins + 1, n).astype(np.uint8)
    mask = rng.random(n) < 0.3
    edges = np.arange(bins + 2) - 0.5
    for keep in (None, mask):
        rows = slice(None) if keep is None else keep
        want, _, _ = np.histogram2d(left[rows], right[rows], bins=[edges, edges])  # reference: numpy
        np.testing.assert_array_equal(count_bin_pairs(left, right, bins, keep), want.astype(np.int64))


def test_changing_the_tier_unpins_the_row_and_keeps_the_selection(table):
    w = aw.AxesWidget(table, ranges=SELECTION)
    w.pinned = 4321  # a row position among all rows
    w.sample_above, w.sample_size = ABOVE, K
    assert w.pinned == -1  # the page now holds sample rows: position 4321 is gone
    assert w.table["n"] == K and w.count == int(reference_mask(table).sum())  # reference: pandas


def test_edits_from_a_cell_and_from_the_page_at_once_stay_consistent(widget, table):
    # ipykernel may handle a comm message (the page's edit) while a cell sets ranges: the widget's lock
    # keeps count, mask and mask_bits answering one and the same selection
    def from_page():
        for i in range(30):
            widget.set_state({"ranges": {"flow": [[-1.0, 0.1 * i]]}, "edit_seq": 100 + i, "dragging": False})

    page = threading.Thread(target=from_page)
    page.start()
    for i in range(30):
        widget.ranges = {"stage": [[1, 1 + i % 5]]}
    page.join()
    assert widget._wait_pair_counts()
    final = widget.ranges
    want = np.ones(N, dtype=bool)  # reference: pandas Series.between on the final selection
    for axis, items in final.items():
        want &= table[axis].between(items[0][0], items[0][1]).to_numpy()
    assert widget.count == int(want.sum())
    np.testing.assert_array_equal(widget.mask, want)
    np.testing.assert_array_equal(unpack(widget.mask_bits, K), want[sample_positions(N, K)])
    assert matrices(widget.pair_counts)[ORDER[0], ORDER[1]][1].sum() == int(want.sum())
