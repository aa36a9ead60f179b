"""Level-2 browser harness: a real JupyterLab (or Notebook 7) server on 127.0.0.1 driven by Playwright.

Used to prove the round trip page -> kernel -> page with the real anywidget/ipywidgets machinery.
"""

from __future__ import annotations

import json
import os
import secrets
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

DIRECT = urllib.request.build_opener(urllib.request.ProxyHandler({}))


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class JupyterServer:
    """`jupyter lab` with private config/settings/runtime folders, a random token and port."""

    APP = "lab"
    EXPOSE = "--LabApp.expose_app_in_browser=True"
    TITLE = "JupyterLab"
    #: larger page -> server websocket messages than the 10 MiB default (the Notebook 7 test keeps it)
    EXTRA = ['--ServerApp.tornado_settings={"websocket_max_message_size": 209715200}']

    def __init__(self):
        self.root = Path(tempfile.mkdtemp(prefix="axw-lab-"))
        self.private = Path(tempfile.mkdtemp(prefix="axw-labcfg-"))
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
        jupyter = Path(sys.executable).parent / "jupyter"
        cmd = [
            str(jupyter),
            self.APP,
            "--no-browser",
            "--ip=127.0.0.1",
            f"--port={self.port}",
            "--allow-root",
            f"--ServerApp.token={self.token}",
            f"--ServerApp.root_dir={self.root}",
            self.EXPOSE,
            *self.EXTRA,
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
        raise RuntimeError(
            f"{self.TITLE} did not start:\n" + (self.private / "server.log").read_text()[-3000:]
        )

    def write_notebook(self, name: str, cells: list[str]) -> str:
        nb = {
            "cells": [
                {"cell_type": "code", "execution_count": None, "metadata": {}, "outputs": [], "source": src}
                for src in cells
            ],
            "metadata": {
                "kernelspec": {"display_name": "Python 3", "language": "python", "name": "python3"},
                "language_info": {"name": "python"},
            },
            "nbformat": 4,
            "nbformat_minor": 5,
        }
        (self.root / name).write_text(json.dumps(nb))
        return name

    def url(self, path: str) -> str:
        return f"{self.base}/{path}{'&' if '?' in path else '?'}token={self.token}"

    def close(self):
        try:
            req = urllib.request.Request(
                f"{self.base}/api/shutdown", method="POST", headers={"Authorization": f"token {self.token}"}
            )
            DIRECT.open(req, timeout=5)
            self.proc.wait(timeout=10)
        except Exception:
            pass
        if self.proc.poll() is None:
            os.killpg(self.proc.pid, signal.SIGTERM)
            try:
                self.proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                os.killpg(self.proc.pid, signal.SIGKILL)
        self.log.close()
        shutil.rmtree(self.root, ignore_errors=True)
        shutil.rmtree(self.private, ignore_errors=True)


def drag_axis(page, view: int, axis: str, v0: float, v1: float, steps: int = 10) -> None:
    """Drag with the mouse along an (unflipped, vertical) axis of the view-th widget, from v0 to v1."""
    lay = json.loads(page.locator(".axw-root").nth(view).get_attribute("data-layout"))
    ax = next(a for a in lay["axes"] if a["name"] == axis)
    box = page.locator("canvas.axw-overlay").nth(view).bounding_box()

    def y(v):
        f = (v - ax["lo"]) / (ax["hi"] - ax["lo"])
        return box["y"] + lay["bottom"] - f * (lay["bottom"] - lay["top"])

    x = box["x"] + ax["x"]
    page.mouse.move(x, y(v0))
    page.mouse.down()
    page.mouse.move(x, y(v1), steps=steps)
    page.mouse.up()


class NotebookPage:
    """A notebook open in a Jupyter front end: run cells, read outputs (cells found by ``CELLS``)."""

    CELLS = ".jp-NotebookPanel .jp-Notebook .jp-Cell"

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


class LabNotebook(NotebookPage):
    """A notebook open in JupyterLab."""

    def __init__(self, page, server: JupyterServer, name: str):
        self.page = page
        page.goto(server.url(f"lab/tree/{name}?reset"))
        page.wait_for_selector(".jp-NotebookPanel .jp-Cell", timeout=60_000)
        page.wait_for_function(
            "() => [...document.querySelectorAll('.jp-StatusBar-TextItem')]"
            ".some(e => /\\| Idle/.test(e.textContent))",
            timeout=60_000,
        )
