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
