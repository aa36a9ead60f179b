"""A Jupyter Notebook 7 server (``jupyter notebook``) on 127.0.0.1, and a notebook page driven by Playwright.

Notebook 7 is built from JupyterLab's components, so cells, editors, prompts and outputs carry the same
``jp-`` classes; what differs is the URL (``/notebooks/NAME.ipynb``), the single-document shell
(``#main-panel``, no ``.jp-NotebookPanel`` tab area and no status bar) and where the kernel's state is
shown: the toolbar's ``.jp-Notebook-ExecutionIndicator`` (``data-status``), which says "idle" even
before a kernel is attached, so readiness is read from ``window.jupyterapp`` instead.
"""

from __future__ import annotations

import json
import os
import secrets
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from tests.browser.jupyter import DIRECT, JupyterServer, _free_port


class NotebookServer(JupyterServer):
    """`jupyter notebook` with private config/settings/runtime folders, a random token and port.

    Shares ``write_notebook``, ``url`` and ``close`` with the JupyterLab server; only the start differs.
    """

    def __init__(self):
        self.root = Path(tempfile.mkdtemp(prefix="axw-nb7-"))
        self.private = Path(tempfile.mkdtemp(prefix="axw-nb7cfg-"))
        self.port = _free_port()
        self.token = secrets.token_hex(16)
        env = dict(os.environ)
        for var, sub in [
            ("JUPYTER_CONFIG_DIR", "config"),
            ("JUPYTERLAB_SETTINGS_DIR", "settings"),
            ("JUPYTERLAB_WORKSPACES_DIR", "workspaces"),
            ("JUPYTER_RUNTIME_DIR", "runtime"),
        ]:
            (self.private / sub).mkdir()
            env[var] = str(self.private / sub)
        notif = self.private / "settings" / "@jupyterlab" / "apputils-extension"
        notif.mkdir(parents=True)
        (notif / "notification.jupyterlab-settings").write_text(
            json.dumps({"fetchNews": "false", "checkForUpdates": False})
        )
        env["NO_PROXY"] = "127.0.0.1,localhost"
        cmd = [
            str(Path(sys.executable).parent / "jupyter"),
            "notebook",
            "--no-browser",
            "--ip=127.0.0.1",
            f"--port={self.port}",
            "--allow-root",
            f"--ServerApp.token={self.token}",
            f"--ServerApp.root_dir={self.root}",
            "--JupyterNotebookApp.expose_app_in_browser=True",
        ]
        self.log = open(self.private / "server.log", "w")  # noqa: SIM115
        self.proc = subprocess.Popen(
            cmd, env=env, stdout=self.log, stderr=subprocess.STDOUT, start_new_session=True
        )
        self.base = f"http://127.0.0.1:{self.port}"
        deadline = time.time() + 60
        while time.time() < deadline:
            try:
                DIRECT.open(f"{self.base}/api/status?token={self.token}", timeout=2).read()
                return
            except Exception:
                if self.proc.poll() is not None:
                    break
                time.sleep(0.3)
        raise RuntimeError("Notebook 7 did not start:\n" + (self.private / "server.log").read_text()[-3000:])


class Notebook7Page:
    """A notebook open in Notebook 7, with helpers to run cells and read outputs."""

    CELLS = "#main-panel .jp-Notebook .jp-Cell"

    def __init__(self, page, server: NotebookServer, name: str):
        self.page = page
        page.goto(server.url(f"notebooks/{name}"))
        page.wait_for_selector(self.CELLS, timeout=60_000)
        # ready when the kernel is connected and idle: the toolbar's indicator claims idle too early
        # (before any kernel is attached), so ask the application (exposed by expose_app_in_browser)
        page.wait_for_function(
            """() => { const k = window.jupyterapp?.shell?.currentWidget?.sessionContext?.session?.kernel;
                const shown = document.querySelector('.jp-Notebook-ExecutionIndicator')?.dataset.status;
                return k?.status === 'idle' && k?.connectionStatus === 'connected' && shown === 'idle'; }""",
            timeout=60_000,
        )

    def cell(self, i: int):
        return self.page.locator(self.CELLS).nth(i)

    def run(self, i: int, timeout: float = 60_000):
        cell = self.cell(i)
        cell.locator(".jp-InputArea-editor").click()
        self.page.keyboard.press("Shift+Enter")
        prompt = cell.locator(".jp-InputPrompt")
        self.page.wait_for_function(
            "(el) => /\\[\\d+\\]/.test(el.textContent)", arg=prompt.element_handle(), timeout=timeout
        )

    def output_text(self, i: int) -> str:
        return self.cell(i).locator(".jp-OutputArea").inner_text()
