"""The page's colour maps against their published references (matplotlib's viridis table, Okabe–Ito)."""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]


def run_js(tmp_path, body: str):
    """Bundle a tiny script importing js/colour.ts with esbuild and run it with node; return its JSON."""
    esbuild = ROOT / "node_modules" / ".bin" / "esbuild"
    if not esbuild.exists() or not shutil.which("node"):
        pytest.skip("needs node and the JS dev dependencies (npm install)")
    entry = tmp_path / "entry.ts"
    entry.write_text(f'import {{ viridis, OKABE_ITO, colouring }} from "{ROOT / "js" / "colour"}";\n{body}\n')
    out = tmp_path / "entry.mjs"
    subprocess.run(
        [str(esbuild), str(entry), "--bundle", "--platform=node", "--format=esm", f"--outfile={out}"],
        check=True,
        capture_output=True,
    )
    return json.loads(subprocess.run(["node", str(out)], check=True, capture_output=True, text=True).stdout)


def test_viridis_matches_matplotlib(tmp_path):
    matplotlib = pytest.importorskip("matplotlib")
    ts = np.linspace(0, 1, 101)
    got = np.array(
        run_js(tmp_path, f"console.log(JSON.stringify({json.dumps(ts.tolist())}.map((t) => viridis(t))))")
    )
    # reference: matplotlib's 256-entry viridis table (the published map), interpolated linearly
    table = np.asarray(matplotlib.colormaps["viridis"].colors)
    grid = np.linspace(0, 1, len(table))
    ref = np.stack([np.interp(ts, grid, table[:, c]) for c in range(3)], axis=1)
    assert np.max(np.abs(got - ref)) < 1.5 / 255  # 65 stops interpolated linearly
    assert np.allclose(got[0], ref[0], atol=1 / 255) and np.allclose(got[-1], ref[-1], atol=1 / 255)


def test_okabe_ito_palette_and_category_groups(tmp_path):
    out = run_js(
        tmp_path,
        """const codes = new Uint16Array([0, 1, 2, 9, 65535]);
        const axis = {name: "c", kind: "category", lo: 0, hi: 1, log: false, tz: null, missing: 1,
                      inf: [0, 0], labels: "abcdefghij".split(""), counts: Array(10).fill(1), codes};
        const c = colouring(axis, [0, 0, 1]);
        console.log(JSON.stringify({pal: OKABE_ITO, group: Array.from(c.group), n: c.palette.length}));""",
    )
    # reference: Okabe & Ito (2002) Color Universal Design palette, black left out
    assert out["pal"] == ["#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"]
    # the first seven categories get their own colour, later ones share one, missing gets its own grey
    assert out["group"] == [0, 1, 2, 7, 8] and out["n"] == 9
