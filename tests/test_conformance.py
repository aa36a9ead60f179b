"""The kernel and the page agree on the wire: Python's codes, bins, masks and selections read by the page's
own code (bundled with esbuild and run with node, as in tests/test_colour.py)."""

from __future__ import annotations

import base64
import json
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from axeswidget import density, selection, wire
from axeswidget.encode import CODE_MAX, CODE_MISSING, encode_column, quantise

ROOT = Path(__file__).resolve().parents[1]
JS = ROOT / "js"


class Page:
    """The page's own code (js/test/wirepage.ts) bundled once into a node program answering JSON lines."""

    def __init__(self, folder: Path):
        esbuild = ROOT / "node_modules" / ".bin" / "esbuild"
        if not esbuild.exists() or not shutil.which("node"):
            pytest.skip("needs node and the JS dev dependencies (npm install)")
        entry = JS / "test" / "wirepage.ts"
        out = folder / "page.mjs"
        subprocess.run(
            [str(esbuild), str(entry), "--bundle", "--platform=node", "--format=esm", f"--outfile={out}"],
            check=True,
            capture_output=True,
        )
        self.proc = subprocess.Popen(
            ["node", str(out)], stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True, bufsize=1
        )

    def __call__(self, op: str, **args):
        self.proc.stdin.write(json.dumps({"op": op, **args}) + "\n")
        self.proc.stdin.flush()
        return json.loads(self.proc.stdout.readline())

    def close(self):
        self.proc.stdin.close()
        self.proc.wait(timeout=10)


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    p = Page(tmp_path_factory.mktemp("page"))
    yield p
    p.close()


def raw_table(columns) -> dict:
    """The `table` trait as the page receives it, with the codes buffers base64-encoded."""
    specs = []
    for col in columns:
        spec = dict(col.spec())
        spec["codes"] = base64.b64encode(bytes(spec["codes"])).decode()
        specs.append(spec)
    return {"n": len(columns[0].missing), "columns": specs}


def test_the_contract_is_the_same_on_both_sides(page):
    got = page("contract")
    assert got["CODE_MAX"] == wire.CODE_MAX == CODE_MAX == 65534
    assert got["CODE_MISSING"] == wire.CODE_MISSING == CODE_MISSING == 65535
    assert got["HIST_BINS"] == wire.HIST_BINS and wire.HIST_BINS << wire.HIST_SHIFT == CODE_MISSING + 1
    assert got["DENSITY_BINS"] == wire.DENSITY_BINS
    from axeswidget import widget

    assert tuple(got["OPTIONS"]) == wire.OPTIONS == tuple(widget._OPTIONS)


# -- codes: Python's quantisation read back by the page, linear and log --------------------------------
EXTREMES = [
    ("linear", [-1e308, -3.5, 0.0, 1e-300, 2.25, 1e308, np.inf, -np.inf, np.nan], False),
    ("wide", [-1e308, 1e308, 0.0, 5e307], False),
    ("log", [1e-300, 1e-5, 1.0, 3.0, 1e300, 1e308, np.inf, np.nan], True),
    ("log narrow", [0.5, 0.75, 1.0, 2.0, 4.0, np.inf, -np.inf], True),
]


@pytest.mark.parametrize("name,values,log", EXTREMES, ids=[e[0] for e in EXTREMES])
def test_page_decodes_python_codes(page, name, values, log):
    values = np.array(values, dtype=np.float64)
    col = encode_column("v", pd.Series(values))
    if log:
        col.log = True
        col.encode()
    # the trait's codes are encode.quantise's
    assert np.array_equal(col.codes, quantise(values, col.lo, col.hi, log, col.missing))
    decoded = page("decode", raw=raw_table([col]))[0]
    for v, c, d in zip(values, col.codes, decoded, strict=True):
        if np.isnan(v):
            assert c == CODE_MISSING and d == "NaN"
        elif np.isinf(v):
            # ±inf pin to the ends of the axis
            end = col.lo if v < 0 else col.hi
            assert c == (0 if v < 0 else CODE_MAX)
            assert isinstance(d, float | int) and np.isclose(d, end, rtol=1e-12), (v, d, end)
        else:
            assert isinstance(d, float | int) and np.isfinite(d), (v, d)
            if log:
                # within half a step in log space (reference: the step is (ln hi - ln lo) / CODE_MAX)
                step = (np.log(col.hi) - np.log(col.lo)) / CODE_MAX
                assert abs(np.log(d) - np.log(v)) <= step / 2 * (1 + 1e-9) + 1e-12, (v, d)
            else:
                step = (col.hi / 2 - col.lo / 2) * 2 / CODE_MAX
                assert abs(d / 2 - v / 2) <= step / 4 * (1 + 1e-9), (v, d)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    data=st.lists(
        st.one_of(
            st.floats(min_value=-1e308, max_value=1e308, allow_nan=False),
            st.sampled_from([np.inf, -np.inf, np.nan, 0.0, 1e308, -1e308]),
        ),
        min_size=2,
        max_size=60,
    ),
    log=st.booleans(),
    picks=st.lists(
        st.tuples(st.integers(0, 59), st.integers(0, 59), st.booleans(), st.booleans()),
        min_size=1,
        max_size=4,
    ),
)
def test_page_preview_contains_the_exact_selection(page, data, log, picks):
    values = np.array(data, dtype=np.float64)
    if log:
        values = np.where(np.isfinite(values), np.abs(values) + 1e-300, values)
        values[values == -np.inf] = np.nan  # a log axis holds positive values
    col = encode_column("v", pd.Series(values))
    if log:
        col.log = True
        col.encode()
    finite = np.sort(values[np.isfinite(values)])
    if not finite.size:
        return
    ranges = []
    for a, b, open_lo, open_hi in picks:
        lo, hi = sorted((finite[a % finite.size], finite[b % finite.size]))
        ranges.append({"v": [[None if open_lo else float(lo), None if open_hi else float(hi)]]})
    previews = page("preview", raw=raw_table([col]), ranges=ranges)
    series = pd.Series(values)
    for r, got in zip(ranges, previews, strict=True):
        lo, hi = r["v"][0]
        # reference: pandas.Series.between on the exact values; an open end takes in ±inf on its side
        ref = series.between(-np.inf if lo is None else lo, np.inf if hi is None else hi).to_numpy()
        got = np.array(got, dtype=bool)
        kernel = selection.axis_mask(col, selection.normalise_items([[lo, hi]], col))
        assert np.array_equal(kernel, ref)
        # the preview takes in every exactly selected row ...
        assert not (ref & ~got).any(), (lo, hi, values[ref & ~got])
        # ... and only rows within a quantisation step of an end
        codes = col.codes.astype(np.int64)
        extra = got & ~ref
        if extra.any():
            ends = [quantise(np.array([e]), col.lo, col.hi, log)[0] for e in (lo, hi) if e is not None]
            assert all(min(abs(int(c) - int(e)) for e in ends) <= 1 for c in codes[extra]), (lo, hi)


# -- bins ------------------------------------------------------------------------------------------------
def test_histogram_bins_match_numpy(page):
    codes = np.array([0, 1, 1023, 1024, 1025, 32767, 64511, 64512, CODE_MAX, CODE_MISSING, 40000])
    got = np.array(page("hist", codes=codes.tolist()))
    present = codes != CODE_MISSING
    # reference: numpy.histogram with HIST_BINS equal bins over all 65536 codes
    edges = np.linspace(0, CODE_MISSING + 1, wire.HIST_BINS + 1)
    ref = np.digitize(codes[present], edges) - 1
    assert np.array_equal(got[present], ref) and (got[~present] == -1).all()
    counts, _ = np.histogram(codes[present], bins=edges)
    assert np.array_equal(np.bincount(got[present], minlength=wire.HIST_BINS), counts)


@pytest.mark.parametrize("bins", [1, 7, wire.DENSITY_BINS, 255, 1000])
def test_density_bins_match_python(page, bins):
    got = np.array(page("density", bins=bins, categorical=False))
    every = np.arange(CODE_MISSING + 1, dtype=np.uint16)
    assert np.array_equal(got, density.bin_codes(every, bins))


# -- masks -----------------------------------------------------------------------------------------------
@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.booleans(), min_size=0, max_size=200))
def test_pack_matches_unpack(page, bits):
    mask = np.array(bits, dtype=bool)
    packed = selection.pack(mask)
    got = page("unpack", bits=base64.b64encode(packed).decode(), n=len(mask))
    assert np.array_equal(np.array(got, dtype=bool), mask)
