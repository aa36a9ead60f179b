"""Hatch build hook: bundle the TypeScript front end into src/axeswidget/static/ with npm.

`pip install .` (and editable installs) run this, so an installed package always carries a built
widget.js. Set AXESWIDGET_SKIP_JS=1 to skip it when the bundle is already built (CI builds once).
"""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

from hatchling.builders.hooks.plugin.interface import BuildHookInterface


class NpmBuildHook(BuildHookInterface):
    PLUGIN_NAME = "custom"

    def initialize(self, version, build_data):
        root = Path(self.root)
        bundle = root / "src" / "axeswidget" / "static" / "widget.js"
        if os.environ.get("AXESWIDGET_SKIP_JS") == "1" and bundle.exists():
            return
        if not (root / "js" / "widget.ts").exists():  # building from an sdist that already holds the bundle
            if bundle.exists():
                return
            raise RuntimeError("axeswidget: js/widget.ts is missing and no built bundle exists")
        npm = shutil.which("npm")
        if npm is None:
            if bundle.exists():
                return
            raise RuntimeError("axeswidget: npm is needed to build the front end (install Node.js 18+)")
        if not (root / "node_modules" / ".bin" / "esbuild").exists():
            subprocess.run([npm, "install", "--no-audit", "--no-fund"], cwd=root, check=True)
        subprocess.run([npm, "run", "build"], cwd=root, check=True)
        if not bundle.exists():
            raise RuntimeError(f"axeswidget: the npm build did not produce {bundle}")
