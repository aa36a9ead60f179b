"""Tests for axeswidget.density: binned pair counts on the wire codes.

The reference for every count matrix is ``numpy.histogram2d`` over the same bin edges, with the missing
code 65535 falling in an extra last bin ``[65535, 65536]``. Codes are generated directly (random
integers), not through the widget's encoder.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from axeswidget import density
from axeswidget.encode import CODE_MAX, CODE_MISSING


def reference_edges(bins: int) -> np.ndarray:
    """Bin edges ``k * 65535 / bins`` (an integer edge is exact in float64), plus the missing bin.

    Written out from the definition in the brief: codes 0..65534 spread evenly over ``bins`` bins,
    missing (65535) in a bin of its own.
    """
    return np.concatenate([np.arange(bins + 1) * (CODE_MAX + 1) / bins, [CODE_MISSING + 1]])


def reference_counts(a, b, bins, mask=None):
    """Count matrix from numpy.histogram2d on the same edges."""
    a, b = np.asarray(a, dtype=np.float64), np.asarray(b, dtype=np.float64)
    if mask is not None:
        a, b = a[mask], b[mask]
    edges = reference_edges(bins)
    counts, _, _ = np.histogram2d(a, b, bins=[edges, edges])
    return counts.astype(np.int64)


def random_codes(rng, n, missing=0.05):
    codes = rng.integers(0, CODE_MAX + 1, n).astype(np.uint16)
    codes[rng.random(n) < missing] = CODE_MISSING
    return codes


# ---------------------------------------------------------------------------------------------------------
# bin_codes
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("bins", [1, 2, 3, 7, 100, 128, 1000, 65535])
def test_bin_codes_matches_histogram_edges(bins):
    every_code = np.arange(CODE_MISSING + 1, dtype=np.uint16)
    got = density.bin_codes(every_code, bins)
    # reference: numpy.digitize over the histogram2d edges (bin k = [e_k, e_k+1), missing = last bin)
    expected = np.digitize(every_code.astype(np.float64), reference_edges(bins)) - 1
    np.testing.assert_array_equal(got, expected)
    assert got.max() == bins  # the missing code, in its own bin
    assert got[CODE_MAX] == bins - 1  # the top code is in the last regular bin


def test_bin_codes_even_spread():
    # every bin gets 65535 / bins codes, give or take one (reference: integer arithmetic by hand)
    for bins in (3, 7, 128, 1000):
        sizes = np.bincount(density.bin_codes(np.arange(CODE_MAX + 1, dtype=np.uint16), bins))
        assert sizes.shape == (bins,)
        assert sizes.min() >= (CODE_MAX + 1) // bins and sizes.max() <= -(-(CODE_MAX + 1) // bins)


def test_bin_codes_edge_cases():
    codes = np.array([0, 1, 32767, CODE_MAX, CODE_MISSING], dtype=np.uint16)
    # bins=1: every present code in bin 0, missing in bin 1 (written out by hand)
    np.testing.assert_array_equal(density.bin_codes(codes, 1), [0, 0, 0, 0, 1])
    # bins=65535: one bin per code, so the bins are the codes themselves (missing 65535 included)
    np.testing.assert_array_equal(density.bin_codes(codes, 65535), codes)
    np.testing.assert_array_equal(density.bin_codes(np.array([], dtype=np.uint16), 8), [])


def test_bin_codes_accepts_other_integer_dtypes():
    codes = np.array([0, 40000, CODE_MISSING], dtype=np.int64)
    np.testing.assert_array_equal(density.bin_codes(codes, 2), [0, 1, 2])  # by hand: 40000*2//65535 = 1


# ---------------------------------------------------------------------------------------------------------
# pair_counts
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("bins", [1, 5, 64, 128, 255, 256, 300])
def test_pair_counts_matches_histogram2d(bins):
    rng = np.random.default_rng(bins)
    a, b = random_codes(rng, 20_000), random_codes(rng, 20_000, missing=0.2)
    got = density.pair_counts(a, b, bins)
    assert got.shape == (bins + 1, bins + 1) and got.dtype == np.int64
    # reference: numpy.histogram2d
    np.testing.assert_array_equal(got, reference_counts(a, b, bins))
    assert got.sum() == a.shape[0]


def test_pair_counts_missing_values_in_last_row_and_column():
    a = np.array([0, CODE_MISSING, CODE_MISSING, CODE_MAX, 100], dtype=np.uint16)
    b = np.array([CODE_MISSING, 0, CODE_MISSING, CODE_MAX, 100], dtype=np.uint16)
    got = density.pair_counts(a, b, bins=4)
    # written out by hand: (0, missing), (missing, 0), (missing, missing), (3, 3), (0, 0)
    expected = np.zeros((5, 5), dtype=np.int64)
    expected[0, 4] = expected[4, 0] = expected[4, 4] = expected[3, 3] = expected[0, 0] = 1
    np.testing.assert_array_equal(got, expected)
    # reference: numpy.histogram2d
    np.testing.assert_array_equal(got, reference_counts(a, b, 4))


def test_pair_counts_with_mask():
    rng = np.random.default_rng(1)
    a, b = random_codes(rng, 30_000), random_codes(rng, 30_000)
    mask = rng.random(30_000) < 0.3
    got = density.pair_counts(a, b, 64, mask)
    # reference: numpy.histogram2d on the masked rows
    np.testing.assert_array_equal(got, reference_counts(a, b, 64, mask))
    assert got.sum() == mask.sum()


def test_layers_sum_to_all_rows():
    rng = np.random.default_rng(2)
    a, b = random_codes(rng, 10_000), random_codes(rng, 10_000)
    mask = rng.random(10_000) < 0.5
    selected = density.pair_counts(a, b, 32, mask)
    unselected = density.pair_counts(a, b, 32, ~mask)
    everything = density.pair_counts(a, b, 32)
    np.testing.assert_array_equal(selected + unselected, everything)
    # reference: numpy.histogram2d for the whole table
    np.testing.assert_array_equal(everything, reference_counts(a, b, 32))
    assert selected.sum() == mask.sum() and unselected.sum() == (~mask).sum()


def test_empty_mask_and_no_rows():
    a = np.array([1, 2, 3], dtype=np.uint16)
    assert density.pair_counts(a, a, 8, np.zeros(3, dtype=bool)).sum() == 0
    empty = density.pair_counts(np.array([], np.uint16), np.array([], np.uint16), 8)
    np.testing.assert_array_equal(empty, np.zeros((9, 9), dtype=np.int64))


def test_pair_counts_diagonal_for_one_axis_against_itself():
    rng = np.random.default_rng(3)
    a = random_codes(rng, 5_000)
    got = density.pair_counts(a, a, 16)
    # reference: numpy.histogram of the axis on its own lies on the diagonal, nothing off it
    hist, _ = np.histogram(a.astype(np.float64), bins=reference_edges(16))
    np.testing.assert_array_equal(np.diag(got), hist)
    assert got.sum() == np.trace(got)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(0, CODE_MISSING), st.integers(0, CODE_MISSING), st.booleans()),
        min_size=0,
        max_size=200,
    ),
    st.integers(1, 300),
)
def test_pair_counts_property(rows, bins):
    a = np.array([r[0] for r in rows], dtype=np.uint16)
    b = np.array([r[1] for r in rows], dtype=np.uint16)
    mask = np.array([r[2] for r in rows], dtype=bool)
    # reference: numpy.histogram2d, all rows and masked rows
    np.testing.assert_array_equal(density.pair_counts(a, b, bins), reference_counts(a, b, bins))
    np.testing.assert_array_equal(density.pair_counts(a, b, bins, mask), reference_counts(a, b, bins, mask))


def test_pair_counts_bins_65535_is_refused_with_the_reason():
    a = np.zeros(3, dtype=np.uint16)
    with pytest.raises(ValueError, match=r"bins=65535 is too many for a count matrix"):
        density.pair_counts(a, a, 65535)
    # the largest allowed matrix still works and agrees with numpy.histogram2d
    rng = np.random.default_rng(4)
    x, y = random_codes(rng, 2_000), random_codes(rng, 2_000)
    bins = density.MAX_PAIR_BINS
    np.testing.assert_array_equal(density.pair_counts(x, y, bins), reference_counts(x, y, bins))


# ---------------------------------------------------------------------------------------------------------
# neighbour_counts
# ---------------------------------------------------------------------------------------------------------


def test_neighbour_counts_follows_the_order():
    rng = np.random.default_rng(5)
    cols = [random_codes(rng, 4_000) for _ in range(4)]
    mask = rng.random(4_000) < 0.4
    order = [2, 0, 3, 1]
    got = density.neighbour_counts(cols, order, 16, mask)
    assert len(got) == 3
    for m, (left, right) in zip(got, zip(order[:-1], order[1:], strict=True), strict=True):
        # reference: numpy.histogram2d on each neighbouring pair
        np.testing.assert_array_equal(m, reference_counts(cols[left], cols[right], 16, mask))
    unselected = density.neighbour_counts(cols, order, 16, ~mask)
    everything = density.neighbour_counts(cols, order, 16)
    for s, u, e in zip(got, unselected, everything, strict=True):
        np.testing.assert_array_equal(s + u, e)


def test_neighbour_counts_by_name_and_default_order():
    rng = np.random.default_rng(6)
    cols = {"x": random_codes(rng, 1_000), "y": random_codes(rng, 1_000), "z": random_codes(rng, 1_000)}
    by_name = density.neighbour_counts(cols, ["z", "x"], 8)
    # reference: numpy.histogram2d
    np.testing.assert_array_equal(by_name[0], reference_counts(cols["z"], cols["x"], 8))
    default = density.neighbour_counts(cols, bins=8)
    assert len(default) == 2
    np.testing.assert_array_equal(default[1], reference_counts(cols["y"], cols["z"], 8))
    assert density.neighbour_counts(cols, ["x"], 8) == []
    assert density.neighbour_counts([], None, 8) == []


# ---------------------------------------------------------------------------------------------------------
# bad input
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda a, b: density.bin_codes(a, 0), r"bins must be at least 1, got 0"),
        (lambda a, b: density.bin_codes(a, -3), r"bins must be at least 1, got -3"),
        (lambda a, b: density.bin_codes(a, 65536), r"bins must be at most 65535"),
        (lambda a, b: density.bin_codes(a, 2.5), r"bins must be an integer"),
        (lambda a, b: density.bin_codes(a, True), r"bins must be an integer"),
        (lambda a, b: density.pair_counts(a, b, 0), r"bins must be at least 1"),
        (
            lambda a, b: density.pair_counts(a, b[:-1]),
            r"codes_a and codes_b must have the same length, got 4 and 3",
        ),
        (
            lambda a, b: density.pair_counts(a, b, 8, np.ones(3, bool)),
            r"mask has shape \(3,\), but the codes have 4",
        ),
        (lambda a, b: density.pair_counts(a, b, 8, np.ones(4, int)), r"mask must be a boolean array"),
        (lambda a, b: density.pair_counts(a.astype(float), b), r"codes_a must hold integer wire codes"),
        (lambda a, b: density.pair_counts(a, b.astype(np.int64) - 6), r"codes_b must lie within 0..65535"),
        (lambda a, b: density.pair_counts(a.reshape(2, 2), b), r"codes_a must be one-dimensional"),
        (
            lambda a, b: density.neighbour_counts([a, b[:-1]], None, 8),
            r"all columns must have the same length",
        ),
        (lambda a, b: density.neighbour_counts([a, b], [0, 2], 8), r"order entry 2 is not a position"),
        (lambda a, b: density.neighbour_counts([a, b], [0, 1, 0], 8), r"order names axis 0 more than once"),
        (lambda a, b: density.neighbour_counts({"p": a}, ["q"], 8), r"order entry 'q' is not an axis name"),
        (lambda a, b: density.neighbour_counts([a, b], None, 0), r"bins must be at least 1"),
    ],
)
def test_bad_input_raises_value_error_naming_the_problem(call, message):
    a = np.array([0, 1, 2, CODE_MISSING], dtype=np.uint16)
    b = np.array([5, 6, 7, 8], dtype=np.uint16)
    with pytest.raises(ValueError, match=message):
        call(a, b)
