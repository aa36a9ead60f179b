"""The package's public face: version from the metadata, the stated API, and no import circle."""

from __future__ import annotations

import ast
import json
import re
from pathlib import Path

import pytest

import axeswidget as aw

ROOT = Path(__file__).resolve().parents[1]


def test_version_comes_from_the_one_literal_in_pyproject():
    tomllib = pytest.importorskip("tomllib", reason="tomllib comes with Python 3.11+")
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]  # reference: pyproject.toml
    assert aw.__version__ == project["version"]
    literal = f'"{project["version"]}"'
    hits = [p.name for p in (ROOT / "src" / "axeswidget").glob("*.py") if literal in p.read_text()]
    assert hits == []


def test_every_public_name_exists():
    assert "AxesWidget" in aw.__all__
    for name in aw.__all__:
        assert getattr(aw, name) is not None, name


def test_export_imports_only_the_wire_contract_from_the_package():
    # export.py is handed the widget (and the version) by widget.py: it must not import widget.py back;
    # the wire contract (a leaf module with no imports of its own from the package) is allowed
    tree = ast.parse((ROOT / "src" / "axeswidget" / "export.py").read_text())
    relative = [node.module for node in ast.walk(tree) if isinstance(node, ast.ImportFrom) and node.level]
    absolute = [
        alias.name
        for node in ast.walk(tree)
        if isinstance(node, ast.Import)
        for alias in node.names
        if alias.name.startswith("axeswidget")
    ]
    assert set(relative) <= {"wire"} and absolute == []


def test_standalone_page_names_the_package_version():
    w = aw.AxesWidget(aw.demo.pump_fleet(50, seed=1))
    page = w.to_html()
    state = re.search(r'<script type="application/json" id="axw-state">(.*?)</script>', page, re.S).group(1)
    assert json.loads(state)["caption"]["version"] == aw.__version__


def _own_synced_traits() -> list[str]:
    """The synced traits AxesWidget itself defines (anywidget's own are not the contract), in order."""
    own = aw.AxesWidget.class_own_traits(sync=True)
    return [name for name in vars(aw.AxesWidget) if name in own]


def test_options_are_derived_from_trait_metadata_and_match_the_wire_contract():
    from axeswidget import widget, wire

    options = aw.AxesWidget.class_traits(option=True)
    plumbing = aw.AxesWidget.class_traits(plumbing=True)
    assert widget._OPTIONS == wire.OPTIONS  # the contract file read by Python and the bundle
    assert set(options) == set(wire.OPTIONS) and not set(options) & set(plumbing)
    assert all(trait.metadata.get("sync") for trait in options.values())
    assert {"edit_seq", "dragging", "answered_seq", "mask_bits", "views"} <= set(plumbing)
    with pytest.raises(TypeError, match="unknown option 'edit_seq'"):
        aw.AxesWidget(aw.demo.pump_fleet(20, seed=1), edit_seq=3)  # plumbing is not a keyword option


def test_every_synced_trait_is_documented_in_code_and_guide_with_the_same_direction():
    # the attribute docstring ("#: type, direction, default: ...") in widget.py
    source = (ROOT / "src" / "axeswidget" / "widget.py").read_text().splitlines()
    in_code = {}
    for i, line in enumerate(source):
        hit = re.match(r"    (\w+) = t\.\w+\(", line)
        if hit:
            doc = source[i - 1].strip()
            assert doc.startswith("#: "), f"trait {hit.group(1)} has no attribute docstring"
            direction = re.search(r"\b(both|kernel -> page|page -> kernel)\b", doc)
            assert direction, f"trait {hit.group(1)}: no direction in {doc!r}"
            in_code[hit.group(1)] = direction.group(1).replace("->", "→")
    assert list(in_code) == _own_synced_traits()
    # the trait contract table in DEVELOPERS.md
    guide = (ROOT / "DEVELOPERS.md").read_text()
    table = guide.split("## The trait contract", 1)[1].split("\n## ", 1)[0]
    in_guide = {}
    for row in re.findall(r"^\| (`[^|]+) \| ([^|]+) \| ([^|]+) \|", table, re.M):
        for name in re.findall(r"`(\w+)`", row[0]):
            in_guide[name] = row[1].strip()
    assert in_guide == in_code
