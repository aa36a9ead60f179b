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
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from axeswidget import density, evaluate, selection, wire
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
    from axeswidget import export, widget

    assert tuple(got["OPTIONS"]) == wire.OPTIONS == tuple(widget._OPTIONS)
    # the PNG protocol as the page's snapshot module sees it
    assert got["PNG_MESSAGE"] == wire.PNG_MESSAGE == export.PNG_MESSAGE
    assert got["PNG_MAX_SCALE"] == wire.PNG_MAX_SCALE == export.MAX_SCALE
    # recalled from memory: the server drops page -> server websocket messages above 10 MiB (tornado default)
    assert got["PNG_MAX_BYTES"] == wire.PNG_MAX_BYTES < 10 * 1024 * 1024


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
    finite = np.sort(values[np.isfinite(values)])
    assume(finite.size > 0)  # a range needs finite ends (and a log axis a positive domain)
    col = encode_column("v", pd.Series(values))
    if log:
        col.log = True
        col.encode()
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
        kernel = evaluate.axis_mask(col, selection.normalise_items([[lo, hi]], col))
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
    packed = evaluate.pack(mask)
    got = page("unpack", bits=base64.b64encode(packed).decode(), n=len(mask))
    assert np.array_equal(np.array(got, dtype=bool), mask)


# -- selections: the kernel's normal form survives the page ----------------------------------------------
def _frame() -> pd.DataFrame:
    rng = np.random.default_rng(7)
    n = 400
    return pd.DataFrame(
        {
            "num": rng.normal(0, 1000, n),
            "int": rng.integers(0, 30, n),
            "cat": [f"k{i:03d}" for i in rng.integers(0, 75, n)],  # more labels than bands: a shared band
            "flag": rng.integers(0, 2, n).astype(bool),
            "when": pd.Timestamp("2020-01-01") + pd.to_timedelta(rng.integers(0, 10**9, n), unit="s"),
            "zoned": (
                pd.Timestamp("2020-01-01", tz="UTC") + pd.to_timedelta(rng.integers(0, 10**9, n), unit="s")
            ).tz_convert("Europe/Berlin"),
            "took": pd.to_timedelta(rng.integers(0, 10**6, n), unit="ms"),
        }
    )


FRAME = _frame()


def _spans(ends, open_lo, open_hi):
    """Disjoint ranges from sorted distinct ends, the outer ends possibly open."""
    ends = sorted(set(ends))
    pairs = [[ends[i], ends[i + 1]] for i in range(0, len(ends) - 1, 2)]
    if pairs and open_lo:
        pairs[0][0] = None
    if pairs and open_hi:
        pairs[-1][1] = None
    return pairs


@st.composite
def selections(draw, columns):
    out = {}
    ms = st.integers(1_577_836_800_000, 1_577_836_800_000 + 10**12)  # 2020 .. 2051, in milliseconds
    for name, col in columns.items():
        if not draw(st.booleans()):
            continue
        lane = [None] if draw(st.booleans()) else []
        open_lo, open_hi = draw(st.booleans()), draw(st.booleans())
        if col.kind in ("category", "boolean"):
            shown = col.labels[: wire.CATEGORY_BAND_LIMIT]
            items = draw(st.lists(st.sampled_from(shown), max_size=4, unique=True))
            if len(col.labels) > len(shown) and draw(st.booleans()):
                items.append({"rest": True})
        elif col.kind == "number":
            ends = draw(
                st.lists(st.floats(-5000, 5000, allow_nan=False), min_size=2, max_size=4, unique=True)
            )
            items = _spans(ends, open_lo, open_hi)
        elif col.kind == "integer":
            items = _spans(
                draw(st.lists(st.integers(-5, 35), min_size=2, max_size=4, unique=True)), open_lo, open_hi
            )
        elif col.kind == "timedelta":
            ends = draw(st.lists(st.integers(0, 10**6), min_size=2, max_size=4, unique=True))
            items = _spans([e / 1000 for e in ends], open_lo, open_hi)
        else:  # datetime, naive or tz-aware: instants to the millisecond
            ends = draw(st.lists(ms, min_size=2, max_size=4, unique=True))
            stamps = sorted(pd.Timestamp(e, unit="ms", tz="UTC") for e in ends)
            if col.tz is None:
                stamps = [s.tz_localize(None) for s in stamps]
            items = [
                [None if a is None else stamps[ends_i[0]], None if b is None else stamps[ends_i[1]]]
                for (a, b), ends_i in zip(
                    _spans(range(len(stamps)), open_lo, open_hi),
                    [(i, i + 1) for i in range(0, len(stamps) - 1, 2)],
                    strict=False,
                )
            ]
        if items or lane:
            out[name] = items + lane
    return out


COLUMNS = {name: encode_column(name, FRAME[name]) for name in FRAME.columns}


def test_the_frame_has_every_kind():
    kinds = {name: col.kind for name, col in COLUMNS.items()}
    assert kinds == {
        "num": "number",
        "int": "integer",
        "cat": "category",
        "flag": "boolean",
        "when": "datetime",
        "zoned": "datetime",
        "took": "timedelta",
    }
    assert len(COLUMNS["cat"].labels) > wire.CATEGORY_BAND_LIMIT and COLUMNS["zoned"].tz == "Europe/Berlin"


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(picked=selections(COLUMNS))
def test_page_round_trip_keeps_the_kernel_normal_form(page, picked):
    normal = selection.normalise(picked, COLUMNS)
    raw = raw_table(list(COLUMNS.values()))
    [back] = page("roundTrip", raw=raw, ranges=[normal])
    # the page writes an axis it re-reads in the kernel's normal form ...
    for axis, items in normal.items():
        if any(
            isinstance(i, str) and i not in COLUMNS[axis].labels[: wire.CATEGORY_BAND_LIMIT] for i in items
        ):
            # ... except labels beyond the bands: the page knows them only as the shared band, which the
            # kernel expands to those labels again
            assert {"rest": True} in back[axis]
        else:
            assert back[axis] == items, (axis, items, back[axis])
    assert set(back) == set(normal)
    # ... and the kernel reads what the page wrote as the same selection
    assert selection.normalise(back, COLUMNS) == normal


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(picked=selections(COLUMNS))
def test_a_page_edit_keeps_what_the_kernel_set(page, picked):
    normal = selection.normalise(picked, COLUMNS)
    # the new range [6000, 7000] lies above every generated one, apart from one open upward
    assume(not any(i is not None and i[1] is None for i in normal.get("num", [])))
    raw = raw_table(list(COLUMNS.values()))
    back = page("addRange", raw=raw, ranges=normal, axis="num", span=[6000.0, 7000.0])
    # every other axis exactly as the kernel set it; on the edited one, the kernel's ranges plus the new one
    assert {k: v for k, v in back.items() if k != "num"} == {k: v for k, v in normal.items() if k != "num"}
    before = normal.get("num", [])
    spans = [i for i in before if i is not None] + [[6000.0, 7000.0]]
    assert back["num"] == spans + ([None] if None in before else [])
    assert selection.normalise(back, COLUMNS)["num"] == back["num"]
